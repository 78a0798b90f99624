// A next-address organisation built from the standard library's `nextstep` kind (issue 15,
// item 1): every word names its next step in a number field, a second number field holds
// another target, and a one-bit field picks which the step goes to; the condition comes from
// the address lines (a step's alternatives under a guard set the pick). The demo machine in
// that organisation (tests/support/sequencer.ts) runs programs in lock-step with the project's
// RV32I reference interpreter, and SLLI as a loop whose step names itself while a counter runs.
//
// Expected results are the RV32I meanings (RISC-V Unprivileged ISA 20191213, chapter 2: ADDI,
// ADD, SUB, LUI, AUIPC (2.4), BLT/BGE/BNE (2.5), SW/LBU (2.6), JAL (2.5), SLLI by imm[4:0] (2.4));
// every retired instruction is also compared with the reference interpreter (`reference: true`).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { classCycles } from '../../server/src/core/flow/cycleCounts';
import { nextStepOf } from '../../server/src/core/model/sequencing';
import { canCompile } from '../../server/src/core/sim/compile';
import { assemble, exitWords, ins, planOf, programOf, runToEnd, toLabel } from './support';
import { checkShifts, nextAddressDemo, nextAddressShiftDemo, shiftProgram } from '../support/sequencer';

/**
 * Adds 10 + 8 + 6 + 4 + 2 in a loop closed by BLT (taken four times), stores the sum and loads
 * it back as a byte, branches not taken (BGE) and taken (BNE), jumps, and exits with
 * 30 + (30 << 2) = 150. Also LUI and AUIPC, whose results are held below.
 */
function program(): number[] {
  return assemble([
    ins('addi', { rd: 1, rs1: 0, imm: 10 }),
    ins('addi', { rd: 2, rs1: 0, imm: 0 }),
    { label: 'again' },
    ins('add', { rd: 2, rs1: 2, rs2: 1 }),
    ins('addi', { rd: 1, rs1: 1, imm: -2 }),
    toLabel('blt', 'again', { rs1: 0, rs2: 1 }), // while 0 < x1
    ins('auipc', { rd: 6, imm: 0 }),
    ins('sw', { rs1: 6, rs2: 2, imm: 0x200 }),
    ins('lbu', { rd: 7, rs1: 6, imm: 0x200 }),
    toLabel('bge', 'wrong', { rs1: 1, rs2: 7 }), // 0 >= 30 is false: not taken
    ins('slli', { rd: 8, rs1: 7, imm: 2 }),
    ins('sub', { rd: 9, rs1: 0, rs2: 7 }), // -30
    toLabel('bne', 'on', { rs1: 9, rs2: 0 }), // taken
    { label: 'wrong' },
    ins('addi', { rd: 7, rs1: 0, imm: 99 }),
    { label: 'on' },
    ins('lui', { rd: 5, imm: 0xabcde << 12 }),
    toLabel('jal', 'last', { rd: 1 }),
    ins('addi', { rd: 7, rs1: 0, imm: 77 }),
    { label: 'last' },
    ins('fence'),
    ins('add', { rd: 10, rs1: 7, rs2: 8 }),
    ...exitWords(),
  ]);
}

function classIndex(plan: ReturnType<typeof planOf>, name: string): number {
  const at = plan.machine.classes.findIndex((c) => c.name === name);
  expect(at, name).toBeGreaterThanOrEqual(0);
  return at;
}

describe('the demo as a next-address machine (library kind `nextstep`)', () => {
  it('checks clean and runs on the interpreter', () => {
    const text = nextAddressDemo();
    expect(analyse(text).diagnostics).toEqual([]);
    expect(canCompile(planOf(text))).toBe(false);
  });

  it("each step goes to the target its word's pick chooses: BRANCH step 3 goes to 4 when taken, 5 when not", () => {
    const machine = analyse(nextAddressDemo()).machine;
    const branch = machine.classes.find((c) => c.name === 'BRANCH')!;
    const [taken, notTaken] = branch.steps.get(3)!;
    expect(taken.guard?.map((g) => `${g.label}=${g.bits}`)).toEqual(['taken=1']);
    expect(nextStepOf(machine, taken, 3)).toBe(4);
    expect(nextStepOf(machine, notTaken, 3)).toBe(5);
    expect(nextStepOf(machine, branch.steps.get(2)![0], 2)).toBe(3);
    expect(nextStepOf(machine, branch.steps.get(4)![0], 4)).toBe(0);
    // The fill word: every field at its idle code, `next` = 0 picked: back to step 0.
    expect(nextStepOf(machine, undefined, 6)).toBe(0);
  });

  it('runs a program in lock-step with the reference: exit 150; a branch takes 5 steps, the rest as on the demo', () => {
    const plan = planOf(nextAddressDemo());
    const { run, ending } = runToEnd(plan, programOf(program()), { reference: true });
    expect(ending).toEqual({ kind: 'exit', exitCode: 150, status: 150 });
    expect(run.sim.regs[5] >>> 0).toBe(0xabcde000);
    expect(run.sim.regs[6]).toBe(0x1000 + 4 * 5);
    expect(run.sim.regs[9]).toBe(-30);
    const branch = classIndex(plan, 'BRANCH');
    // Five BLT (four taken), one BGE not taken, one BNE taken: fetch (2), compare, pick, then pc.
    expect(run.sim.classInstructions[branch]).toBe(7);
    expect(run.sim.classSteps[branch]).toBe(7 * 5);
    const opImm = classIndex(plan, 'OP-IMM');
    expect(run.sim.classSteps[opImm] / run.sim.classInstructions[opImm]).toBe(3);
  });

  it("the cycle counts follow the picks: every branch 5 steps either way, as the run measures", () => {
    const machine = analyse(nextAddressDemo()).machine;
    const branch = classCycles(machine, machine.classes.find((c) => c.name === 'BRANCH')!);
    expect([branch.min, branch.max, branch.loops, branch.doesNotEnd]).toEqual([5, 5, false, false]);
    const jalr = classCycles(machine, machine.classes.find((c) => c.name === 'JALR')!);
    expect([jalr.min, jalr.max]).toEqual([5, 5]);
  });

  it('picking the wrong target (taken goes to pc + 4) is seen by the lock-step run at the first taken branch', () => {
    const text = nextAddressDemo().replace('  3 if taken: pick=other, nx=5, alt=4', '  3 if taken: pick=next, nx=5, alt=4');
    expect(text).not.toContain('pick=other');
    const { ending } = runToEnd(planOf(text), programOf(program()), { reference: true });
    expect(ending?.kind).toBe('divergence');
    if (ending?.kind !== 'divergence') return;
    // The first BLT (at 0x1010, index 4 of the program) is taken; this machine falls through.
    expect(ending.report.instruction.pc).toBe(0x1000 + 4 * 4);
    expect(ending.report.steps.map((s) => s.step)).toEqual([0, 1, 2, 3, 5]);
  });

  it('an instruction no class decodes runs the fill word (next step 0) once: an illegal instruction, not a retirement', () => {
    // Opcode 0001011 (custom-0, RISC-V Unprivileged ISA 20191213, table 24.1) has no class here.
    const { run, ending } = runToEnd(planOf(nextAddressDemo()), programOf([ins('addi', { rd: 1, rs1: 0, imm: 1 }), 0x0000000b, ...exitWords()]), { reference: true });
    expect(ending?.kind).toBe('stopped');
    if (ending?.kind !== 'stopped') return;
    expect(ending.stop).toMatchObject({ kind: 'illegal-instruction', pc: 0x1004, word: 0x0000000b, why: 'no-class' });
    expect(run.sim.instructionsRetired).toBe(1);
  });
});

describe('SLLI as a loop on the next-address machine: the loop step names itself while the counter runs', () => {
  it('checks clean', () => {
    expect(analyse(nextAddressShiftDemo()).diagnostics).toEqual([]);
  });

  it('shifts by 0, 1, 5 and 31 in lock-step with the reference; each shift takes 5 + shamt steps', () => {
    const plan = planOf(nextAddressShiftDemo());
    const { run, ending } = runToEnd(plan, programOf(shiftProgram()), { reference: true });
    expect(ending).toEqual({ kind: 'exit', exitCode: 8, status: 8 });
    checkShifts(run.sim.regs);
    // OP-IMM: four one-step instructions (3 steps each), and each slli: steps 0..3, shamt loop steps, the last step 4.
    const opImm = classIndex(plan, 'OP-IMM');
    expect(run.sim.classInstructions[opImm]).toBe(8);
    expect(run.sim.classSteps[opImm]).toBe(4 * 3 + (5 + 0) + (5 + 1) + (5 + 5) + (5 + 31));
    // The counts from the class's steps: SLLI 5 + n (n: repeats of the self-naming step 4), the others 3.
    const cycles = classCycles(plan.machine, plan.machine.classes[opImm]);
    const slli = cycles.instructions.find((i) => i.mnemonic === 'slli')!;
    expect([slli.min, slli.loopSteps]).toEqual([5, [4]]);
    expect(cycles.instructions.find((i) => i.mnemonic === 'addi')!.max).toBe(3);
  });
});
