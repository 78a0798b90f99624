import { describe, expect, it } from 'vitest';
import { LogicInputError } from '../../server/src/core/logic/errors';
import {
  countMinterms,
  createTruthTable,
  evaluateCover,
  getValue,
  setValue,
  tableFromFunction,
  verifyCover,
} from '../../server/src/core/logic/truthTable';
import { inputNames } from './randomTables';

describe('truth tables', () => {
  it('stores ON, OFF and don\'t-care per output and minterm', () => {
    const table = createTruthTable(['step0', 'step1', 'opcode2'], ['alu_oe', 'pc_load']);
    setValue(table, 0, 5, 1);
    setValue(table, 0, 6, '-');
    setValue(table, 1, 5, '-');
    setValue(table, 1, 5, 0);
    expect([getValue(table, 0, 5), getValue(table, 0, 6), getValue(table, 0, 7), getValue(table, 1, 5)]).toEqual([1, '-', 0, 0]);
    expect(countMinterms(table, 0)).toEqual({ on: 1, care: 7 });
  });

  it('uses one bit per minterm: 20 inputs take 32768 words per set', () => {
    const table = createTruthTable(inputNames(20), ['y']);
    expect(table.nWords).toBe(32768);
    expect(table.outputs[0].on.byteLength).toBe(131072);
  });

  it('rejects bad names and sizes with a clear message', () => {
    expect(() => createTruthTable(['a', 'a'], ['y'])).toThrow(/"a" appears twice/);
    expect(() => createTruthTable(['a b'], ['y'])).toThrow(LogicInputError);
    expect(() => createTruthTable(['a'], ['a'])).toThrow(/both as an input and as an output/);
    expect(() => createTruthTable(inputNames(25), ['y'])).toThrow(/at most 24 inputs/);
    expect(() => createTruthTable(['opcode[3]', 'flag.z'], ['y'])).not.toThrow();
    const table = createTruthTable(['a'], ['y']);
    expect(() => setValue(table, 0, 2, 1)).toThrow(/address 2 is outside/);
  });

  it('evaluates a sum of products', () => {
    // a0 & !a2  |  a1
    const cover = [{ care: 0b101, value: 0b001 }, { care: 0b010, value: 0b010 }];
    const values = Array.from({ length: 8 }, (_, m) => (evaluateCover(cover, m) ? 1 : 0));
    expect(values.join('')).toBe('01110011');
  });

  describe('verifyCover checks every care minterm', () => {
    // y = a0 xor a6 over 7 inputs, with minterm 127 a don't-care.
    const table = tableFromFunction(inputNames(7), ['y'], (m) => (m === 127 ? '-' : ((m ^ (m >> 6)) & 1) as 0 | 1));
    const xorCover = [
      { care: 0b1000001, value: 0b0000001 },
      { care: 0b1000001, value: 0b1000000 },
    ];

    it('accepts a correct cover', () => {
      expect(verifyCover(table, 0, xorCover)).toEqual({ ok: true });
    });

    it('reports the first minterm where a cover is wrong', () => {
      expect(verifyCover(table, 0, xorCover.slice(0, 1))).toEqual({ ok: false, minterm: 64, expected: 1, actual: 0 });
    });

    it('ignores don\'t-cares, in both directions', () => {
      // Covering minterm 127 too is fine; the table does not care there.
      expect(verifyCover(table, 0, [...xorCover, { care: 0x7f, value: 0x7f }])).toEqual({ ok: true });
      const tooMuch = [...xorCover, { care: 0x7f, value: 0x3e }];
      expect(verifyCover(table, 0, tooMuch)).toEqual({ ok: false, minterm: 62, expected: 0, actual: 1 });
    });

    it('checks an inverted cover against the complement', () => {
      const complement = [
        { care: 0b1000001, value: 0 },
        { care: 0b1000001, value: 0b1000001 },
      ];
      expect(verifyCover(table, 0, complement, true)).toEqual({ ok: true });
      expect(verifyCover(table, 0, xorCover, true).ok).toBe(false);
    });

    it('works for tables smaller than one word', () => {
      const small = tableFromFunction(['a', 'b'], ['y'], (m) => (m === 3 ? 1 : 0));
      expect(verifyCover(small, 0, [{ care: 3, value: 3 }])).toEqual({ ok: true });
      expect(verifyCover(small, 0, [{ care: 1, value: 1 }])).toEqual({ ok: false, minterm: 1, expected: 0, actual: 1 });
    });
  });
});
