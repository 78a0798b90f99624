// A sequencer part (`holds step`, issue 15's first slice) replacing the implicit step counter:
// the demo machine with the library's `sequencer` driven by a field of the word, each `end`
// replaced by `seqop=clear`, runs programs in lock-step with the RV32I reference interpreter;
// a variant does SLLI one bit per step in a loop counted down by a `loopcount` part from shamt.
//
// The expected results are the RV32I meanings (RISC-V Unprivileged ISA 20191213, chapter 2:
// ADDI, SLLI shifts by imm[4:0] (2.4), branches (2.5)); every retired instruction is also held
// against the project's reference interpreter by the lock-step run (`reference: true`).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { canCompile } from '../../server/src/core/sim/compile';
import { DEMO_TEXT, assemble, exitWords, ins, planOf, programOf, runToEnd, toLabel } from './support';
import { checkShifts, sequencerDemo, shiftLoopDemo, shiftProgram } from '../support/sequencer';

/** A program using every class of the demo: arithmetic, a loop of branches, a store and load, jumps, then exit with a0. */
function program(): number[] {
  return assemble([
    ins('lui', { rd: 5, imm: 0x12345 << 12 }),
    ins('auipc', { rd: 6, imm: 0 }),
    ins('addi', { rd: 1, rs1: 0, imm: 5 }),
    ins('addi', { rd: 2, rs1: 0, imm: 0 }),
    { label: 'loop' },
    ins('add', { rd: 2, rs1: 2, rs2: 1 }),
    ins('addi', { rd: 1, rs1: 1, imm: -1 }),
    toLabel('bne', 'loop', { rs1: 1, rs2: 0 }),
    ins('sw', { rs1: 6, rs2: 2, imm: 0x100 }),
    ins('lw', { rd: 7, rs1: 6, imm: 0x100 }),
    ins('slli', { rd: 8, rs1: 7, imm: 3 }),
    ins('srai', { rd: 9, rs1: 5, imm: 4 }),
    toLabel('jal', 'over', { rd: 1 }),
    ins('addi', { rd: 7, rs1: 0, imm: 99 }),
    { label: 'over' },
    ins('fence'),
    ins('add', { rd: 10, rs1: 7, rs2: 8 }),
    ...exitWords(),
  ]);
}

describe('the demo with a sequencer part', () => {
  it('checks clean, and runs on the interpreter (the compiled chains assume the implicit counter)', () => {
    const text = sequencerDemo();
    expect(analyse(text).diagnostics).toEqual([]);
    expect(canCompile(planOf(text))).toBe(false);
  });

  it('runs a program in lock-step with the reference: 15 (sum 5..1) + 15 << 3 = 135', () => {
    const plan = planOf(sequencerDemo());
    const { run, ending } = runToEnd(plan, programOf(program()), { reference: true });
    expect(ending).toEqual({ kind: 'exit', exitCode: 135, status: 135 });
    expect(run.sim.regs[9]).toBe(0x12345000 >> 4);
    // Same steps as the implicit counter would count: OP-IMM is three steps (fetch and one).
    const opImm = plan.machine.classes.findIndex((c) => c.name === 'OP-IMM');
    expect(run.sim.classSteps[opImm] / run.sim.classInstructions[opImm]).toBe(3);
  });

  it('retires at the closing edge after which the step is 0, as the implicit counter does at `end`', () => {
    const plain = planOf(DEMO_TEXT);
    const seq = planOf(sequencerDemo());
    const words = program();
    const a = runToEnd(plain, programOf(words), { reference: false }, 0).run.sim;
    const b = runToEnd(seq, programOf(words), { reference: false }, 0).run.sim;
    for (let i = 0; i < 400 && !a.stopReason && !b.stopReason; i++) {
      a.run(1);
      b.run(1);
      expect(b.step, `step ${i}`).toBe(a.step);
      expect(b.instructionsRetired, `step ${i}`).toBe(a.instructionsRetired);
      expect(b.pc).toBe(a.pc);
    }
    expect(b.stopReason).toEqual(a.stopReason);
  });
});

describe('a sequencer that runs out of steps', () => {
  it('an instruction no class decodes runs the fill word back to step 0: an illegal instruction, not a retirement', () => {
    // Opcode 0001011 (custom-0, RISC-V Unprivileged ISA 20191213, table 24.1) has no class in the demo.
    const { run, ending } = runToEnd(planOf(sequencerDemo()), programOf([ins('addi', { rd: 1, rs1: 0, imm: 1 }), 0x0000000b, ...exitWords()]), { reference: true });
    expect(ending?.kind).toBe('stopped');
    if (ending?.kind !== 'stopped') return;
    expect(ending.stop).toMatchObject({ kind: 'illegal-instruction', pc: 0x1004, word: 0x0000000b, why: 'no-class', message: 'illegal instruction (the table has no class for it): the fill word ran until the sequencer `seq` counted on to step 0' });
    expect(run.sim.instructionsRetired).toBe(1);
  });
});

describe('a divergence report on a sequencer machine', () => {
  it('lists the steps the instruction ran: a jump over step 3 leaves it out', () => {
    // OP jumps from step 2 over a step 3 to step 4, which always adds: SUB then differs from the reference.
    const text = sequencerDemo().replace(
      '  2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n',
      '  2: seqop=load, next=4\n  3: pc.inc\n  4: x.rs1.oe, x.rs2.oe, alu.fn=add, alu.oe, x.rd.ck, pc.inc, seqop=clear\n',
    );
    expect(text).toContain('next=4');
    const words = [ins('addi', { rd: 1, rs1: 0, imm: 9 }), ins('add', { rd: 2, rs1: 1, rs2: 1 }), ins('sub', { rd: 3, rs1: 1, rs2: 1 }), ...exitWords()];
    const { ending } = runToEnd(planOf(text), programOf(words), { reference: true });
    expect(ending?.kind).toBe('divergence');
    if (ending?.kind !== 'divergence') return;
    expect(ending.report.instruction.pc).toBe(0x1008);
    expect(ending.report.retiredBefore).toBe(2);
    expect(ending.report.steps.map((s) => s.step)).toEqual([0, 1, 2, 4]);
  });
});

describe('SLLI as a loop of one-bit shifts counted down by a loop counter', () => {
  it('checks clean: the walk stops at the loop step, which either jumps back or ends', () => {
    expect(analyse(shiftLoopDemo()).diagnostics).toEqual([]);
  });

  it('shifts by 0, 1, 5 and 31 in lock-step with the reference; each shift takes 5 + shamt steps', () => {
    const plan = planOf(shiftLoopDemo());
    const { run, ending } = runToEnd(plan, programOf(shiftProgram()), { reference: true });
    expect(ending).toEqual({ kind: 'exit', exitCode: 8, status: 8 });
    checkShifts(run.sim.regs);
    // OP-IMM: four one-step instructions (3 steps each), and each slli: steps 0..3, shamt loop steps, the last step 4.
    const opImm = plan.machine.classes.findIndex((c) => c.name === 'OP-IMM');
    expect(run.sim.classInstructions[opImm]).toBe(8);
    expect(run.sim.classSteps[opImm]).toBe(3 * 4 + (5 + 0) + (5 + 1) + (5 + 5) + (5 + 31));
  });

  it('`wait` (hold the step) in place of the jump back to the same step runs the same', () => {
    const waiting = shiftLoopDemo().replace('seqop=load, next=4', 'wait');
    expect(analyse(waiting).diagnostics).toEqual([]);
    const words = assemble([ins('addi', { rd: 1, rs1: 0, imm: 5 }), ins('slli', { rd: 10, rs1: 1, imm: 3 }), ...exitWords()]);
    const { run, ending } = runToEnd(planOf(waiting), programOf(words), { reference: true });
    expect(ending).toEqual({ kind: 'exit', exitCode: 40, status: 40 });
    const opImm = run.plan.machine.classes.findIndex((c) => c.name === 'OP-IMM');
    expect(run.sim.classSteps[opImm]).toBe(3 * 2 + 5 + 3);
  });

  it('written with the step sugar (`goto 4`, `end`) it is the same machine: identical images, same run', () => {
    const explicit = shiftLoopDemo();
    const sugared = explicit.replace('seqop=load, next=4', 'goto 4').replaceAll('seqop=clear', 'end');
    expect(sugared).not.toContain('seqop=');
    expect(analyse(sugared).diagnostics).toEqual([]);
    const images = (text: string) => [...planOf(text).encoded.stores[0].words];
    expect(images(sugared)).toEqual(images(explicit));
    const words = assemble([ins('addi', { rd: 1, rs1: 0, imm: 7 }), ins('slli', { rd: 10, rs1: 1, imm: 2 }), ...exitWords()]);
    expect(runToEnd(planOf(sugared), programOf(words), { reference: true }).ending).toEqual({ kind: 'exit', exitCode: 28, status: 28 });
  });
});
