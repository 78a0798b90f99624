// The standard library's parts run from their definitions (parts/library/standard.ts, through
// model/libraryParts.ts and sim/customParts.ts; plan option `fromDefinitions`) must do exactly
// what the built-in operations do, which tests/outside/sim-programs.test.ts holds equal to
// qemu-riscv32 and the RV32I reference on every test program. So every RV32I test program
// (tests/programs, built with Debian's riscv64-unknown-elf-gcc) runs on the demo table both
// ways with the lock-step reference on: the same ending, stdout, stderr, instructions retired
// and steps. On every program but the long benchmark the two machines also run side by side
// one step at a time with the same state after every step: register file, part values, flags,
// bus values and which buses hold defined values, step counter and the memory writes. A
// definition that computes anything differently (sltu compared signed, a wrong immediate bit,
// a byte lane swapped) fails here on selfcheck, which exercises every RV32I instruction.
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { BusSimulator } from '../../server/src/core/sim/simulator';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { SimPlan } from '../../server/src/core/sim/plan';
import { loadProgram, type LoadedProgram } from '../../server/src/core/sim/program';
import { haveTools } from '../support/tools';
import { PROGRAMS, buildPrograms, type BuiltProgram } from '../programs/build.mjs';
import { DEMO_TEXT, runSideBySide } from '../sim/support';

const toolsPresent = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf');

/** Over ten million instructions: compared by its results only (a step-by-step run would take minutes). */
const LONG = 'bench';

function plans(): { builtIn: SimPlan; defined: SimPlan } {
  const machine = analyse(DEMO_TEXT).machine;
  const builtIn = SimPlan.build(machine);
  const defined = SimPlan.build(machine, { fromDefinitions: true });
  if (!builtIn.ok || !defined.ok) throw new Error('the demo does not simulate');
  return { builtIn: builtIn.plan, defined: defined.plan };
}

function load(program: BuiltProgram): LoadedProgram {
  const loaded = loadProgram(new Uint8Array(readFileSync(program.elfPath)));
  if (!loaded.ok) throw new Error(loaded.error);
  return loaded.program;
}

function runWhole(plan: SimPlan, program: BuiltProgram) {
  const run = new ProgramRun(plan, load(program), { reference: program.name !== LONG });
  let ending = run.advance(50_000_000);
  while (!ending) ending = run.advance(50_000_000);
  const sim = run.sim;
  return { ending: ending.kind === 'exit' ? ending : ending.kind, stdout: sim.environment.stdoutText(), stderr: sim.environment.stderrText(), retired: sim.instructionsRetired, steps: sim.steps };
}

describe.skipIf(!toolsPresent)('the demo with its library parts run from their definitions, against the built-in operations', () => {
  let programs: BuiltProgram[] = [];
  let builtIn: SimPlan;
  let defined: SimPlan;

  beforeAll(() => {
    programs = buildPrograms();
    ({ builtIn, defined } = plans());
  }, 300_000);

  it('runs every library part of the demo from its definition (no built-in operation left)', () => {
    expect(defined.custom.builtIn).toEqual([]);
    expect(defined.custom.runtimes.map((r) => r.part.name)).toEqual([...defined.machine.parts.keys()]);
    expect(builtIn.custom.runtimes).toEqual([]);
    // Every micro-op's drivers and edge actions are the definitions' ports (D_CUSTOM 10, E_CUSTOM 8).
    const code = defined.microOps.code.data;
    for (const info of defined.microOps.info) {
      let p = info.base + 5;
      for (let k = 0; k < info.drivers.length; k++, p += 5) expect(code[p], info.drivers[k].strobe).toBe(10);
      p++;
      for (let k = 0; k < info.edges.length; k++, p += 5) expect(code[p], info.edges[k].strobe).toBe(8);
    }
  });

  it.each(PROGRAMS.map((p) => p.name))('%s: the same ending, output, instructions retired and steps', (name) => {
    const program = programs.find((p) => p.name === name)!;
    const a = runWhole(builtIn, program);
    const b = runWhole(defined, program);
    expect(b).toEqual(a);
    expect(typeof a.ending === 'string' ? a.ending : 'exit').toMatch(/exit|ebreak/);
  }, 600_000);

  it.each(PROGRAMS.map((p) => p.name).filter((n) => n !== LONG))('%s: the same state after every step', (name) => {
    const program = load(programs.find((p) => p.name === name)!);
    const one = new BusSimulator(builtIn, program.memory.clone(), program.entry, { compiled: false });
    const two = new BusSimulator(defined, program.memory.clone(), program.entry);
    const steps = runSideBySide(one, two, 100_000_000);
    expect(two.stopReason, 'the program ran to its end').not.toBeNull();
    expect(steps).toBeGreaterThan(20);
  }, 600_000);
});
