// The loop formulas of examples/windlass-32.pwt (flow/loopBounds.ts: SLLI, SRLI, SRAI take
// 4 + shamt steps, SLL, SRL, SRA 4 + x[rs2][4:0]), of the same with a jump table, and of
// examples/winch-32.pwt, whose loop is a routine (5 + shamt, 6 + x[rs2][4:0]) against runs of a program built by Debian's
// riscv64-unknown-elf-gcc (package gcc-riscv64-unknown-elf): every shift form by every amount
// 0..31, the register forms with amounts whose upper bits are set too and with rs2 = x0. The
// assembler encodes each instruction (shamt into inst[24:20], rs2 into inst[24:20]), so the
// operand the formula reads comes from an outside encoder. The program runs through the table's
// encoded store in lock-step with the RV32I reference, and each retired shift's measured steps
// must be the formula at the instruction's actual operand: its word, and the registers as they
// were before it. The amounts the program was written with give the same (RISC-V Unprivileged
// ISA 20191213: 2.4.1, the shift amount is the lower 5 bits of the I-immediate; 2.4.2, the lower
// 5 bits of register rs2; 2.1, x0 reads 0). The program exits with a checksum of the shifted
// values, which must be qemu-riscv32's.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { cycleCountsOf } from '../../server/src/core/flow/cycleCounts';
import { loopStepsAt } from '../../server/src/core/flow/loopBounds';
import { matchInstruction } from '../../server/src/core/isa/rv32i';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import { figuresOf, formatFigures } from '../../server/src/core/sim/summary';
import { haveTools } from '../support/tools';
import { QEMU, qemuStatus, runQemu, scratchDir } from '../isa/support/riscv-tools';
import { COMMON_FLAGS, GCC, PROGRAMS_SOURCE_DIR } from '../programs/build.mjs';
import { planOf } from '../sim/support';
import { dispatchDemo } from '../support/sequencer';

const toolsPresent = haveTools([GCC], 'gcc-riscv64-unknown-elf') && haveTools([QEMU], 'qemu-user');
/**
 * The machines: windlass-32; the same with OP-IMM dispatched by a jump table; winch-32, whose
 * loop is a routine called from step 2 of OP-IMM (5 + n) and from step 3 of OP (6 + n).
 */
const MACHINES: [string, string, { imm: number; reg: number }][] = [
  ['windlass-32', readFileSync(join(__dirname, '../../examples/windlass-32.pwt'), 'utf8'), { imm: 4, reg: 4 }],
  ['windlass-32 with a jump table', dispatchDemo(), { imm: 4, reg: 4 }],
  ['winch-32 (the loop as a routine)', readFileSync(join(__dirname, '../../examples/winch-32.pwt'), 'utf8'), { imm: 5, reg: 6 }],
];
const SHIFTS = ['slli', 'srli', 'srai', 'sll', 'srl', 'sra'];

/** One shift of the program: what it is and the amount it was written with (the spec's shift amount). */
interface Written {
  mnemonic: string;
  amount: number;
}

/**
 * The program: x5 holds a value with its sign bit set; for each amount n every form shifts it,
 * the register forms by x6 = n with upper bits set (only the low five count) and once by x0;
 * every result is folded into x8, whose low byte is the exit code.
 */
function program(): { source: string; written: Written[] } {
  const lines = ['  .text', '  .globl _start', '_start:', '  li x5, 0x87654321', '  li x8, 0'];
  const written: Written[] = [];
  const fold = () => lines.push('  xor x8, x8, x7', '  slli x9, x8, 1', '  srli x8, x8, 31', '  or x8, x8, x9');
  for (let n = 0; n < 32; n++) {
    for (const m of ['slli', 'srli', 'srai']) {
      lines.push(`  ${m} x7, x5, ${n}`);
      written.push({ mnemonic: m, amount: n });
      fold();
      // The fold's own slli by 1 and srli by 31 are shifts too.
      written.push({ mnemonic: 'slli', amount: 1 }, { mnemonic: 'srli', amount: 31 });
    }
    // Upper bits of rs2 set: (n * 0x9e3779b9) with the low five bits replaced by n.
    const rs2 = ((Math.imul(n + 1, 0x9e3779b9) & ~31) | n) >>> 0;
    lines.push(`  li x6, ${rs2 | 0}`);
    for (const m of ['sll', 'srl', 'sra']) {
      lines.push(`  ${m} x7, x5, x6`);
      written.push({ mnemonic: m, amount: n });
      fold();
      written.push({ mnemonic: 'slli', amount: 1 }, { mnemonic: 'srli', amount: 31 });
    }
    lines.push('  addi x5, x5, 0x123');
  }
  for (const m of ['sll', 'srl', 'sra']) {
    lines.push(`  ${m} x7, x5, x0`);
    written.push({ mnemonic: m, amount: 0 });
    lines.push('  xor x8, x8, x7');
  }
  lines.push('  andi a0, x8, 0xff', '  li a7, 93', '  ecall', '');
  return { source: lines.join('\n'), written };
}

describe.skipIf(!toolsPresent).each(MACHINES)('%s: loop formulas against a gcc-built program of every shift by every amount', (_name, TEXT, base) => {
  const { source, written } = program();
  const baseOf = (mnemonic: string) => (mnemonic.endsWith('i') ? base.imm : base.reg);
  let elfPath = '';
  const plan = planOf(TEXT);
  const counts = cycleCountsOf(plan.machine);
  const formulaOf = (mnemonic: string) => counts.flatMap((c) => c.instructions).find((i) => i.mnemonic === mnemonic)?.loopCount;

  beforeAll(() => {
    const dir = scratchDir(`loop-formula-${base.imm}${base.reg}${TEXT.length}`);
    const sourcePath = join(dir, 'shifts.S');
    elfPath = join(dir, 'shifts.elf');
    writeFileSync(sourcePath, source);
    execFileSync(GCC, [...COMMON_FLAGS, '-T', join(PROGRAMS_SOURCE_DIR, 'link.ld'), sourcePath, '-o', elfPath], { stdio: ['ignore', 'pipe', 'pipe'] });
  }, 120_000);

  it('the table checks clean and every shift has a formula', () => {
    expect(analyse(TEXT).diagnostics).toEqual([]);
    for (const m of SHIFTS) expect(formulaOf(m)?.formula, m).toBe(m.endsWith('i') ? `${base.imm} + shamt` : `${base.reg} + x[rs2][4:0]`);
  });

  it('each retired shift takes the steps its formula gives at its operand, which is the base + the amount it was written with', () => {
    const loaded = loadProgram(new Uint8Array(readFileSync(elfPath)));
    if (!loaded.ok) throw new Error(loaded.error);
    const run = new ProgramRun(plan, loaded.program, { reference: true, loopFormulas: true });
    const sim = run.sim;
    const seen: { mnemonic: string; measured: number; formula: number }[] = [];
    for (let k = 0; k < 100_000 && !run.ending; k++) {
      const x = Array.from(sim.regs.subarray(0, 32));
      const before = sim.instructionsRetired;
      run.advance(100_000, true);
      if (sim.instructionsRetired === before) continue;
      const word = sim.lastRetiredWord;
      const mnemonic = matchInstruction(word)?.mnemonic ?? '(not RV32I)';
      if (!SHIFTS.includes(mnemonic)) continue;
      seen.push({ mnemonic, measured: sim.lastInstructionSteps, formula: loopStepsAt(formulaOf(mnemonic)!, word, x) });
    }
    expect(run.ending?.kind).toBe('exit');
    expect(seen.map((s) => s.mnemonic)).toEqual(written.map((w) => w.mnemonic));
    for (let k = 0; k < seen.length; k++) {
      expect([k, seen[k].mnemonic, seen[k].measured], `shift ${k}`).toEqual([k, written[k].mnemonic, seen[k].formula]);
      expect([k, seen[k].formula]).toEqual([k, baseOf(written[k].mnemonic) + written[k].amount]);
    }
    // Every form by every amount 0..31 is among them.
    for (const m of SHIFTS) expect(new Set(written.filter((w) => w.mnemonic === m).map((w) => w.amount)).size, m).toBe(32);
    // The run's own check (the summary's) agrees: no shift took other steps than its formula gives.
    const figures = figuresOf(sim, run.loopChecks);
    const checked = figures.classes.filter((c) => c.loopCheck);
    expect(checked.map((c) => c.className)).toEqual(['OP-IMM', 'OP']);
    expect(checked.reduce((n, c) => n + c.loopCheck!.instructions, 0)).toBe(seen.length);
    for (const c of checked) expect([c.className, c.loopCheck!.differing, c.loopCheck!.formulaSteps]).toEqual([c.className, 0, c.loopCheck!.measuredSteps]);
    expect(formatFigures(figures)).toContain(`SLLI..SRAI: ${base.imm} + shamt; by the formula `);
  }, 300_000);

  it('exits with qemu-riscv32\'s checksum of the shifted values', () => {
    const loaded = loadProgram(new Uint8Array(readFileSync(elfPath)));
    if (!loaded.ok) throw new Error(loaded.error);
    const run = new ProgramRun(plan, loaded.program, { reference: true });
    while (!run.advance(10_000_000));
    const qemu = runQemu(elfPath);
    expect(run.ending?.kind).toBe('exit');
    expect(run.ending?.kind === 'exit' ? run.ending.status : undefined).toBe(qemuStatus(qemu));
  }, 300_000);
});
