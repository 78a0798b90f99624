// The shift loop of examples/windlass-32.pwt, a machine without a barrel shifter: SLL, SRL, SRA
// and their immediate forms shift one place per step while a loop counter counts down from the
// shift amount, so a shift by n takes 4 + n steps (two fetch steps, the step that loads the
// counter, n steps of the loop and the one that writes rd). Every shift of a hand-assembled
// program, for amounts 0..31, runs in lock-step with the RV32I reference interpreter
// (isa/interp.ts, held to qemu-riscv32 in tests/outside); its results follow the RISC-V
// Unprivileged ISA 20191213, section 2.4 (shifts use the low five bits of rs2 or the immediate,
// SRA fills with the sign bit). The step count of each instruction is the formula's.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { cycleCountsOf } from '../../server/src/core/flow/cycleCounts';
import { REPO, assemble, exitWords, ins, planOf, programOf } from './support';

const TEXT = readFileSync(join(REPO, 'examples', 'windlass-32.pwt'), 'utf8');

/** Every shift form by every amount, on a value with its sign bit set. */
function shifts(): { words: number[]; amounts: (number | undefined)[] } {
  const items: Parameters<typeof assemble>[0] = [ins('lui', { rd: 5, imm: 0x87654000 }), ins('addi', { rd: 5, rs1: 5, imm: 0x321 })];
  const amounts: (number | undefined)[] = [undefined, undefined];
  for (let n = 0; n < 32; n++) {
    items.push(ins('addi', { rd: 6, rs1: 0, imm: n + 32 })); // rs2 = n + 32: only its low five bits count
    amounts.push(undefined);
    for (const [mnemonic, register] of [['slli', false], ['srli', false], ['srai', false], ['sll', true], ['srl', true], ['sra', true]] as const) {
      items.push(register ? ins(mnemonic, { rd: 7, rs1: 5, rs2: 6 }) : ins(mnemonic, { rd: 7, rs1: 5, imm: n }));
      amounts.push(n);
      items.push(ins('xor', { rd: 8, rs1: 8, rs2: 7 }));
      amounts.push(undefined);
    }
  }
  items.push(ins('andi', { rd: 10, rs1: 8, imm: 0xff }), ...exitWords());
  return { words: assemble(items), amounts };
}

describe('the shift loop of windlass-32', () => {
  it('runs every shift by every amount in lock-step with the reference, each in 4 + n steps', () => {
    const plan = planOf(TEXT);
    const { words, amounts } = shifts();
    const run = new ProgramRun(plan, programOf(words), { reference: true });
    const measured: number[] = [];
    let ending = null;
    for (let i = 0; i < 10_000 && !ending; i++) {
      const before = run.sim.steps;
      ending = run.advance(100_000, true);
      if (!ending || ending.kind === 'exit') measured.push(run.sim.steps - before);
    }
    expect(ending).toMatchObject({ kind: 'exit' });
    for (let k = 0; k < amounts.length; k++) if (amounts[k] !== undefined) expect(measured[k], `instruction ${k}`).toBe(4 + amounts[k]!);
    expect(measured.filter((_, k) => amounts[k] !== undefined)).toHaveLength(32 * 6);
  });

  it('computes the shifts\' counts from the class flow as 4 + the shift amount: the measured 4 + n', () => {
    const classes = cycleCountsOf(planOf(TEXT).machine);
    for (const [className, mnemonics, formula] of [['OP-IMM', ['slli', 'srli', 'srai'], '4 + shamt'], ['OP', ['sll', 'srl', 'sra'], '4 + x[rs2][4:0]']] as const) {
      const cls = classes.find((c) => c.className === className)!;
      for (const m of mnemonics) expect(cls.instructions.find((i) => i.mnemonic === m), m).toMatchObject({ min: 4, loopSteps: [3], loopCount: { formula } });
      // The other instructions of the class do not loop: 3 steps.
      for (const i of cls.instructions.filter((i) => !(mnemonics as readonly string[]).includes(i.mnemonic!))) expect(i, i.mnemonic).toMatchObject({ min: 3, max: 3 });
      // The formula bounds the loop: 4 + 31 at the widest shift amount.
      expect([cls.loops, cls.max]).toEqual([false, 35]);
    }
  });
});
