// The prover's term form against the project's own definitions, without a solver: every RV32I
// row of isa/semantics.ts evaluated symbolically and then on numbers (evalTerm) equals the
// reference evaluator (evaluateEffect) on random states; the SMT-LIB writer declares each
// variable once and shares repeated terms; the reader takes z3's model form (as z3 4.8 prints it,
// from memory of its output, checked against the real z3 in tests/outside/prove-z3.test.ts).
import { describe, expect, it } from 'vitest';
import { DEFINED_NAMES, SEMANTICS, SEMANTICS_INPUTS, effectOf, evaluateEffect } from '../../server/src/core/isa/semantics';
import { scopeOf, type NameInfo } from '../../server/src/core/parts/expr';
import { symbolic } from '../../server/src/core/prove/symbolicExpr';
import { Terms, evalTerm, type Term } from '../../server/src/core/prove/term';
import { readSolverOutput, smtScript } from '../../server/src/core/prove/smtlib';

function random32(seed: { s: number }): number {
  seed.s = (Math.imul(seed.s, 1103515245) + 12345) >>> 0;
  const hi = seed.s >>> 16;
  seed.s = (Math.imul(seed.s, 1103515245) + 12345) >>> 0;
  return ((hi << 16) | (seed.s >>> 16)) >>> 0;
}

describe('symbolic evaluation of the RV32I semantics', () => {
  it('agrees with the reference evaluator on every row, on random states', () => {
    const seed = { s: 7 };
    for (const row of SEMANTICS) {
      const effect = effectOf(row.mnemonic);
      for (let trial = 0; trial < 25; trial++) {
        const inputs = { pc: random32(seed) & ~3, ir: random32(seed), rs1v: random32(seed), rs2v: random32(seed) };
        const byte = (a: number) => (Math.imul(a >>> 0, 2654435761) >>> 24) & 0xff;
        const T = new Terms();
        const names = new Map<string, Term>([['pc', T.variable('pc', 32)], ['ir', T.variable('ir', 32)], ['rs1v', T.variable('rs1v', 32)], ['rs2v', T.variable('rs2v', 32)]]);
        const env = new Map<string, bigint>(Object.entries(inputs).map(([k, v]) => [k, BigInt(v >>> 0)]));
        // Memory reads become variables whose values the same byte function gives.
        let reads = 0;
        const known = new Map<string, NameInfo>(SEMANTICS_INPUTS);
        const element = (_m: string, index: Term) => {
          const v = T.variable(`m${reads++}`, 8);
          env.set(v.k === 'var' ? v.name : '', BigInt(byte(Number(evalTerm(index, env)))));
          return v;
        };
        const run = (e: Parameters<typeof symbolic>[1], w: number) => symbolic(T, e, scopeOf(known), { name: (n) => names.get(n)!, element }, w);
        for (const d of effect.definitions) {
          const w = DEFINED_NAMES.find((x) => x.name === d.name)!.width;
          names.set(d.name, run(d.expr, w));
          known.set(d.name, { width: w });
        }
        const expected = evaluateEffect(effect, { ...inputs, readByte: byte });
        for (const d of effect.definitions) expect(evalTerm(names.get(d.name)!, env), `${row.mnemonic} ${d.name}`).toBe(expected.defined.get(d.name));
        if (effect.nextPc) expect(evalTerm(run(effect.nextPc, 32), env), `${row.mnemonic} next pc`).toBe(expected.nextPc);
        if (effect.rd) expect(evalTerm(run(effect.rd, 32), env), `${row.mnemonic} rd`).toBe(expected.rd);
        if (effect.store) expect(evalTerm(run(effect.store.value, 8 * effect.store.size), env), `${row.mnemonic} store`).toBe(expected.store!.value);
      }
    }
  });
});

describe('terms', () => {
  it('fold the fetch: the bytes of the instruction read back at pc are the instruction', () => {
    const T = new Terms();
    const ir = T.concat([T.extract(T.variable('insn', 32), 31, 7), T.const(7, 0b0110011)]);
    const pc = T.variable('pc', 32);
    const bytes = [3, 2, 1, 0].map((k) => T.extract(ir, 8 * k + 7, 8 * k));
    expect(T.concat(bytes)).toBe(ir);
    expect(T.eq(T.add(pc, T.const(32, 1)), T.add(pc, T.const(32, 2)))).toBe(T.false);
    expect(T.extract(ir, 6, 0)).toBe(T.const(7, 0b0110011));
  });

  it('fold an aligned address plus a byte offset into its byte address, and compare concatenations piece by piece', () => {
    // Common practice, no source: {h, c1} + c2 = {h, c1 + c2} while c1 + c2 fits c1's bits.
    const T = new Terms();
    const h = T.variable('h', 30);
    const aligned = T.concat([h, T.const(2, 0)]);
    expect(T.add(aligned, T.const(32, 3))).toBe(T.concat([h, T.const(2, 3)]));
    expect(T.eq(T.add(aligned, T.const(32, 1)), T.concat([T.extract(aligned, 31, 2), T.const(2, 2)]))).toBe(T.false);
    expect(T.eq(T.add(aligned, T.const(32, 2)), T.concat([h, T.const(2, 2)]))).toBe(T.true);
    // A carry out of the low bits is not folded: the solver decides it.
    const sum = T.add(aligned, T.const(32, 4));
    expect(sum.k === 'op' && sum.op).toBe('bvadd');
    const env = new Map([['h', 0x3fffffffn]]);
    expect(evalTerm(sum, env)).toBe(0n);
    // The folded forms mean what the unfolded ones do on numbers.
    for (const v of [0n, 1n, 0x12345678n, 0x3fffffffn]) {
      const e = new Map([['h', v]]);
      expect(evalTerm(T.add(aligned, T.const(32, 3)), e)).toBe(((v << 2n) + 3n) & 0xffffffffn);
    }
  });

  it('are written as a QF_BV script with each variable declared once and shared terms defined once', () => {
    const T = new Terms();
    const a = T.variable('a', 32);
    const shared = T.add(a, T.variable('b', 32));
    const script = smtScript([T.eq(shared, T.const(32, 5)), T.compare('bvult', shared, T.const(32, 9))]);
    expect(script).toContain('(set-logic QF_BV)');
    expect(script.match(/declare-fun a /g)).toHaveLength(1);
    expect(script).toContain('(define-fun t0 () (_ BitVec 32) (bvadd a b))');
    expect(script.trim().endsWith('(get-model)')).toBe(true);
  });

  it('read a model back, quoted names and binary literals included', () => {
    const reply = readSolverOutput('sat\n(\n  (define-fun pc () (_ BitVec 32)\n    #x00001000)\n  (define-fun |probe.x| () (_ BitVec 5)\n    #b00011)\n)\n');
    expect(reply.status).toBe('sat');
    if (reply.status === 'sat') {
      expect(reply.model.get('pc')).toBe(0x1000n);
      expect(reply.model.get('probe.x')).toBe(3n);
    }
    expect(readSolverOutput('unsat\n(error "model is not available")').status).toBe('unsat');
    expect(readSolverOutput('').status).toBe('unknown');
  });
});
