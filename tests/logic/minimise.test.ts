import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LogicInputError } from '../../server/src/core/logic/errors';
import { distinctTermCount, minimise } from '../../server/src/core/logic/minimise';
import { minimiseExact } from '../../server/src/core/logic/qm';
import { type TableValue, tableFromFunction, verifyCover } from '../../server/src/core/logic/truthTable';
import { inputNames, randomTable } from './randomTables';

function parity(m: number): 0 | 1 {
  let bit = 0;
  for (let rest = m; rest !== 0; rest &= rest - 1) bit ^= 1;
  return bit as 0 | 1;
}

describe('provable minima (facts of the trade, no source needed: every prime of these functions is essential)', () => {
  // ON exactly where at least two of a, b, c are 1: minterms 3, 5, 6, 7.
  const majority = tableFromFunction(['a', 'b', 'c'], ['maj'], (m) => ([3, 5, 6, 7].includes(m) ? 1 : 0));

  it('3-input majority needs exactly 3 terms of 2 literals', () => {
    for (const method of ['exact', 'espresso'] as const) {
      const result = minimise(majority, { method }).outputs[0];
      expect(result.terms).toHaveLength(3);
      expect(result.terms.every((t) => t.care.toString(2).replace(/0/g, '').length === 2)).toBe(true);
    }
  });

  for (let n = 2; n <= 8; n++) {
    it(`${n}-input parity needs 2^${n - 1} = ${2 ** (n - 1)} terms, exact and Espresso alike`, () => {
      const table = tableFromFunction(inputNames(n), ['odd'], (m) => parity(m));
      const exact = minimise(table, { method: 'exact' }).outputs[0];
      expect(exact.terms).toHaveLength(2 ** (n - 1));
      expect(exact.provedMinimal).toBe(true);
      expect(minimise(table, { method: 'espresso' }).outputs[0].terms).toHaveLength(2 ** (n - 1));
    });
  }

  it('the counts follow the function: two don\'t-cares let parity share a term', () => {
    // 4-input parity with the even minterms 0 and 3 made don't-care: the cube !a2 & !a3
    // (minterms 0..3) then covers the ON minterms 1 and 2 at once, so 7 terms suffice, not 8.
    const table = tableFromFunction(inputNames(4), ['odd'], (m) => (m === 0 || m === 3 ? '-' : parity(m)));
    expect(minimise(table, { method: 'exact' }).outputs[0].terms).toHaveLength(7);
  });
});

describe('exact minimisation and Espresso on random functions', () => {
  it('Espresso never beats the exact minimum, and both covers verify (6-8 inputs, 60 seeded functions)', () => {
    let espressoExtra = 0;
    for (let seed = 1; seed <= 60; seed++) {
      const nInputs = 6 + (seed % 3);
      const table = randomTable(seed, { nInputs, structured: seed % 2 === 0, onShare: 0.35, dcShare: 0.15 });
      const exact = minimise(table, { method: 'exact' }).outputs[0];
      const heuristic = minimise(table, { method: 'espresso' }).outputs[0];
      expect(exact.provedMinimal, `seed ${seed}`).toBe(true);
      expect(verifyCover(table, 0, exact.terms).ok).toBe(true);
      expect(verifyCover(table, 0, heuristic.terms).ok).toBe(true);
      expect(heuristic.terms.length, `seed ${seed}`).toBeGreaterThanOrEqual(exact.terms.length);
      espressoExtra += heuristic.terms.length - exact.terms.length;
    }
    // Espresso is a heuristic but a good one: on these small functions it stays close to the minimum.
    expect(espressoExtra).toBeLessThan(20);
  });

  it('the exact covering step reports when it gives up before proving a minimum', () => {
    const table = randomTable(7, { nInputs: 10, onShare: 0.45, dcShare: 0.05 });
    const bits = table.outputs[0];
    const tight = minimiseExact(bits.on, bits.dc, 10, { nodeLimit: 1 })!;
    expect(tight.provedMinimal).toBe(false);
    expect(verifyCover(table, 0, tight.terms).ok).toBe(true);
    expect(minimiseExact(bits.on, bits.dc, 10, { maxPrimes: 5 })).toBeNull();
  });
});

describe('minimise', () => {
  it('preserves the truth table on every care minterm (property, 1-9 inputs, up to 3 outputs)', () => {
    const valueArbitrary = fc.constantFrom<TableValue>(0, 1, '-');
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 9 }),
        fc.integer({ min: 1, max: 3 }),
        fc.integer(),
        fc.constantFrom<'auto' | 'espresso'>('auto', 'espresso'),
        fc.constantFrom<'positive' | 'best'>('positive', 'best'),
        fc.boolean(),
        (nInputs, nOutputs, seed, method, polarity, shareTerms) => {
          const values = fc.sample(fc.array(valueArbitrary, { minLength: nOutputs << nInputs, maxLength: nOutputs << nInputs }), { seed, numRuns: 1 })[0];
          const table = tableFromFunction(inputNames(nInputs), Array.from({ length: nOutputs }, (_, j) => `y${j}`), (m, j) => values[(j << nInputs) | m]);
          const result = minimise(table, { method, polarity, shareTerms });
          for (const output of result.outputs) {
            expect(verifyCover(table, output.outputIndex, output.terms, output.inverted)).toEqual({ ok: true });
          }
        },
      ),
      { numRuns: 100 },
    );
  });

  it('picks the complement when it needs fewer terms, and only then', () => {
    // a0 | a1 | a2 | a3 needs 4 terms; its complement !a0 & !a1 & !a2 & !a3 needs 1.
    const table = tableFromFunction(inputNames(4), ['any', 'all'], (m, j) => (j === 0 ? (m !== 0 ? 1 : 0) : m === 15 ? 1 : 0));
    const best = minimise(table, { polarity: 'best' }).outputs;
    expect(best.map((o) => [o.name, o.inverted, o.terms.length])).toEqual([
      ['any', true, 1],
      ['all', false, 1],
    ]);
    const positive = minimise(table, { polarity: 'positive' }).outputs;
    expect(positive.map((o) => [o.inverted, o.terms.length])).toEqual([
      [false, 4],
      [false, 1],
    ]);
  });

  it('shares product terms between outputs when asked', () => {
    // y0 = a0&a1 | a2&a3, y1 = a0&a1 | !a2&!a3: the term a0&a1 serves both.
    const table = tableFromFunction(inputNames(4), ['y0', 'y1'], (m, j) => {
      const ab = (m & 3) === 3;
      const cd = j === 0 ? (m & 12) === 12 : (m & 12) === 0;
      return ab || cd ? 1 : 0;
    });
    const separate = minimise(table);
    const shared = minimise(table, { shareTerms: true });
    expect(distinctTermCount(separate)).toBe(3);
    expect(distinctTermCount(shared)).toBe(3);
    expect(shared.outputs.map((o) => o.terms.length)).toEqual([2, 2]);
    expect(shared.outputs.every((o) => o.method === 'espresso-shared')).toBe(true);
  });

  it('uses exact minimisation on the inputs an output needs when the table is wide', () => {
    // 14 inputs, but the output only looks at inputs 3, 7 and 12 (majority of them).
    const table = tableFromFunction(inputNames(14), ['m'], (m) => {
      const votes = ((m >> 3) & 1) + ((m >> 7) & 1) + ((m >> 12) & 1);
      return votes >= 2 ? 1 : 0;
    });
    const result = minimise(table).outputs[0];
    expect(result.terms).toHaveLength(3);
    expect(verifyCover(table, 0, result.terms).ok).toBe(true);
  });

  it('handles constant outputs', () => {
    const table = tableFromFunction(inputNames(3), ['zero', 'one', 'free'], (_, j) => (j === 0 ? 0 : j === 1 ? 1 : '-'));
    expect(minimise(table).outputs.map((o) => o.terms)).toEqual([[], [{ care: 0, value: 0 }], []]);
  });

  it('rejects impossible requests with a clear message', () => {
    const wide = randomTable(3, { nInputs: 11 });
    expect(() => minimise(wide, { method: 'exact' })).toThrow(LogicInputError);
    expect(() => minimise(wide, { method: 'exact' })).toThrow(/at most 10 inputs/);
    expect(() => minimise(wide, { outputs: ['nope'] })).toThrow(/no output called "nope"/);
  });
});

describe('the time bound per output', () => {
  // A clock that jumps a minute on every reading: every bound is passed at once.
  const racing = () => {
    let t = 0;
    return () => (t += 60_000);
  };

  it('keeps a correct cover and says so when the bound stops the improvement passes (Espresso, 10 inputs)', () => {
    const table = randomTable(20261203, { nInputs: 10, nOutputs: 3, onShare: 0.45, dcShare: 0.2 });
    const bounded = minimise(table, { method: 'espresso', polarity: 'best', timePerOutputMs: 1000, clock: racing() });
    const free = minimise(table, { method: 'espresso', polarity: 'best' });
    for (const o of bounded.outputs) {
      // minimise() verifies every cover on every care address before it returns; check again here.
      expect(verifyCover(table, o.outputIndex, o.terms, o.inverted).ok).toBe(true);
      expect(o.note).toContain('stopped after 1 s');
      expect(o.provedMinimal).toBe(false);
    }
    expect(free.outputs.every((o) => o.note === undefined)).toBe(true);
    // Stopping early never gives fewer terms than letting it run.
    const terms = (m: typeof free) => m.outputs.reduce((n, o) => n + o.terms.length, 0);
    expect(terms(bounded)).toBeGreaterThanOrEqual(terms(free));
  });

  it('reports progress once per output, in order', () => {
    const table = randomTable(7, { nInputs: 8, nOutputs: 4, onShare: 0.5, dcShare: 0.1 });
    const seen: string[] = [];
    minimise(table, { onProgress: (done, total, name) => seen.push(`${done}/${total} ${name}`) });
    expect(seen).toEqual(table.outputs.map((o, i) => `${i + 1}/4 ${o.name}`));
  });
});
