// The compiled stepping code (sim/compile.ts) against the interpreter (sim/simulator.ts), which
// defines what a step does: a long loop over most instruction kinds must end in the same state on
// both, and a fault that first happens late, in a word the compiled chains meet only then, must
// be reported identically (the compiled code hands the step back to the interpreter).
import { describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { figuresOf } from '../../server/src/core/sim/summary';
import { DEMO_TEXT, assemble, demoWith, exitWords, ins, planOf, programOf, toLabel } from './support';

const demo = planOf(DEMO_TEXT);

/** A loop over most instruction kinds (`iterations` a multiple of 16); `tail` runs after it, before the exit. */
function loopProgram(iterations: number, tail: number[] = []): number[] {
  return assemble([
    ins('addi', { rd: 5, rs1: 0, imm: 0 }),
    ins('addi', { rd: 6, rs1: 0, imm: iterations / 16 }),
    ins('slli', { rd: 6, rs1: 6, imm: 4 }),
    ins('lui', { rd: 7, imm: 0x3000 }),
    ins('addi', { rd: 8, rs1: 0, imm: 1 }),
    { label: 'loop' },
    ins('add', { rd: 9, rs1: 5, rs2: 8 }),
    ins('xor', { rd: 8, rs1: 8, rs2: 9 }),
    ins('slli', { rd: 10, rs1: 8, imm: 3 }),
    ins('srai', { rd: 11, rs1: 10, imm: 2 }),
    ins('sltu', { rd: 12, rs1: 11, rs2: 8 }),
    ins('sub', { rd: 8, rs1: 8, rs2: 12 }),
    ins('andi', { rd: 13, rs1: 5, imm: 63 }),
    ins('add', { rd: 14, rs1: 7, rs2: 13 }),
    ins('sb', { rs1: 14, rs2: 8, imm: 0 }),
    ins('lbu', { rd: 15, rs1: 14, imm: 0 }),
    ins('sh', { rs1: 7, rs2: 9, imm: 64 }),
    ins('lh', { rd: 16, rs1: 7, imm: 64 }),
    ins('add', { rd: 8, rs1: 8, rs2: 15 }),
    ins('or', { rd: 8, rs1: 8, rs2: 16 }),
    toLabel('jal', 'helper', { rd: 1 }),
    ins('addi', { rd: 5, rs1: 5, imm: 1 }),
    toLabel('blt', 'loop', { rs1: 5, rs2: 6 }),
    ...tail,
    ins('andi', { rd: 10, rs1: 8, imm: 0xff }),
    ...exitWords(),
    { label: 'helper' },
    ins('sltiu', { rd: 17, rs1: 8, imm: 100 }),
    ins('sw', { rs1: 7, rs2: 17, imm: 128 }),
    ins('jalr', { rd: 0, rs1: 1, imm: 0 }),
  ]);
}

function finalState(run: ProgramRun) {
  const sim = run.sim;
  const figures = figuresOf(sim);
  return {
    ending: run.ending,
    steps: sim.steps,
    instructions: sim.instructionsRetired,
    regs: [...sim.regs.subarray(0, 32)],
    pc: sim.pc,
    memory: [...sim.memory.readBytes(0x3000, 160)],
    classes: figures.classes,
    mnemonics: [...figures.mnemonics],
    lastStep: sim.step,
  };
}

/** How much of a run the compiled code did, in how many distinct chains of steps. */
function engineOf(run: ProgramRun) {
  return { compiledShare: run.sim.compiledSteps / run.sim.steps, chains: run.sim.compiledChains };
}

function runBoth(text: string, words: number[], reference: boolean) {
  const plan = text === DEMO_TEXT ? demo : planOf(text);
  const runs = [true, false].map((compiled) => {
    const run = new ProgramRun(plan, programOf(words), { reference, compiled });
    while (!run.advance(1_000_000));
    return run;
  });
  // The interpreter-only run must not have used compiled code; the other mostly did.
  expect(engineOf(runs[1])).toEqual({ compiledShare: 0, chains: 0 });
  return [finalState(runs[0]), finalState(runs[1]), engineOf(runs[0])] as const;
}

describe('compiled stepping against the interpreter', () => {
  it('a long loop ends in the same state, step for step', () => {
    const [compiled, interpreted, engine] = runBoth(DEMO_TEXT, loopProgram(20_000), false);
    expect(compiled.ending?.kind).toBe('exit');
    expect(compiled.steps).toBeGreaterThan(1_000_000);
    expect(engine.compiledShare).toBeGreaterThan(0.99);
    expect(engine.chains).toBeGreaterThan(10);
    expect(compiled).toEqual(interpreted);
  }, 120_000);

  it('in lock-step with the reference, the loop runs without a difference', () => {
    const [compiled, , engine] = runBoth(DEMO_TEXT, loopProgram(3_200), true);
    expect(compiled.ending?.kind).toBe('exit');
    expect(engine.compiledShare).toBeGreaterThan(0.99);
  }, 120_000);

  it('a fault late in the run (a floating bus loaded) is reported the same way by both', () => {
    // AUIPC without alu.oe: x.rd.ck loads the floating result bus. It runs only after the loop.
    const text = demoWith('2: pc.oe, imm.fmt=u, imm.oe, alu.fn=add, alu.oe, x.rd.ck, pc.inc, done', '2: pc.oe, imm.fmt=u, imm.oe, alu.fn=add, x.rd.ck, pc.inc, done');
    const [compiled, interpreted, engine] = runBoth(text, loopProgram(20_000, [ins('auipc', { rd: 20, imm: 0x1000 })]), false);
    expect(engine.chains).toBeGreaterThan(10);
    expect(compiled.ending?.kind).toBe('fault');
    if (compiled.ending?.kind !== 'fault') return;
    expect(compiled.ending.report.fault).toEqual({ kind: 'undefined-value', strobe: 'x.rd.ck', bus: 'result', why: 'nothing drives `result` in this step and it has no keepers, so its lines float' });
    expect(compiled.ending.report.instruction.mnemonic).toBe('auipc');
    expect(compiled).toEqual(interpreted);
  }, 120_000);

  it('contention in a word that first runs late is reported the same way by both', () => {
    const text = demoWith('2: pc.inc, done\n\nclass SYSTEM', '2: pc.oe, x.rs1.oe, pc.inc, done\n\nclass SYSTEM');
    const [compiled, interpreted, engine] = runBoth(text, loopProgram(20_000, [ins('fence')]), false);
    expect(engine.chains).toBeGreaterThan(10);
    if (compiled.ending?.kind !== 'fault' || compiled.ending.report.fault?.kind !== 'contention') throw new Error('expected contention');
    expect(compiled.ending.report.fault.buses.map((b) => b.drivers.map((d) => d.strobe).sort())).toEqual([['pc.oe', 'x.rs1.oe']]);
    expect(compiled).toEqual(interpreted);
  }, 120_000);
});
