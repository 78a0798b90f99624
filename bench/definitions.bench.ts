// Benchmark of the demo with every part run from its kind's definition (`node scripts/bench.mjs
// definitions`), the simulator's only path since the built-in part operations were removed:
// retired instructions per second on tests/programs/bench.c (over ten million instructions,
// built with Debian's riscv64-unknown-elf-gcc) through the demo table's microcode without
// lock-step, in one process: the compiled steps (ports inlined into the generated code, as
// `phasewright run` runs), the interpreter alone, and the RV32I reference interpreter as the
// yardstick. Target (issue 14): the demo described with library parts runs at >= 0.8 x the
// instructions per second of the built-in operations it replaced. To measure those in the same
// process, the simulator of the last commit that had them (BASELINE below) is taken from git
// (`git archive`), bundled with esbuild and run on the same program. Every engine must print the
// same output; it reports, it does not fail on a missed target.
import { execFileSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyse } from '../server/src/core/analysis';
import { createReferenceMachine } from '../server/src/core/isa/interp';
import { ProgramRun } from '../server/src/core/sim/lockstep';
import { SimPlan } from '../server/src/core/sim/plan';
import { loadProgram } from '../server/src/core/sim/program';
import { builtProgram, millions, withProgress } from './stats';

const root = process.cwd();

/** The last commit whose simulator ran the standard library's parts as built-in operations. */
const BASELINE = '18d0d51';

interface Engine {
  analyse: typeof analyse;
  SimPlan: typeof SimPlan;
  ProgramRun: typeof ProgramRun;
  loadProgram: typeof loadProgram;
}

/** The simulator of commit BASELINE, from git, bundled (null with the reason when git or the commit is not there). */
function baselineEngine(): Engine | string {
  // Outside the repository, so neither tsc nor vitest nor the duplicate finder meets its files.
  const dir = join(tmpdir(), 'phasewright-bench-baseline');
  try {
    rmSync(dir, { recursive: true, force: true });
    mkdirSync(dir, { recursive: true });
    const tar = execFileSync('git', ['archive', '--format=tar', BASELINE, 'server/src'], { cwd: root, maxBuffer: 1 << 28 });
    execFileSync('tar', ['-x', '-C', dir], { input: tar });
  } catch (err) {
    return `cannot take the simulator of commit ${BASELINE} from git: ${(err as Error).message.split('\n')[0]}`;
  }
  const entry = join(dir, 'entry.ts');
  writeFileSync(entry, ["export { analyse } from './server/src/core/analysis';", "export { SimPlan } from './server/src/core/sim/plan';", "export { ProgramRun } from './server/src/core/sim/lockstep';", "export { loadProgram } from './server/src/core/sim/program';"].join('\n'));
  const outfile = join(dir, 'engine.cjs');
  execFileSync(process.execPath, ['-e', `require('esbuild').buildSync({ entryPoints: [${JSON.stringify(entry)}], outfile: ${JSON.stringify(outfile)}, bundle: true, platform: 'node', target: 'node20', format: 'cjs', logLevel: 'warning' })`], { cwd: root, stdio: 'inherit' });
  return require(outfile) as Engine;
}

interface Measured {
  name: string;
  instructions: number;
  /** Wall time, and CPU time of this process (less disturbed by other load on a shared machine). */
  ms: number;
  cpuMs: number;
  output: string;
}

function cpuNow(): number {
  const usage = process.cpuUsage();
  return (usage.user + usage.system) / 1000;
}

function main(): void {
  const elfPath = builtProgram('definitions', 'bench');
  const elf = new Uint8Array(readFileSync(elfPath));
  const text = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
  const measure = (engine: Engine, name: string, compiled: boolean): Measured => {
    const built = engine.SimPlan.build(engine.analyse(text).machine);
    if (!built.ok) throw new Error(built.errors.join('\n'));
    const loaded = engine.loadProgram(elf);
    if (!loaded.ok) throw new Error(loaded.error);
    const started = performance.now();
    const cpuStarted = cpuNow();
    const run = new engine.ProgramRun(built.plan, loaded.program, { reference: false, compiled });
    const ending = withProgress(name, (update) => {
      let end = run.advance(5_000_000);
      for (; !end; end = run.advance(5_000_000)) update(run.sim.instructionsRetired);
      return end;
    });
    const ms = performance.now() - started;
    if (ending.kind !== 'exit') throw new Error(`${name}: the run ended with ${ending.kind}`);
    return { name, instructions: run.sim.instructionsRetired, ms, cpuMs: cpuNow() - cpuStarted, output: run.sim.environment.stdoutText() };
  };
  const reference = (): Measured => {
    const created = createReferenceMachine(elf);
    if (!created.ok) throw new Error(created.error);
    const started = performance.now();
    const cpuStarted = cpuNow();
    const { instructionsExecuted, stop } = created.machine.run(1e9);
    if (stop?.kind !== 'exit') throw new Error('the reference did not exit');
    return { name: 'RV32I reference interpreter', instructions: instructionsExecuted, ms: performance.now() - started, cpuMs: cpuNow() - cpuStarted, output: created.machine.environment.stdoutText() };
  };
  const today: Engine = { analyse, SimPlan, ProgramRun, loadProgram };
  const baseline = baselineEngine();
  const ref = reference();
  const results = [ref];
  // Alternating the two engines, three times each, evens out a machine whose load changes while it runs.
  const rounds = typeof baseline === 'string' ? 1 : 3;
  for (let round = 0; round < rounds; round++) {
    if (typeof baseline !== 'string') results.push(measure(baseline, `built-in operations (commit ${BASELINE}), compiled steps`, true));
    results.push(measure(today, 'from definitions, compiled steps (the default)', true));
  }
  results.push(measure(today, 'from definitions, interpreter only', false));
  const rate = (m: Measured) => (m.instructions / m.ms) * 1000;
  const cpuRate = (m: Measured) => (m.instructions / m.cpuMs) * 1000;
  const width = Math.max(...results.map((r) => r.name.length));
  console.log(`program: ${elfPath} (${ref.instructions.toLocaleString('en')} instructions); ${cpus().length} CPUs, load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`);
  console.log(`${''.padEnd(width)}  ${'wall'.padStart(8)}  ${'instructions/s'.padStart(14)}  ${'x reference'.padStart(11)}  ${'by CPU time'.padStart(11)}  ${'x reference'.padStart(11)}`);
  for (const r of results) {
    const same = r.output === ref.output && r.instructions === ref.instructions ? '' : '  RESULTS DIFFER';
    console.log(`${r.name.padEnd(width)}  ${(r.ms / 1000).toFixed(3).padStart(6)} s  ${millions(rate(r)).padStart(14)}  ${(rate(r) / rate(ref)).toFixed(3).padStart(11)}  ${millions(cpuRate(r)).padStart(11)}  ${(cpuRate(r) / cpuRate(ref)).toFixed(3).padStart(11)}${same}`);
  }
  if (typeof baseline === 'string') console.log(`no ratio against the built-in operations: ${baseline}`);
  else {
    const best = (prefix: string, of: (m: Measured) => number) => Math.max(...results.filter((r) => r.name.startsWith(prefix)).map(of));
    const ratio = best('from definitions, compiled', rate) / best('built-in', rate);
    const cpuRatio = best('from definitions, compiled', cpuRate) / best('built-in', cpuRate);
    console.log(`target >= 0.8 x the built-in operations' instructions per second (best of ${rounds} each): ${ratio >= 0.8 ? 'met' : 'MISSED'} (${ratio.toFixed(3)} by wall time, ${cpuRatio.toFixed(3)} by CPU time)`);
  }
  if (results.some((r) => r.output !== ref.output || r.instructions !== ref.instructions)) process.exit(1);
}

main();
