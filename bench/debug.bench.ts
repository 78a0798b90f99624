// Benchmark of the debugger's core (`node scripts/bench.mjs debug`), on tests/programs/crc_sieve.c
// (about 600 000 instructions) through the demo table, each with and without lock-step:
//   - `phasewright run`'s loop (ProgramRun.advance) to the end, beside a debug session's
//     Continue to a breakpoint on a table line no instruction of the program reaches
//     (class MISC-MEM: fence; it never runs), so it runs to the end too, checking every
//     instruction's steps for the breakpoint. Target: at least 0.5 of run's rate.
//   - the answer time of one microcycle step with its view (step, then every scope's values),
//     over 200 steps: target at most 50 ms each.
// It reports; it does not fail on a missed target.
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { DebugMachine } from '../server/src/core/debug/machine';
import { StepLineIndex } from '../server/src/core/debug/stepLines';
import { MachineViews } from '../server/src/core/debug/views';
import { ProgramRun } from '../server/src/core/sim/lockstep';
import { prepareTable } from '../server/src/core/sim/session';

const root = process.cwd();
const text = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
// The build script runs as its own process: the bundled benchmark is CommonJS.
const elfPath = execFileSync(process.execPath, [join(root, 'tests/programs/build.mjs'), 'crc_sieve'], { encoding: 'utf8' }).trim().split('\n').pop()!;
const prepared = prepareTable({ text, sourceName: 'halyard-32.pwt', program: readFileSync(elfPath) });
if (!prepared.ok) throw new Error(prepared.reason);
const { plan, program, analysis } = prepared;
const fenceLine = text.split('\n').findIndex((l) => l.startsWith('class MISC-MEM'));

for (const reference of [false, true]) {
  const run = new ProgramRun(plan, { ...program, memory: program.memory.clone() }, { reference });
  let t = performance.now();
  while (!run.advance(4_000_000));
  const runMs = performance.now() - t;
  const instructions = run.sim.instructionsRetired;
  const dm = new DebugMachine(plan, program, { reference }, new StepLineIndex(plan, analysis.lines));
  new MachineViews(dm);
  dm.setStepBreakpoints([{ line: fenceLine }]);
  t = performance.now();
  dm.beginResume('continue');
  let event = dm.resumeChunk(1_000_000);
  while (event.reason === 'budget') event = dm.resumeChunk(1_000_000);
  const debugMs = performance.now() - t;
  if (event.reason !== 'exited' || dm.sim.instructionsRetired !== instructions) throw new Error(`the debug run ended differently: ${JSON.stringify(event)}`);
  const runRate = instructions / runMs / 1000;
  const debugRate = instructions / debugMs / 1000;
  console.log(`lock-step ${reference ? 'on ' : 'off'}: run ${runRate.toFixed(2)} M instr/s, continue to a breakpoint ${debugRate.toFixed(2)} M instr/s, ratio ${(debugRate / runRate).toFixed(2)} (target >= 0.5)`);
  const stepper = new DebugMachine(plan, program, { reference }, new StepLineIndex(plan, analysis.lines));
  const views = new MachineViews(stepper);
  let worst = 0;
  let total = 0;
  for (let i = 0; i < 200; i++) {
    const s = performance.now();
    stepper.stepMicrocycle();
    views.scopes(stepper.sim.regs[2] >>> 0);
    const ms = performance.now() - s;
    worst = Math.max(worst, ms);
    total += ms;
  }
  console.log(`  microcycle step with its views: mean ${(total / 200).toFixed(3)} ms, worst ${worst.toFixed(2)} ms (target <= 50 ms)`);
}
