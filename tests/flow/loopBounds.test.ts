// Loop counts as a formula of the operand (flow/loopBounds.ts), derived from the loop counter's
// definition, the words that load it and what drives the loaded lines. The operands' meanings
// are the RISC-V Unprivileged ISA 20191213's: SLLI, SRLI and SRAI shift by shamt, the lower five
// bits of the I-immediate, inst[24:20] (2.4.1, "Integer Register-Immediate Instructions"); SLL,
// SRL and SRA by the lower five bits of register rs2, inst[24:20] (2.4.2, "Integer
// Register-Register Operations"); x0 reads 0 (2.1). The step counts themselves are this
// project's timing model (docs/notation.md), which tests/sim/shift-loop.test.ts and
// tests/outside/loop-formula.test.ts hold to the simulator.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { type ClassCycles, type InstructionCycles, countsText, cycleCountsOf, cyclesSummary, rangeText } from '../../server/src/core/flow/cycleCounts';
import { loopStepsAt } from '../../server/src/core/flow/loopBounds';
import { classLenses } from '../../server/src/core/ide/codeLens';
import { hover } from '../../server/src/core/ide/hover';
import { instructionTimes } from '../../server/src/core/budget/instructionTime';
import { ins } from '../sim/support';
import { fixedLoopDemo, nextAddressShiftDemo, shiftLoopDemo } from '../support/sequencer';

const WINDLASS = readFileSync(join(__dirname, '../../examples/windlass-32.pwt'), 'utf8');

/** Text with `from` replaced by `to`, exactly once. */
function replaced(text: string, from: string, to: string): string {
  const at = text.indexOf(from);
  expect(at, from).toBeGreaterThanOrEqual(0);
  expect(text.indexOf(from, at + 1), from).toBe(-1);
  return text.slice(0, at) + to + text.slice(at + from.length);
}

function classesOf(text: string): ClassCycles[] {
  return cycleCountsOf(analyse(text).machine);
}

function instruction(classes: ClassCycles[], mnemonic: string): InstructionCycles {
  const found = classes.flatMap((c) => c.instructions).find((i) => i.mnemonic === mnemonic);
  expect(found, mnemonic).toBeDefined();
  return found!;
}

const SHIFT_IMMEDIATES = ['slli', 'srli', 'srai'];
const SHIFT_REGISTERS = ['sll', 'srl', 'sra'];

describe('windlass-32: the shift loop counted from its counter', () => {
  const classes = classesOf(WINDLASS);

  it('SLLI, SRLI and SRAI take 4 + shamt: the counter loads the I-immediate\'s bits 4..0, inst[24:20] (spec 2.4.1)', () => {
    for (const m of SHIFT_IMMEDIATES) {
      const i = instruction(classes, m);
      expect(i.loopCount, m).toMatchObject({ constant: 4, perUnit: 1, operand: { kind: 'instruction', hi: 24, lo: 20 }, of: 'shamt', formula: '4 + shamt', counter: 'cnt', loadStep: 2, width: 5, least: 4, most: 35 });
      expect(countsText(i)).toBe('4 + shamt');
      // min and max keep their meaning: the fewest steps, no most.
      expect([i.min, i.max, i.loopSteps]).toEqual([4, 35, [3]]);
    }
  });

  it('SLL, SRL and SRA take 4 + x[rs2][4:0]: the counter loads bits 4..0 of the register rs2 selects (spec 2.4.2)', () => {
    for (const m of SHIFT_REGISTERS) {
      const i = instruction(classes, m);
      expect(i.loopCount, m).toMatchObject({ constant: 4, perUnit: 1, operand: { kind: 'register', index: { hi: 24, lo: 20 }, bits: { hi: 4, lo: 0 } }, of: 'x[rs2][4:0]', formula: '4 + x[rs2][4:0]', least: 4, most: 35 });
      expect(countsText(i)).toBe('4 + x[rs2][4:0]');
    }
  });

  it('every other instruction keeps its count: no loop, no formula', () => {
    const shifts = [...SHIFT_IMMEDIATES, ...SHIFT_REGISTERS];
    const others = classes.flatMap((c) => c.instructions).filter((i) => !shifts.includes(i.mnemonic!));
    expect(others.length).toBe(40 - 6);
    for (const i of others) {
      expect(i.loopCount, i.mnemonic).toBeUndefined();
      expect(i.loopSteps, i.mnemonic).toBeUndefined();
      expect(i.max, i.mnemonic).toBe(i.min);
    }
    expect(countsText(instruction(classes, 'addi'))).toBe('3');
    expect(countsText(instruction(classes, 'jalr'))).toBe('5');
  });

  it('the formula evaluated at an instruction word and the registers before it', () => {
    const slli = instruction(classes, 'slli').loopCount!;
    const sll = instruction(classes, 'sll').loopCount!;
    const x = Array.from({ length: 32 }, (_, r) => (r === 6 ? 0x25 : r === 9 ? 0xffffffe0 : 0x1234567 * r));
    expect(loopStepsAt(slli, ins('slli', { rd: 7, rs1: 5, imm: 7 }), x)).toBe(11);
    expect(loopStepsAt(slli, ins('slli', { rd: 7, rs1: 5, imm: 31 }), x)).toBe(35);
    // rs2 = x6 holds 0x25: its low five bits are 5; x9 holds 0xffffffe0: 0; x0 reads 0 whatever is stored.
    expect(loopStepsAt(sll, ins('sll', { rd: 7, rs1: 5, rs2: 6 }), x)).toBe(9);
    expect(loopStepsAt(sll, ins('sll', { rd: 7, rs1: 5, rs2: 9 }), x)).toBe(4);
    expect(loopStepsAt(sll, ins('sll', { rd: 7, rs1: 5, rs2: 0 }), [0x1f, ...x.slice(1)])).toBe(4);
  });

  it('the lens, the budget, the summary and the hover read the formulas', () => {
    const analysis = analyse(WINDLASS);
    const opImm = classes.find((c) => c.className === 'OP-IMM')!;
    const op = classes.find((c) => c.className === 'OP')!;
    expect(cyclesSummary(opImm)).toBe('3–35 steps (ADDI..ANDI: 3; SLLI..SRAI: 4 + shamt)');
    expect(cyclesSummary(op)).toBe('3–35 steps (ADD, SUB, SLT, SLTU, XOR, OR, AND: 3; SLL, SRL, SRA: 4 + x[rs2][4:0])');
    expect(rangeText(4, undefined, [3], instruction(classes, 'srai').loopCount)).toBe('4 + shamt');
    expect(rangeText(4, undefined, [3])).toBe('4 + n');
    const lens = classLenses(analysis).find((l) => l.className === 'OP-IMM')!;
    expect(lens.title.startsWith('3–35 steps (ADDI..ANDI: 3; SLLI..SRAI: 4 + shamt)')).toBe(true);
    expect(instructionTimes(analysis.machine).rows.find((r) => r.className === 'OP')).toMatchObject({ minSteps: 3, maxSteps: 35, detail: cyclesSummary(op) });
    const shown = hover(analysis, WINDLASS.indexOf('class OP-IMM') + 'class '.length)?.markdown ?? '';
    expect(shown).toContain('  - slli, srli, srai: 4 + shamt (4 to 35)');
  });
});

describe('the formula follows the definitions, not the names', () => {
  it('the demo\'s SLLI loop loads the counter from the result bus, where the ALU passes the immediate on: 5 + shamt', () => {
    const slli = instruction(classesOf(shiftLoopDemo()), 'slli');
    expect(slli.loopCount).toMatchObject({ formula: '5 + shamt', operand: { kind: 'instruction', hi: 24, lo: 20 }, counter: 'sh', loadStep: 3 });
    expect(instruction(classesOf(shiftLoopDemo()), 'addi').loopCount).toBeUndefined();
  });

  it('the same on the next-address machine, whose loop step names itself as its next step', () => {
    expect(instruction(classesOf(nextAddressShiftDemo()), 'slli').loopCount).toMatchObject({ formula: '5 + shamt', loadStep: 3 });
  });

  it('windlass with its counter loaded from the result bus, which the ALU drives with rs1: 4 + x[rs1][4:0]', () => {
    let text = replaced(WINDLASS, 'strobe cnt.ld    clock right[4:0] -> cnt', 'strobe cnt.ld    clock result[4:0] -> cnt');
    text = replaced(text, 'right bus).', 'result bus).');
    const classes = classesOf(text);
    for (const m of [...SHIFT_IMMEDIATES, ...SHIFT_REGISTERS]) expect(instruction(classes, m).loopCount?.formula, m).toBe('4 + x[rs1][4:0]');
  });

  it('a preset from a number field: the count is the field\'s code in the word, 4 + 3 = 7 for FENCE', () => {
    const fence = instruction(classesOf(fixedLoopDemo(3)), 'fence');
    expect(fence.loopCount).toMatchObject({ constant: 4, perUnit: 1, operand: { kind: 'constant', value: 3 }, formula: '4 + 3', least: 7, most: 7, counter: 'w', loadStep: 2 });
    expect(countsText(fence)).toBe('7 (4 + 3: a fixed count)');
    expect(instruction(classesOf(fixedLoopDemo(0)), 'fence').loopCount).toMatchObject({ formula: '4 + 0', least: 4 });
  });
});

/** A loop counter of the table's own whose `down` port is given: the library's loopcount otherwise. */
function windlassWithCounter(down: string): string {
  const kind = [
    'kind oddcount "loop counter for the fall-back tests"',
    '  setting width number = 5 "bits"',
    '  state q width = 0',
    '  drive out width = q "the count it holds"',
    '  on load width: q <= in "loads the count from the bus"',
    `  on down: ${down} "changes the count"`,
    '  flag zero = q == 0',
    '',
    'bus left',
  ].join('\n');
  let text = replaced(WINDLASS, 'bus left', kind);
  text = replaced(text, 'part cnt  loopcount 5 -> shz', 'part cnt  oddcount 5 -> shz');
  return text;
}

describe('no false formula: where the count is not linear or not derived, `min + n` stays', () => {
  it('a counter that halves: 4 + (bits of the amount) is not linear, no formula', () => {
    const text = windlassWithCounter('q <= q >> 1');
    expect(analyse(text).diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const slli = instruction(classesOf(text), 'slli');
    expect([slli.min, slli.loopSteps, slli.loopCount]).toEqual([4, [3], undefined]);
    expect(countsText(slli)).toBe('4 + n (n: repeats of step 3)');
  });

  it('a counter that counts down by two never reaches zero from an odd count: no formula', () => {
    const classes = classesOf(windlassWithCounter('q <= q - 2'));
    for (const m of [...SHIFT_IMMEDIATES, ...SHIFT_REGISTERS]) expect(instruction(classes, m).loopCount, m).toBeUndefined();
  });

  it('a count loaded from a register part\'s old value (not the instruction or the registers) is not derived', () => {
    // The counter takes the result bus, which t drives with what it held before the step.
    let text = replaced(WINDLASS, 'strobe cnt.ld    clock right[4:0] -> cnt', 'strobe cnt.ld    clock result[4:0] -> cnt');
    text = replaced(text, '2 if funct3=-01: x.rs1.oe, alu.fn=passa, alu.oe, t.ck, imm.fmt=i, imm.oe, cnt.ld', '2 if funct3=-01: t.oe, cnt.ld');
    const classes = classesOf(text);
    for (const m of SHIFT_IMMEDIATES) expect(instruction(classes, m).loopCount, m).toBeUndefined();
    expect(instruction(classes, 'slli').loopSteps).toEqual([3]);
    // OP still loads through the ALU from rs1.
    expect(instruction(classes, 'sll').loopCount?.formula).toBe('4 + x[rs1][4:0]');
  });

  it('a loop that also tests the comparator\'s latched flag: the flags of two parts, no formula', () => {
    const text = replaced(WINDLASS, '  0 if !shz: t.left, alu.fn=shift_fn, alu.oe, t.ck, cnt.dn, seqop=hold\n  0 else:', '  0 if !shz: t.left, alu.fn=shift_fn, alu.oe, t.ck, cnt.dn, seqop=hold\n  0 if shz & !taken: seqop=hold\n  0 else:');
    const slli = instruction(classesOf(text), 'slli');
    expect(slli.loopSteps).toEqual([3]);
    expect(slli.loopCount).toBeUndefined();
  });
});
