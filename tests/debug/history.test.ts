// The debugger's history (core/debug/history.ts through core/debug/machine.ts) reaches at least
// 10 000 steps back on a long program (issue 17; the history keeps 20 000), and going back gives
// exactly the state a fresh run from reset has at that step: registers, pc, the step counter and
// memory around the stack (crc_sieve writes it) — the fresh run being the table's machine in
// lock-step with the RV32I reference interpreter. Beyond the history the machine refuses and
// says how far it goes.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { DebugMachine } from '../../server/src/core/debug/machine';
import { StepLineIndex } from '../../server/src/core/debug/stepLines';
import { MachineViews } from '../../server/src/core/debug/views';
import { prepareTable } from '../../server/src/core/sim/session';
import { buildPrograms } from '../programs/build.mjs';
import { haveTools } from '../support/tools';

const DEMO = join(__dirname, '../../examples/halyard-32.pwt');

describe.skipIf(!haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf'))('the debugger history on crc_sieve', () => {
  let prepared: Extract<ReturnType<typeof prepareTable>, { ok: true }>;
  let classLines: number[] = [];
  beforeAll(() => {
    const [crc] = buildPrograms({ names: ['crc_sieve'] });
    const result = prepareTable({ text: readFileSync(DEMO, 'utf8'), sourceName: 'halyard-32.pwt', program: readFileSync(crc.elfPath) });
    if (!result.ok) throw new Error(result.reason);
    prepared = result;
    classLines = result.analysis.machine.classes.map((c) => result.analysis.lines.position(c.symbol.span.start).line);
  }, 120_000);

  function machine(): DebugMachine {
    const dm = new DebugMachine(prepared.plan, prepared.program, { reference: true }, new StepLineIndex(prepared.plan, prepared.analysis.lines));
    // The views give conditions their names (cycle, registers), as in a debug session.
    new MachineViews(dm);
    return dm;
  }

  /** A breakpoint on every class line (every step of every instruction) with this condition. */
  function breakEverywhere(dm: DebugMachine, condition: string): void {
    const results = dm.setStepBreakpoints(classLines.map((line) => ({ line, condition })));
    expect(results.filter((r) => !r.verified)).toEqual([]);
  }

  function continueToStop(dm: DebugMachine): string {
    dm.beginResume('continue');
    for (;;) {
      const event = dm.resumeChunk(1_000_000);
      if (event.reason !== 'budget') return event.reason;
    }
  }

  function state(dm: DebugMachine) {
    const sim = dm.sim;
    const sp = sim.regs[2] >>> 0;
    return { steps: sim.steps, step: sim.step, pc: sim.pc, regs: Array.from(sim.regs.slice(0, 32)), stack: Array.from({ length: 64 }, (_, i) => sim.memory.load32((sp - 128 + 4 * i) >>> 0)) };
  }

  it('goes back 10 000 steps and more to the state of a fresh run, and refuses beyond what it holds', () => {
    const dm = machine();
    breakEverywhere(dm, 'cycle >= 60000');
    expect(continueToStop(dm)).toBe('breakpoint');
    const now = dm.sim.steps;
    expect(now).toBe(60_000);
    const oldest = dm.history.oldestStep;
    expect(now - oldest).toBeGreaterThanOrEqual(20_000);

    // Back 10 000 steps, and back to the oldest step held: both equal to a fresh run there.
    for (const back of [10_000, now - oldest]) {
      const target = now - back;
      const fresh = machine();
      fresh.run.advance(target);
      expect(fresh.sim.steps).toBe(target);
      breakEverywhere(dm, `cycle == ${target}`);
      expect(dm.reverseContinue()).toEqual({ reason: 'breakpoint', ids: expect.any(Array) });
      expect(state(dm)).toEqual(state(fresh));
      // And forward again to where it was: the same state as before going back.
      breakEverywhere(dm, `cycle == ${now}`);
      expect(continueToStop(dm)).toBe('breakpoint');
      expect(dm.sim.steps).toBe(now);
    }

    // Running forward again moved the window on (old snapshots are dropped), still 20 000 steps deep.
    const oldestNow = dm.history.oldestStep;
    expect(now - oldestNow).toBeGreaterThanOrEqual(20_000);
    // One step before the oldest is out of reach: reverse continue stops at the oldest and says so.
    breakEverywhere(dm, `cycle == ${oldestNow - 1}`);
    expect(dm.reverseContinue()).toEqual({ reason: 'history-start', oldestStep: oldestNow });
    expect(dm.sim.steps).toBe(oldestNow);
    expect(dm.stepBackMicrocycle()).toEqual({ reason: 'history-start', oldestStep: oldestNow });
  }, 120_000);
});
