// Deliberately faulty versions of the demo table are caught by the lock-step comparison with
// the RV32I reference, which names the instruction (mnemonic and pc), what differs and the step
// of the table that made the difference:
//   - the OP map with the xor and or rows swapped (a wrong ALU code for funct3 100 and 110);
//   - the load map with `000 ubyte` instead of `000 byte` (LB loses its sign extension).
// Expected values: RISC-V Unprivileged ISA 20191213, 2.4 (XOR, OR) and 2.6 (LB sign-extends).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { DEMO_TEXT, PROGRAM_ORIGIN, demoWith, exitWords, ins, planOf, programOf, runToEnd } from './support';

const swappedOp = demoWith('100 0 xor   101 0 srl   101 1 sra   110 0 or ', '100 0 or    101 0 srl   101 1 sra   110 0 xor');
const unsignedLb = demoWith('000 byte   001 half   010 word   100 ubyte', '000 ubyte  001 half   010 word   100 ubyte');

/** 1-based line of the first line of `text` containing `needle`. */
function lineOf(text: string, needle: string): number {
  return text.split('\n').findIndex((l) => l.includes(needle)) + 1;
}

describe('faulty tables are caught by lock-step', () => {
  const program = () =>
    programOf(
      [
        ins('addi', { rd: 5, rs1: 0, imm: 0x0f0 }),
        ins('addi', { rd: 6, rs1: 0, imm: 0x0ff }),
        ins('or', { rd: 8, rs1: 5, rs2: 6 }),
        ins('xor', { rd: 7, rs1: 5, rs2: 6 }),
        ins('lui', { rd: 11, imm: 0x2000 }),
        ins('lb', { rd: 12, rs1: 11, imm: 0 }),
        ins('addi', { rd: 10, rs1: 0, imm: 0 }),
        ...exitWords(),
      ],
      [{ address: 0x2000, bytes: [0x94] }],
    );

  it('the demo table itself runs the program without a difference', () => {
    const { run, ending } = runToEnd(planOf(DEMO_TEXT), program());
    expect(ending?.kind).toBe('exit');
    expect(run.sim.regs[7]).toBe(0x00f); // 0x0f0 xor 0x0ff
    expect(run.sim.regs[12]).toBe(-0x6c); // 0x94 sign-extended: 0xffffff94
  });

  it('swapped xor/or rows: the or at pc+8 is the first to differ, in OP step 2', () => {
    const analysis = analyse(swappedOp);
    const { ending } = runToEnd(planOf(swappedOp), program(), { format: { lines: analysis.lines, file: 'swapped.pwt' } });
    if (ending?.kind !== 'divergence') throw new Error(`expected a divergence, got ${ending?.kind}`);
    const report = ending.report;
    expect(report.instruction.pc).toBe(PROGRAM_ORIGIN + 8);
    expect(report.instruction.mnemonic).toBe('or');
    expect(report.instruction.className).toBe('OP');
    expect(report.differences.map((d) => d.text)).toEqual(['x8: expected 0x000000ff (reference), got 0x0000000f (table)']);
    const culprit = report.steps[report.culprit!];
    expect(culprit.step).toBe(2);
    expect(culprit.sourceLabel).toBe('class OP step 2');
    expect(culprit.fields).toContainEqual({ field: 'alu.fn', code: 4, value: 'xor' });
    expect(culprit.buses?.map((b) => `${b.bus}=${b.value?.toString(16)}`)).toEqual(['left=f0', 'right=ff', 'result=f']);
    const line = lineOf(swappedOp, '2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn');
    expect(analysis.lines.position(report.source!.start).line + 1).toBe(line);
    expect(report.text).toContain(`look at: step 2, class OP step 2 at swapped.pwt:${line} (the step that loads x8)`);
    expect(report.retiredBefore).toBe(2);
  });

  it('lb without sign extension: the lb at pc+20 differs, in LOAD step 3', () => {
    const { ending } = runToEnd(planOf(unsignedLb), program());
    if (ending?.kind !== 'divergence') throw new Error(`expected a divergence, got ${ending?.kind}`);
    const report = ending.report;
    expect(report.instruction.pc).toBe(PROGRAM_ORIGIN + 20);
    expect(report.instruction.mnemonic).toBe('lb');
    expect(report.instruction.disassembly).toBe('lb x12,0(x11)');
    expect(report.differences.map((d) => d.text)).toEqual(['x12: expected 0xffffff94 (reference), got 0x00000094 (table)']);
    const culprit = report.steps[report.culprit!];
    expect(culprit.step).toBe(3);
    expect(culprit.sourceLabel).toBe('class LOAD step 3');
    expect(culprit.fields).toContainEqual({ field: 'mem.size', code: 4, value: 'ubyte' });
    expect(report.steps.map((s) => s.step)).toEqual([0, 1, 2, 3]);
  });
});
