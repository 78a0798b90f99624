// Combinational flags on the address lines (docs/notation.md, "Timing model"): halyard-32 with
// its branch comparator made combinational (tests/support/ownKinds.ts,
// halyardWithCombinationalBranch): BRANCH compares rs1 with rs2 in step 2 and the same step's
// word depends on the result, so the simulator settles the address within the step. Expected
// values: RISC-V Unprivileged ISA 20191213, section 2.5 (conditional branches: BEQ, BNE, BLT,
// BGE signed, BLTU, BGEU unsigned; a taken branch adds the offset to its own address, one not
// taken goes on at pc + 4). Every run is in lock-step with the RV32I reference interpreter.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { canCompile } from '../../server/src/core/sim/compile';
import { faultText } from '../../server/src/core/sim/describe';
import { halyardWithCombinationalBranch } from '../support/ownKinds';
import { DEMO_TEXT, assemble, exitWords, ins, planOf, programOf, runToEnd, toLabel } from './support';

const table = halyardWithCombinationalBranch(DEMO_TEXT);

/**
 * Sums 5 + 4 + 3 + 2 + 1 in a loop closed by BNE, then takes or falls through one branch of
 * every other condition on signed and unsigned operands (x7 = -1 makes signed and unsigned
 * order differ); each wrong way sets x10 = 99 and exits. Exits with the sum, 15.
 */
function branches(): number[] {
  const bad = (label: string) => toLabel('beq', label, { rs1: 0, rs2: 0 });
  return assemble([
    ins('addi', { rd: 5, rs1: 0, imm: 5 }),
    ins('addi', { rd: 6, rs1: 0, imm: 0 }),
    ins('addi', { rd: 7, rs1: 0, imm: -1 }),
    { label: 'loop' },
    ins('add', { rd: 6, rs1: 6, rs2: 5 }),
    ins('addi', { rd: 5, rs1: 5, imm: -1 }),
    toLabel('bne', 'loop', { rs1: 5, rs2: 0 }),
    toLabel('blt', 'wrong', { rs1: 6, rs2: 0 }), // 15 < 0 signed: not taken
    toLabel('blt', 'a', { rs1: 7, rs2: 0 }), // -1 < 0 signed: taken
    bad('wrong'),
    { label: 'a' },
    toLabel('bltu', 'wrong', { rs1: 7, rs2: 0 }), // 0xffffffff < 0 unsigned: not taken
    toLabel('bgeu', 'b', { rs1: 7, rs2: 6 }), // 0xffffffff >= 15 unsigned: taken
    bad('wrong'),
    { label: 'b' },
    toLabel('bge', 'wrong', { rs1: 7, rs2: 6 }), // -1 >= 15 signed: not taken
    toLabel('beq', 'c', { rs1: 5, rs2: 0 }), // 0 == 0: taken
    bad('wrong'),
    { label: 'c' },
    toLabel('bne', 'wrong', { rs1: 6, rs2: 6 }), // not taken
    ins('addi', { rd: 10, rs1: 6, imm: 0 }),
    ...exitWords(),
    { label: 'wrong' },
    ins('addi', { rd: 10, rs1: 0, imm: 99 }),
    ...exitWords(),
  ]);
}

describe('a combinational flag on the address lines', () => {
  it('the table checks clean, and the machine runs on the interpreter only', () => {
    expect(analyse(table).diagnostics).toEqual([]);
    expect(canCompile(planOf(table))).toBe(false);
  });

  it('every branch condition goes the way the reference goes, and a branch not taken ends in step 2', () => {
    const plan = planOf(table);
    const { run, ending } = runToEnd(plan, programOf(branches()), { reference: true });
    expect(ending).toEqual({ kind: 'exit', exitCode: 15, status: 15 });
    // Branches run: BNE 5 times (4 taken), then 7 more of which 3 are taken (blt, bgeu, beq).
    const branch = plan.machine.classes.findIndex((c) => c.name === 'BRANCH');
    expect(run.sim.classInstructions[branch]).toBe(12);
    // Taken: 4 steps (0..3); not taken: 3 steps (0..2). 7 taken, 5 not: 7 * 4 + 5 * 3 = 43.
    expect(run.sim.classSteps[branch]).toBe(43);
  });

  it('the flag holds the value it settled to in the branch step', () => {
    const plan = planOf(table);
    const taken = plan.flagIndex.get('taken')!;
    const program = programOf([ins('addi', { rd: 1, rs1: 0, imm: 3 }), ins('beq', { rs1: 1, rs2: 0, imm: 8 }), ins('addi', { rd: 10, rs1: 0, imm: 4 }), ...exitWords()]);
    const { run } = runToEnd(plan, program, { reference: true }, 0);
    // Run to the BEQ's step 2 (addi: 3 steps, BEQ steps 0 and 1), then that step: 3 != 0, not taken.
    run.sim.run(5);
    expect(run.sim.step).toBe(2);
    run.sim.run(1);
    expect(run.sim.step).toBe(0);
    expect(run.sim.flags[taken]).toBe(0);
    expect(run.sim.pc).toBe(0x1008);
  });

  it('a table whose word changes what the flag reads oscillates: the machine stops with the fault', () => {
    // With taken the word puts pc on the left bus instead of rs1, so pc == rs2 decides instead.
    const oscillating = halyardWithCombinationalBranch(DEMO_TEXT, ['  2 if taken: pc.oe, x.rs2.oe', '  2 else: x.rs1.oe, x.rs2.oe, pc.inc, done', '  3: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done']);
    // beq x1, x2 with x1 = x2 = 5: rs1 == rs2 makes taken = 1, pc (0x1008) == 5 makes it 0 again.
    const program = programOf([ins('addi', { rd: 1, rs1: 0, imm: 5 }), ins('addi', { rd: 2, rs1: 0, imm: 5 }), ins('beq', { rs1: 1, rs2: 2, imm: 8 }), ...exitWords()]);
    const { ending } = runToEnd(planOf(oscillating), program, { reference: true });
    expect(ending?.kind).toBe('fault');
    if (ending?.kind !== 'fault') return;
    expect(ending.report.fault?.kind).toBe('address-flag');
    expect(ending.report.instruction.pc).toBe(0x1008);
    const text = faultText(ending.report.fault!);
    expect(text).toMatch(/^the address of step 2 oscillates through combinational flag `taken`: address 0x[0-9a-f]{4} \(taken=[01]\), whose drivers make taken=[01]; address 0x[0-9a-f]{4} \(taken=[01]\), whose drivers make taken=[01]; address 0x[0-9a-f]{4} \(taken=[01]\): back to a word already tried, so the control word never settles$/);
    // The taken line is address bit 3 (the table's `taken 3`): the two addresses differ in it alone.
    const addresses = [...text.matchAll(/address (0x[0-9a-f]{4})/g)].map((m) => Number(m[1]));
    expect(addresses[0] ^ addresses[1]).toBe(8);
    expect(addresses[2]).toBe(addresses[0]);
  });
});
