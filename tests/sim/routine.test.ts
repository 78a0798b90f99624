// The shift loop of examples/winch-32.pwt, written once as a routine that OP-IMM calls from
// step 2 (coming back to step 3) and OP from step 3 (back to step 4): a hand-assembled program
// runs in lock-step with the RV32I reference interpreter (held to qemu-riscv32 in tests/outside;
// shift results per the RISC-V Unprivileged ISA 20191213, 2.4), each shift taking the steps the
// table's formula says (5 + shamt, 6 + x[rs2][4:0]); and the VCD trace, read by the npm package
// vcd-parser (IEEE 1364 clause 18), shows the sequencer's return register holding the step each
// caller comes back to while the routine runs (step 8), as the library's callseq defines.
import { createRequire } from 'node:module';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { VcdTrace } from '../../server/src/core/sim/vcd';
import { REPO, assemble, exitWords, ins, planOf, programOf } from './support';

interface VcdSignal {
  name: string;
  size: number;
  wave: [string, string][];
}
const VCDParser = createRequire(import.meta.url)('vcd-parser') as { parse(text: string): Promise<{ signal: VcdSignal[] }> };
const TEXT = readFileSync(join(REPO, 'examples', 'winch-32.pwt'), 'utf8');

const words = assemble([
  ins('addi', { rd: 5, rs1: 0, imm: -3 }), // 0xfffffffd
  ins('slli', { rd: 6, rs1: 5, imm: 3 }),
  ins('addi', { rd: 7, rs1: 0, imm: 34 }), // only the low five bits count: 2
  ins('sra', { rd: 8, rs1: 5, rs2: 7 }),
  ins('add', { rd: 10, rs1: 0, rs2: 0 }),
  ...exitWords(),
]);

describe('the shift routine of winch-32', () => {
  const plan = planOf(TEXT);

  it('runs in lock-step with the reference, each shift in the formula\'s steps', () => {
    const run = new ProgramRun(plan, programOf(words), { reference: true });
    const steps: number[] = [];
    let ending = null;
    for (let i = 0; i < 100 && !ending; i++) {
      const before = run.sim.steps;
      ending = run.advance(100_000, true);
      if (!ending) steps.push(run.sim.steps - before);
    }
    expect(ending).toMatchObject({ kind: 'exit' });
    // addi 3, slli by 3: 5 + 3, addi 3, sra by 34 & 31 = 2: 6 + 2, add 3.
    expect(steps.slice(0, 5)).toEqual([3, 8, 3, 8, 3]);
    expect(run.sim.regs[6] >>> 0).toBe(0xffffffe8);
    expect(run.sim.regs[8] >>> 0).toBe(0xffffffff);
  });

  it('the trace shows the return register holding each caller\'s next step while the routine runs', async () => {
    const run = new ProgramRun(plan, programOf(words), { reference: false });
    const trace = new VcdTrace(run.sim, { maxSteps: 200, date: 'test', version: 'test' });
    run.sim.observer = trace.observe;
    run.advance(10_000);
    const vcd = await VCDParser.parse(trace.text());
    const signal = (name: string) => vcd.signal.find((s) => s.name === name || s.name.endsWith(`.${name}`))!;
    const at = (s: VcdSignal, t: number) => {
      let v = '';
      for (const [time, value] of s.wave) if (Number(time) <= t) v = value;
      return parseInt(v, 2);
    };
    const step = signal('step');
    const ret = signal('seq_r');
    expect(ret, `the return register is traced: ${vcd.signal.map((s) => s.name).join(' ')}`).toBeDefined();
    const end = Math.max(...step.wave.map(([t]) => Number(t)));
    const inRoutine: number[] = [];
    for (let t = 0; t <= end; t++) if (at(step, t) === 8) inRoutine.push(at(ret, t));
    // slli: 3 loop steps + the exit word, all with 3 saved; sra: 2 + 1 with 4 saved.
    expect(inRoutine).toEqual([3, 3, 3, 3, 4, 4, 4]);
  });
});
