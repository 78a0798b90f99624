// The symbolic executor runs every part from its kind's definition, without a solver: on the
// demo and on each example with kinds of its own (examples/*.pwt), every path of every RV32I
// instruction reaches an end, a trap or a fault, so nothing is left "not proved"; the
// obligations are written with the names the definitions give (no kind is looked up by name).
// A fixed-register strobe `x[n]` runs through the register file's numbered ports (`xout[n]`,
// `xin[n]`) like any other port. Which instructions are RV32I: the
// RISC-V Unprivileged ISA 20191213, chapter 24 listing, via isa/rv32i.ts. The verdicts
// themselves are decided by Debian's z3 in tests/outside/prove-z3.test.ts.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { RV32I_INSTRUCTIONS, instructionByMnemonic } from '../../server/src/core/isa/rv32i';
import { cannotProve, obligationsOf, proofPlan } from '../../server/src/core/prove';
import { REPO, demoWith } from '../sim/support';

function planOf(text: string) {
  const analysis = analyse(text);
  expect(analysis.counts.error, analysis.diagnostics.map((d) => d.message).join('\n')).toBe(0);
  const built = proofPlan(analysis.machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  return built.plan;
}

const EXAMPLES = ['halyard-32', 'gantry-32', 'trestle-32', 'capstan-32'];

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

  it('keeps the prover free of kind names: prove/ asks the definitions, not the library by name', () => {
    for (const file of ['definedParts.ts', 'execute.ts', 'prove.ts', 'symbolicExpr.ts']) {
      const source = readFileSync(join(REPO, 'server/src/core/prove', file), 'utf8');
      expect(source, file).not.toMatch(/libraryKind\(|kind\('|\bD_ALU\b|\bE_COMPARE\b|\baluOperations\b|\bmemorySizes\b/);
    }
  });
});
