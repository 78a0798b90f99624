// The standard library's settings the demo does not use, run from their definitions (the
// simulator's only path): a register file whose x0 is stored or guarded, a counter counting by
// an odd increment with bit 0 kept or forced to 0, a register with a reset value. A
// hand-assembled program runs in lock-step with the RV32I reference interpreter
// (isa/interp.ts, which tests/outside/ holds equal to qemu-riscv32). Where a setting keeps
// RV32I's meaning the run must end without a difference; where it breaks it (a stored x0, a pc
// that does not count by 4), lock-step must report the difference at the first instruction
// that shows it. Meanings: x0 reads zero (RISC-V Unprivileged ISA 20191213, section 2.1),
// SLT/SLTU (2.4), branches and jumps (2.5), loads and stores (2.6).
import { describe, expect, it } from 'vitest';
import { BusSimulator } from '../../server/src/core/sim/simulator';
import { DEMO_TEXT, assemble, exitWords, ins, planOf, programOf, runToEnd, toLabel } from './support';

/** Writes to x0 through rd, unsigned and signed compares, a loop, a store and loads of every size, a jump. */
const PROGRAM = assemble([
  ins('addi', { rd: 0, rs1: 0, imm: 5 }),
  ins('addi', { rd: 1, rs1: 0, imm: -3 }),
  ins('addi', { rd: 2, rs1: 0, imm: 7 }),
  ins('sltu', { rd: 3, rs1: 1, rs2: 2 }),
  ins('slt', { rd: 4, rs1: 1, rs2: 2 }),
  ins('add', { rd: 5, rs1: 0, rs2: 2 }),
  ins('lui', { rd: 6, imm: 0x2000 << 12 }),
  ins('sw', { rs1: 6, rs2: 1, imm: 0 }),
  ins('lb', { rd: 7, rs1: 6, imm: 1 }),
  ins('lhu', { rd: 8, rs1: 6, imm: 2 }),
  ins('sh', { rs1: 6, rs2: 2, imm: 6 }),
  ins('lw', { rd: 9, rs1: 6, imm: 4 }),
  { label: 'loop' },
  ins('addi', { rd: 2, rs1: 2, imm: -1 }),
  toLabel('bne', 'loop', { rs1: 2, rs2: 0 }),
  ins('jal', { rd: 10, imm: 8 }),
  ins('addi', { rd: 11, rs1: 0, imm: 1 }),
  ins('addi', { rd: 10, rs1: 0, imm: 0 }),
  ...exitWords(),
]);

function demoWith(from: string, to: string): string {
  expect(DEMO_TEXT.indexOf(from)).toBeGreaterThanOrEqual(0);
  return DEMO_TEXT.replace(from, to);
}

function lockStep(text: string) {
  const { run, ending } = runToEnd(planOf(text), programOf(PROGRAM), { reference: true });
  return { run, ending };
}

describe('library settings from their definitions, in lock-step with the RV32I reference', () => {
  it.each([
    ['the demo as it stands', 'x0=hardwired', 'x0=hardwired'],
    ['x0 guarded (its clock blocked when rd = 0)', 'x0=hardwired', 'x0=guarded'],
  ])('%s: no difference, exit code 0, x0 still 0', (_name, from, to) => {
    const { run, ending } = lockStep(demoWith(from, to));
    expect(ending).toEqual({ kind: 'exit', exitCode: 0, status: 0 });
    expect(run.sim.regs[0]).toBe(0);
    // sltu x3 = (-3 <u 7) = 0, slt x4 = (-3 < 7) = 1 (section 2.4); the loop counted x2 down to 0.
    expect([run.sim.regs[3], run.sim.regs[4], run.sim.regs[2]]).toEqual([0, 1, 0]);
  });

  it('x0 stored: the first instruction leaves 5 in x0, which lock-step reports as a difference in x0', () => {
    const { run, ending } = lockStep(demoWith('x0=hardwired', 'x0=stored'));
    expect(ending?.kind).toBe('divergence');
    if (ending?.kind !== 'divergence') return;
    expect(ending.report.instruction.mnemonic).toBe('addi');
    expect(ending.report.differences.map((d) => (d.what === 'register' ? `x${d.register}` : d.what))).toEqual(['x0']);
    expect(run.sim.regs[0]).toBe(5);
    expect(run.sim.plan.x0Stored).toBe(true);
  });

  it('the plan knows which x0 an instruction can write: stored yes, hardwired and guarded no', () => {
    expect(planOf(DEMO_TEXT).x0Stored).toBe(false);
    expect(planOf(demoWith('x0=hardwired', 'x0=guarded')).x0Stored).toBe(false);
    expect(planOf(demoWith('x0=hardwired', 'x0=stored')).x0Stored).toBe(true);
  });

  it.each([
    ['bit0=zero', (entry: number) => (entry + 3) & ~1],
    ['bit0=kept', (entry: number) => entry + 3],
  ])('pc counting by 3 with %s: the pc after the first instruction, and lock-step reports the pc', (bit0, expected) => {
    const text = demoWith('inc=4 bit0=zero', `inc=3 ${bit0}`);
    const program = programOf(PROGRAM);
    const sim = new BusSimulator(planOf(text), program.memory.clone(), program.entry);
    expect(sim.run(100, true).kind).toBe('retired');
    expect(sim.pc).toBe(expected(program.entry));
    const { ending } = lockStep(text);
    expect(ending?.kind).toBe('divergence');
  });

  it('a register with a reset value holds it after reset', () => {
    const text = demoWith('part t    register 32', 'part t    register 32 reset=0x8000000f');
    const plan = planOf(text);
    const program = programOf(PROGRAM);
    const sim = new BusSimulator(plan, program.memory.clone(), program.entry);
    expect(sim.partValue[plan.partIndex.get('t')!] >>> 0).toBe(0x8000000f);
    expect(lockStep(text).ending).toEqual({ kind: 'exit', exitCode: 0, status: 0 });
  });

  it('every part of the demo runs from its kind definition: every driver and edge action is a port of one', () => {
    const plan = planOf(DEMO_TEXT);
    expect(plan.custom.runtimes.map((r) => r.part.name)).toEqual([...plan.machine.parts.keys()]);
    const code = plan.microOps.code.data;
    for (const info of plan.microOps.info) {
      let p = info.base + 5;
      // D_CUSTOM 1 and E_CUSTOM 1 (sim/microops.ts); the demo's words have no fault entries.
      for (let k = 0; k < info.drivers.length; k++, p += 5) expect(code[p], info.drivers[k].strobe).toBe(1);
      p++;
      for (let k = 0; k < info.edges.length; k++, p += 5) expect(code[p], info.edges[k].strobe).toBe(1);
    }
  });
});
