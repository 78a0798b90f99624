// A prover's counterexample run as a program: the instruction at its pc, the memory bytes it
// reads, the registers set alike in the simulator and the reference interpreter, then run in
// lock-step, so a real divergence shows as one. Not a test file itself.
import { SparseMemory } from '../../server/src/core/isa/memory';
import type { Counterexample } from '../../server/src/core/prove';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import type { SimPlan } from '../../server/src/core/sim/plan';

export function replay(plan: SimPlan, c: Counterexample) {
  const memory = new SparseMemory();
  for (const m of c.memory) memory.writeBytes(m.address, Uint8Array.of(m.value));
  memory.store32(c.pc, c.instruction);
  const run = new ProgramRun(plan, { memory, entry: c.pc, warnings: [] });
  for (let r = 1; r < 32; r++) {
    const v = c.registers.find((x) => x.index === r)?.value ?? 0;
    run.sim.regs[r] = v | 0;
    run.reference!.x[r] = v | 0;
  }
  return run.advance(10_000);
}
