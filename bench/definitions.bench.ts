// Benchmark of the standard library's parts run from their definitions (`node scripts/bench.mjs
// definitions`): retired instructions per second on tests/programs/bench.c (over ten million
// instructions, built with Debian's riscv64-unknown-elf-gcc) through the demo table's
// microcode without lock-step, in one process: the built-in operations (compiled steps, as
// `phasewright run` runs today), the built-in operations on the interpreter alone, and every
// library part run from its kind's definition (plan option `fromDefinitions`, which runs on the
// interpreter). Target (issue 14): the demo described with library parts runs at >= 0.8 x
// today's instructions per second. Every engine must print the same output and retire the same
// instructions in the same steps. It reports; it does not fail on a missed target.
import { readFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { analyse } from '../server/src/core/analysis';
import { ProgramRun } from '../server/src/core/sim/lockstep';
import { SimPlan, type PlanOptions } from '../server/src/core/sim/plan';
import { loadProgram } from '../server/src/core/sim/program';
import { builtProgram, millions, withProgress } from './stats';

const root = process.cwd();

interface Measured {
  name: string;
  instructions: number;
  steps: number;
  ms: number;
  output: string;
}


function main(): void {
  const elfPath = builtProgram('definitions', 'bench');
  const elf = new Uint8Array(readFileSync(elfPath));
  const machine = analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8')).machine;
  const planOf = (options: PlanOptions) => {
    const built = SimPlan.build(machine, options);
    if (!built.ok) throw new Error(built.errors.join('\n'));
    return built.plan;
  };
  const measure = (name: string, options: PlanOptions, compiled: boolean): Measured => {
    const plan = planOf(options);
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
    return { name, instructions: run.sim.instructionsRetired, steps: run.sim.steps, ms, output: run.sim.environment.stdoutText() };
  };
  const today = measure('built-in operations (compiled steps, the default)', {}, true);
  const interpreted = measure('built-in operations, interpreter only', {}, false);
  const defined = measure('library parts from their definitions', { fromDefinitions: true }, true);
  const results = [today, interpreted, defined];
  const rate = (m: Measured) => (m.instructions / m.ms) * 1000;
  const width = Math.max(...results.map((r) => r.name.length));
  console.log(`program: ${elfPath} (${today.instructions.toLocaleString('en')} instructions, ${today.steps.toLocaleString('en')} steps); ${cpus().length} CPUs, load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`);
  console.log(`${''.padEnd(width)}  ${'wall'.padStart(8)}  ${'instructions/s'.padStart(14)}  ${'x today'.padStart(7)}`);
  for (const r of results) {
    const same = r.output === today.output && r.instructions === today.instructions && r.steps === today.steps ? '' : '  RESULTS DIFFER';
    console.log(`${r.name.padEnd(width)}  ${(r.ms / 1000).toFixed(3).padStart(6)} s  ${millions(rate(r)).padStart(14)}  ${(rate(r) / rate(today)).toFixed(3).padStart(7)}${same}`);
  }
  const ratio = rate(defined) / rate(today);
  console.log(`from definitions / built-in interpreter: ${(rate(defined) / rate(interpreted)).toFixed(3)}`);
  console.log(`target >= 0.8 x today's instructions per second: ${ratio >= 0.8 ? 'met' : 'MISSED'} (${ratio.toFixed(3)})`);
  if (results.some((r) => r.output !== today.output || r.instructions !== today.instructions || r.steps !== today.steps)) process.exit(1);
}

main();
