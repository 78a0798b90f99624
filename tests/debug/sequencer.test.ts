// The debugger on a machine with a sequencer part (issue 15): stepping back an instruction goes
// to the start of the instruction even when a loop ran its steps several times (the step number
// then says nothing of how many steps the instruction has run). The program's expected values
// are RV32I's (RISC-V Unprivileged ISA 20191213, 2.4: SLLI shifts by imm[4:0]).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { DebugMachine } from '../../server/src/core/debug/machine';
import { StepLineIndex } from '../../server/src/core/debug/stepLines';
import { SimPlan } from '../../server/src/core/sim/plan';
import { exitWords, ins, programOf } from '../sim/support';
import { shiftLoopDemo } from '../support/sequencer';

describe('the debugger on a sequencer machine', () => {
  it('steps back an instruction from inside a shift loop to its step 0, then to the one before', () => {
    const analysis = analyse(shiftLoopDemo());
    const built = SimPlan.build(analysis.machine);
    if (!built.ok) throw new Error(built.errors.join('\n'));
    const words = [ins('addi', { rd: 1, rs1: 0, imm: 3 }), ins('slli', { rd: 2, rs1: 1, imm: 6 }), ...exitWords()];
    const dm = new DebugMachine(built.plan, programOf(words), { reference: true }, new StepLineIndex(built.plan, analysis.lines));
    // addi: 3 steps; slli: steps 0..3, then step 4 six times and once more: 11 steps. Stop 8 steps into it.
    for (let i = 0; i < 3 + 8; i++) expect(dm.stepMicrocycle().reason).toBe('step');
    expect(dm.sim.step).toBe(4);
    expect(dm.sim.instructionSteps).toBe(8);
    expect(dm.stepBackInstruction()).toEqual({ reason: 'step' });
    expect({ steps: dm.sim.steps, step: dm.sim.step, pc: dm.sim.pc, retired: dm.sim.instructionsRetired }).toEqual({ steps: 3, step: 0, pc: 0x1004, retired: 1 });
    expect(dm.stepBackInstruction()).toEqual({ reason: 'step' });
    expect({ steps: dm.sim.steps, step: dm.sim.step, pc: dm.sim.pc }).toEqual({ steps: 0, step: 0, pc: 0x1000 });
    // Forward again through the whole loop: x2 = 3 << 6.
    for (let i = 0; i < 3 + 11; i++) dm.stepMicrocycle();
    expect(dm.sim.instructionsRetired).toBe(2);
    expect(dm.sim.regs[2]).toBe(192);
    // At an instruction's start, back goes to the start of the one that retired last.
    expect(dm.stepBackInstruction()).toEqual({ reason: 'step' });
    expect({ steps: dm.sim.steps, pc: dm.sim.pc }).toEqual({ steps: 3, pc: 0x1004 });
  });
});
