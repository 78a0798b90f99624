// Benchmark of the demo with every part run from its kind's definition (`node scripts/bench.mjs
// definitions`), the simulator's only path since the built-in part operations were removed:
// retired instructions per second on tests/programs/bench.c (over ten million instructions,
// built with Debian's riscv64-unknown-elf-gcc) through the demo table's microcode without
// lock-step, in one process: the compiled steps (ports inlined into the generated code, as
// `phasewright run` runs), the interpreter alone, and the RV32I reference interpreter as the
// yardstick both are divided by. Target (issue 14): the demo described with library parts runs
// at >= 0.8 x the instructions per second of the built-in operations it replaced. Those can no
// longer run beside it, so their ratio to the same reference, measured in one process before
// they were removed, is the figure compared with (BUILT_IN_X_REFERENCE below). Every engine must
// print the same output; it reports, it does not fail on a missed target.
import { readFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { analyse } from '../server/src/core/analysis';
import { createReferenceMachine } from '../server/src/core/isa/interp';
import { ProgramRun } from '../server/src/core/sim/lockstep';
import { SimPlan } from '../server/src/core/sim/plan';
import { loadProgram } from '../server/src/core/sim/program';
import { builtProgram, millions, withProgress } from './stats';

const root = process.cwd();

/**
 * The built-in operations' compiled steps over the reference interpreter on this program, from
 * `node scripts/bench.mjs sim` at commit 18d0d51 (the last with them), 2026-12-04, 2-core VM.
 */
const BUILT_IN_X_REFERENCE = Number(process.env.BUILT_IN_X_REFERENCE ?? 'NaN');

interface Measured {
  name: string;
  instructions: number;
  ms: number;
  output: string;
}

function main(): void {
  const elfPath = builtProgram('definitions', 'bench');
  const elf = new Uint8Array(readFileSync(elfPath));
  const built = SimPlan.build(analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8')).machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  const plan = built.plan;
  const measure = (name: string, compiled: boolean): Measured => {
    const loaded = loadProgram(elf);
    if (!loaded.ok) throw new Error(loaded.error);
    const started = performance.now();
    const run = new ProgramRun(plan, loaded.program, { reference: false, compiled });
    const ending = withProgress(name, (update) => {
      let end = run.advance(5_000_000);
      for (; !end; end = run.advance(5_000_000)) update(run.sim.instructionsRetired);
      return end;
    });
    const ms = performance.now() - started;
    if (ending.kind !== 'exit') throw new Error(`${name}: the run ended with ${ending.kind}`);
    return { name, instructions: run.sim.instructionsRetired, ms, output: run.sim.environment.stdoutText() };
  };
  const reference = (): Measured => {
    const created = createReferenceMachine(elf);
    if (!created.ok) throw new Error(created.error);
    const started = performance.now();
    const { instructionsExecuted, stop } = created.machine.run(1e9);
    if (stop?.kind !== 'exit') throw new Error('the reference did not exit');
    return { name: 'RV32I reference interpreter', instructions: instructionsExecuted, ms: performance.now() - started, output: created.machine.environment.stdoutText() };
  };
  const ref = reference();
  const compiled = measure('from definitions, compiled steps (the default)', true);
  const interpreted = measure('from definitions, interpreter only', false);
  const results = [ref, compiled, interpreted];
  const rate = (m: Measured) => (m.instructions / m.ms) * 1000;
  const width = Math.max(...results.map((r) => r.name.length));
  console.log(`program: ${elfPath} (${ref.instructions.toLocaleString('en')} instructions); ${cpus().length} CPUs, load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`);
  console.log(`${''.padEnd(width)}  ${'wall'.padStart(8)}  ${'instructions/s'.padStart(14)}  ${'x reference'.padStart(11)}`);
  for (const r of results) {
    const same = r.output === ref.output && r.instructions === ref.instructions ? '' : '  RESULTS DIFFER';
    console.log(`${r.name.padEnd(width)}  ${(r.ms / 1000).toFixed(3).padStart(6)} s  ${millions(rate(r)).padStart(14)}  ${(rate(r) / rate(ref)).toFixed(3).padStart(11)}${same}`);
  }
  const ratio = rate(compiled) / rate(ref) / BUILT_IN_X_REFERENCE;
  console.log(`built-in operations, compiled (recorded): ${BUILT_IN_X_REFERENCE.toFixed(3)} x reference`);
  console.log(`target >= 0.8 x the built-in operations' instructions per second: ${ratio >= 0.8 ? 'met' : 'MISSED'} (${ratio.toFixed(3)})`);
  if (results.some((r) => r.output !== ref.output || r.instructions !== ref.instructions)) process.exit(1);
}

main();
