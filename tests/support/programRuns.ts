// What the outside tests of whole machines share: a CLI run compared with qemu-riscv32's run of
// the same program, and the RV32I instructions a set of programs retires through a table.
import { readFileSync } from 'node:fs';
import { expect } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import type { SimPlan } from '../../server/src/core/sim/plan';
import { figuresOf } from '../../server/src/core/sim/summary';
import { type QemuRun, qemuStatus } from '../isa/support/riscv-tools';

export interface CliRun {
  stdout: Buffer;
  stderr: string;
  status: number | null;
}

/** Same stdout and exit status as qemu, the program's stderr first on ours, no divergence or fault. */
export function expectSameAsQemu(ours: CliRun, qemu: QemuRun): void {
  expect(ours.stdout.toString('latin1')).toBe(qemu.stdout.toString('latin1'));
  expect(ours.status).toBe(qemuStatus(qemu));
  expect(ours.stderr.startsWith(qemu.stderr.toString('latin1'))).toBe(true);
  expect(ours.stderr).not.toContain('DIVERGENCE');
  expect(ours.stderr).not.toContain('MACHINE FAULT');
}

/** How often each mnemonic retired when every program ran to its end (exit or ebreak) through the plan. */
export function retiredMnemonics(plan: SimPlan, elfPaths: string[]): Map<string, number> {
  const total = new Map<string, number>();
  for (const elfPath of elfPaths) {
    const loaded = loadProgram(new Uint8Array(readFileSync(elfPath)));
    if (!loaded.ok) throw new Error(loaded.error);
    const run = new ProgramRun(plan, loaded.program);
    while (!run.advance(10_000_000));
    expect(['exit', 'ebreak']).toContain(run.ending?.kind);
    for (const [mnemonic, count] of figuresOf(run.sim).mnemonics) total.set(mnemonic, (total.get(mnemonic) ?? 0) + count);
  }
  return total;
}
