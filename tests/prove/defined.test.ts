// The symbolic executor runs every part from its kind's definition, without a solver: on the
// demo and on each example with kinds of its own (examples/*.pwt), every path of every RV32I
// instruction reaches an end, a trap or a fault, so nothing is left "not proved"; the
// obligations are written with the names the definitions give (no kind is looked up by name).
// A fixed-register strobe `x[n]` runs through the register file's numbered ports (`xout[n]`,
// `xin[n]`) like any other port. Which instructions are RV32I: the
// RISC-V Unprivileged ISA 20191213, chapter 24 listing, via isa/rv32i.ts. The verdicts
// themselves are decided by Debian's z3 in tests/outside/prove-z3.test.ts. On the sequencer
// machines (windlass-32, winch-32) the step is the sequencer's state: a shift loop is one path per
// shift amount (RV32I shifts by a 5-bit amount, spec 2.4: 32 values), and the walk's bounds of
// steps and paths leave what they cut off undecided, never proved.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { RV32I_INSTRUCTIONS, instructionByMnemonic } from '../../server/src/core/isa/rv32i';
import { WALK_LIMITS, cannotProve, obligationsOf, proofPlan } from '../../server/src/core/prove';
import { REPO, demoWith } from '../sim/support';

function planOf(text: string) {
  const analysis = analyse(text);
  expect(analysis.counts.error, analysis.diagnostics.map((d) => d.message).join('\n')).toBe(0);
  const built = proofPlan(analysis.machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  return built.plan;
}

const EXAMPLES = ['halyard-32', 'gantry-32', 'trestle-32', 'capstan-32', 'windlass-32', 'winch-32'];

describe('the symbolic executor over part definitions', () => {
  for (const name of EXAMPLES) {
    it(`runs every instruction of ${name} to its end from the definitions`, () => {
      const plan = planOf(readFileSync(join(REPO, 'examples', `${name}.pwt`), 'utf8'));
      expect(cannotProve(plan)).toBeUndefined();
      // Every part runs from its definition (the simulator's only path).
      expect(plan.custom.runtimes.map((r) => r.part.name)).toEqual([...plan.machine.parts.keys()]);
      for (const spec of RV32I_INSTRUCTIONS) {
        const { obligations, settled } = obligationsOf(plan, spec);
        expect(settled?.kind ?? 'decide', `${name} ${spec.mnemonic}: ${JSON.stringify(settled)}`).not.toBe('unknown');
        if (spec.mnemonic === 'ecall' || spec.mnemonic === 'ebreak') expect(settled?.kind).toBe('proved');
        else expect(obligations.length, `${name} ${spec.mnemonic}`).toBeGreaterThan(0);
        for (const o of obligations) expect(o.script).toContain('(set-logic QF_BV)');
      }
    }, 120_000);
  }

  it('reads the byte-serial machine\'s carry flip-flop and the word memory\'s lanes from their definitions', () => {
    // capstan-32's add goes through its own 8-bit ALU four times with the carry state `c`;
    // trestle-32's store writes bytes of its own word memory under the lane enables `we`.
    const capstanText = readFileSync(join(REPO, 'examples', 'capstan-32.pwt'), 'utf8');
    const add = obligationsOf(planOf(capstanText), instructionByMnemonic('add')!).obligations;
    expect(add).toHaveLength(1);
    expect(add[0].description).toMatch(/steps 0,1,2,3,4,5,6 /);
    // The obligation is what the definition says: without the carry in, adc gives another script.
    const noCarry = capstanText.replace('adc: a + b + zext(c, 8),', 'adc: a + b,');
    expect(noCarry).not.toBe(capstanText);
    const changed = obligationsOf(planOf(noCarry), instructionByMnemonic('add')!).obligations;
    expect(changed).toHaveLength(1);
    expect(changed[0].script).not.toBe(add[0].script);
    // And the carry flip-flop's state before the instruction is not read by add, whose byte 0 adds without it.
    expect(add[0].script).not.toMatch(/alu8\.c\.before/);
    const trestle = planOf(readFileSync(join(REPO, 'examples', 'trestle-32.pwt'), 'utf8'));
    const sw = obligationsOf(trestle, instructionByMnemonic('sw')!).obligations;
    expect(sw.length).toBeGreaterThan(0);
    expect(sw.every((o) => /steps 0,1,2,3,4,5,6 /.test(o.description))).toBe(true);
  });

  it('runs a fixed-register strobe x[1] through the register file\'s numbered port: JAL gets obligations to decide', () => {
    // The demo with a fixed-register strobe `x[1]` in JAL's step 2 (a link register written directly).
    const text = demoWith('mem.size 24..26   sys.trap 27', 'mem.size 24..26   sys.trap 27   ra.ck 28')
      .replace('strobe done      end', 'strobe ra.ck     clock result -> x[1]   active high "x1 loads the result bus."\nstrobe done      end')
      .replace('2: pc.oe, four.oe, alu.fn=add, alu.oe, x.rd.ck\n  3: pc.oe, imm.fmt=j', '2: pc.oe, four.oe, alu.fn=add, alu.oe, ra.ck\n  3: pc.oe, imm.fmt=j');
    expect(text).toContain('alu.oe, ra.ck');
    const plan = planOf(text);
    expect(cannotProve(plan)).toBeUndefined();
    const jal = obligationsOf(plan, instructionByMnemonic('jal')!);
    expect(jal.settled).toBeUndefined();
    expect(jal.obligations.length).toBeGreaterThan(0);
    // The instructions that do not use it are decided as before.
    expect(obligationsOf(plan, instructionByMnemonic('lui')!).settled).toBeUndefined();
  });

  it('follows windlass-32\'s shift loop one path per shift amount: 32 paths, none cut off by the bounds', () => {
    const plan = planOf(readFileSync(join(REPO, 'examples', 'windlass-32.pwt'), 'utf8'));
    for (const mnemonic of ['slli', 'sll']) {
      const r = obligationsOf(plan, instructionByMnemonic(mnemonic)!);
      expect(r.settled).toBeUndefined();
      expect(r.bounded).toEqual([]);
      expect(r.obligations.map((o) => o.paths)).toEqual([32]);
      expect(r.unrolled).toEqual({ step: 3, times: 32 });
      // The longest path holds step 3 for 31 turns (amount 31); the shortest (amount 0) leaves the loop at once.
      expect(r.obligations[0].description).toMatch(/32 paths \(steps 0,1,2,3x32; \.\.\.; steps 0,1,2,3\)/);
    }
    // An instruction without the loop has one path, as on the implicit step counter.
    expect(obligationsOf(plan, instructionByMnemonic('add')!).obligations.map((o) => o.paths)).toEqual([1]);
  });

  it('leaves what the bounds cut off undecided: a path longer than the steps bound, an instruction with more paths than the paths bound', () => {
    const plan = planOf(readFileSync(join(REPO, 'examples', 'windlass-32.pwt'), 'utf8'));
    const slli = instructionByMnemonic('slli')!;
    // 20 steps: the fetch, the load and 16 turns of the loop; the path that goes on is stopped, for the solver to judge.
    const short = obligationsOf(plan, slli, undefined, { ...WALK_LIMITS, maxSteps: 20 });
    expect(short.settled).toBeUndefined();
    expect(short.bounded).toHaveLength(1);
    expect(short.bounded[0].why).toMatch(/did not end within 20 steps \(the prover's bound of steps per path; step 3 ran 17 times\)/);
    expect(short.bounded[0].script).toContain('(set-logic QF_BV)');
    const few = obligationsOf(plan, slli, undefined, { ...WALK_LIMITS, maxPaths: 8 });
    expect(few.settled?.kind).toBe('unknown');
    if (few.settled?.kind === 'unknown') expect(few.settled.reason).toMatch(/more than 8 paths/);
  });

  it('does not prove a return no call of the instruction saved: winch-32\'s OP-IMM jumping to its routine', () => {
    const text = readFileSync(join(REPO, 'examples', 'winch-32.pwt'), 'utf8').replace('imm.oe, cnt.ld, call 8', 'imm.oe, cnt.ld, goto 8');
    const analysis = analyse(text);
    expect(analysis.diagnostics.map((d) => d.code)).toContain('return-without-call');
    const built = proofPlan(analysis.machine);
    if (!built.ok) throw new Error(built.errors.join('\n'));
    const r = obligationsOf(built.plan, instructionByMnemonic('srli')!);
    expect(r.settled?.kind).toBe('unknown');
    if (r.settled?.kind === 'unknown') expect(r.settled.reason).toMatch(/step 8 returns to the step the return register `seq\.r` holds, which no call of this instruction saved/);
  });

  it('keeps the prover free of kind names: prove/ asks the definitions, not the library by name', () => {
    for (const file of ['definedParts.ts', 'execute.ts', 'prove.ts', 'symbolicExpr.ts']) {
      const source = readFileSync(join(REPO, 'server/src/core/prove', file), 'utf8');
      expect(source, file).not.toMatch(/libraryKind\(|kind\('|\bD_ALU\b|\bE_COMPARE\b|\baluOperations\b|\bmemorySizes\b/);
    }
  });
});
