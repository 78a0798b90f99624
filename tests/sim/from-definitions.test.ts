// The standard library's parts run from their definitions (plan option `fromDefinitions`) against
// the built-in operations, on settings the demo does not use: a register file whose x0 is stored
// or guarded, a counter counting by an odd increment with bit 0 kept or forced to 0, registers
// with reset values. Both machines run a hand-assembled program one step at a time and must hold
// the same state after every step (tests/outside/sim-from-definitions.test.ts does the same on
// the compiled test programs with the demo as it stands). What the built-in operations do is
// what tests/outside/sim-programs.test.ts holds equal to qemu-riscv32; the meanings: x0 (RISC-V
// Unprivileged ISA 20191213, section 2.1), SLT/SLTU (2.4), branches (2.5), loads and stores (2.6).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { SimPlan } from '../../server/src/core/sim/plan';
import { BusSimulator } from '../../server/src/core/sim/simulator';
import { DEMO_TEXT, assemble, exitWords, ins, programOf, runSideBySide, toLabel } from './support';

/** Writes to x0 through rd and the environment, unsigned and signed compares, a loop, a store and loads of every size. */
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

function plansOf(text: string): [SimPlan, SimPlan] {
  const machine = analyse(text).machine;
  const a = SimPlan.build(machine);
  const b = SimPlan.build(machine, { fromDefinitions: true });
  if (!a.ok || !b.ok) throw new Error('the table does not simulate');
  expect(b.plan.custom.builtIn).toEqual([]);
  return [a.plan, b.plan];
}

const VARIANTS: [string, string, string][] = [
  ['the demo as it stands', 'x0=hardwired', 'x0=hardwired'],
  ['x0 stored', 'x0=hardwired', 'x0=stored'],
  ['x0 guarded', 'x0=hardwired', 'x0=guarded'],
  ['pc counting by 3, bit 0 forced to 0', 'inc=4 bit0=zero', 'inc=3 bit0=zero'],
  ['pc counting by 3, bit 0 kept', 'inc=4 bit0=zero', 'inc=3 bit0=kept'],
  ['registers with reset values', 'part t    register 32', 'part t    register 32 reset=0x8000000f'],
];

describe('library parts from their definitions step for step like the built-in operations', () => {
  it.each(VARIANTS)('%s', (_name, from, to) => {
    const at = DEMO_TEXT.indexOf(from);
    expect(at).toBeGreaterThanOrEqual(0);
    const [builtIn, defined] = plansOf(DEMO_TEXT.slice(0, at) + to + DEMO_TEXT.slice(at + from.length));
    const program = programOf(PROGRAM);
    const one = new BusSimulator(builtIn, program.memory.clone(), program.entry, { compiled: false });
    // Both on the interpreter: the compiled steps keep a bus without keepers in a local, so its
    // value is not in the state compared here (tests/sim/compiled.test.ts compares those runs).
    const two = new BusSimulator(defined, program.memory.clone(), program.entry, { compiled: false });
    const steps = runSideBySide(one, two, 5_000);
    expect(one.stopReason).not.toBeNull();
    // With an odd increment the second fetch reads a misaligned word the table has no class for.
    expect(steps).toBeGreaterThan(10);
  });

  it('a counter counting by an odd increment keeps bit 0 at 0 with bit0=zero, as the built-in counter does', () => {
    const [, defined] = plansOf(DEMO_TEXT.replace('inc=4 bit0=zero', 'inc=3 bit0=zero'));
    const program = programOf(PROGRAM);
    const sim = new BusSimulator(defined, program.memory.clone(), program.entry);
    // The first instruction (addi) counts the pc once.
    expect(sim.run(100, true).kind).toBe('retired');
    expect(sim.pc).toBe((program.entry + 3) & ~1);
  });
});
