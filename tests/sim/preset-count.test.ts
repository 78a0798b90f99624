// A loop counter loaded from a number field of the word (issue 15, item 2): the library's
// `presetcount`, whose `preset` port takes the count the step's word gives, so a loop of a fixed
// count needs no bus. The sequencer demo's FENCE waits a fixed count this way
// (tests/support/sequencer.ts, fixedLoopDemo); programs run in lock-step with the project's
// RV32I reference interpreter, and FENCE's measured steps follow the count in the word.
//
// FENCE changes no register or memory a single hart sees (RISC-V Unprivileged ISA 20191213,
// 2.7), so the wait is invisible to the reference: only the step counts tell it.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { classCycles } from '../../server/src/core/flow/cycleCounts';
import { assemble, exitWords, ins, planOf, programOf, runToEnd } from './support';
import { fixedLoopDemo } from '../support/sequencer';

function program(): number[] {
  return assemble([
    ins('addi', { rd: 1, rs1: 0, imm: 20 }),
    ins('fence'),
    ins('addi', { rd: 1, rs1: 1, imm: 1 }),
    ins('fence'),
    ins('fence'),
    ins('add', { rd: 10, rs1: 1, rs2: 1 }),
    ...exitWords(),
  ]);
}

describe('a fixed-count loop on a counter preset from the word', () => {
  it('checks clean for counts 0, 3 and 7', () => {
    for (const count of [0, 3, 7]) expect(analyse(fixedLoopDemo(count)).diagnostics, `count ${count}`).toEqual([]);
  });

  it('runs in lock-step with the reference; each FENCE takes 4 + count steps (fetch, preset, count + 1 at the wait)', () => {
    for (const count of [0, 1, 3, 7]) {
      const plan = planOf(fixedLoopDemo(count));
      const { run, ending } = runToEnd(plan, programOf(program()), { reference: true });
      expect(ending, `count ${count}`).toEqual({ kind: 'exit', exitCode: 42, status: 42 });
      const fence = plan.machine.classes.findIndex((c) => c.name === 'MISC-MEM');
      expect(run.sim.classInstructions[fence]).toBe(3);
      expect(run.sim.classSteps[fence], `count ${count}`).toBe(3 * (4 + count));
      // The other classes keep the demo's counts: OP-IMM three steps each.
      const opImm = plan.machine.classes.findIndex((c) => c.name === 'OP-IMM');
      expect(run.sim.classSteps[opImm] / run.sim.classInstructions[opImm]).toBe(3);
    }
  });

  it('the counts from the steps read the count in the word: 4 + count, the steps each FENCE measured above', () => {
    for (const count of [0, 1, 3, 7]) {
      const machine = analyse(fixedLoopDemo(count)).machine;
      const fence = classCycles(machine, machine.classes.find((c) => c.name === 'MISC-MEM')!);
      // The loop's formula reads the count: fewest and most are both 4 + count (the graph alone would say 4 + n).
      expect(fence.instructions.map((i) => [i.mnemonic, i.min, i.max, i.loopSteps])).toEqual([['fence', 4 + count, 4 + count, [3]]]);
      expect(fence.instructions[0].loopCount, `count ${count}`).toMatchObject({ formula: `4 + ${count}`, least: 4 + count, most: 4 + count });
    }
  });

  it('a count that does not fit the field is a bad number at the number', () => {
    const text = fixedLoopDemo(8);
    const bad = analyse(text).diagnostics.filter((d) => d.code === 'bad-number');
    expect(bad).toHaveLength(1);
    expect(text.slice(bad[0].span.start, bad[0].span.end)).toBe('8');
  });
});
