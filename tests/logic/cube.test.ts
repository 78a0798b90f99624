import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  type Cube,
  complement,
  complementInputs,
  contains,
  coversCube,
  cubeFromTerm,
  makeSpace,
  removeContained,
  smallestCubeContainingComplement,
  tautology,
  termFromCube,
} from '../../server/src/core/logic/cube';

// Every claim below is checked against plain enumeration of the minterms (common practice, no source).
const nInputs = 6;
const space = makeSpace(nInputs, 1);
const nMinterms = 1 << nInputs;

const termArbitrary = fc
  .tuple(fc.integer({ min: 0, max: nMinterms - 1 }), fc.integer({ min: 0, max: nMinterms - 1 }))
  .map(([care, value]) => ({ care, value: value & care }));
const coverArbitrary = fc.array(termArbitrary, { maxLength: 9 }).map((terms) => terms.map((t) => cubeFromTerm(t, 1, space)));

function covered(cover: readonly Cube[], minterm: number): boolean {
  return cover.some((c) => {
    const term = termFromCube(c, space);
    return ((minterm ^ term.value) & term.care) === 0;
  });
}

function mintermsOf(cover: readonly Cube[]): boolean[] {
  return Array.from({ length: nMinterms }, (_, m) => covered(cover, m));
}

describe('cube operations agree with enumeration', () => {
  it('converts between product terms and cubes', () => {
    const cube = cubeFromTerm({ care: 0b101, value: 0b001 }, 1, makeSpace(3, 1));
    // Input 0 must be 1 (ones only), input 1 free (both), input 2 must be 0 (zeros only).
    expect({ zeros: cube.zeros.toString(2), ones: cube.ones.toString(2) }).toEqual({ zeros: '110', ones: '11' });
    expect(termFromCube(cube, makeSpace(3, 1))).toEqual({ care: 5, value: 1 });
  });

  it('tautology', () => {
    fc.assert(
      fc.property(coverArbitrary, (cover) => {
        expect(tautology(cover, space)).toBe(mintermsOf(cover).every(Boolean));
      }),
      { numRuns: 400 },
    );
    // Fires: a0 | !a0 is a tautology; must not: a0 | a1 is not.
    const a0 = cubeFromTerm({ care: 1, value: 1 }, 1, space);
    const notA0 = cubeFromTerm({ care: 1, value: 0 }, 1, space);
    const a1 = cubeFromTerm({ care: 2, value: 2 }, 1, space);
    expect(tautology([a0, notA0], space)).toBe(true);
    expect(tautology([a0, a1], space)).toBe(false);
  });

  it('complement (unate recursion)', () => {
    fc.assert(
      fc.property(coverArbitrary, (cover) => {
        const inverse = complementInputs(cover, space, 1);
        const on = mintermsOf(cover);
        const off = mintermsOf(inverse);
        expect(on.map((v, m) => v !== off[m]).every(Boolean)).toBe(true);
      }),
      { numRuns: 400 },
    );
  });

  it('smallest cube containing the complement', () => {
    fc.assert(
      fc.property(coverArbitrary, (cover) => {
        const smallest = smallestCubeContainingComplement(cover, space);
        const offMinterms = mintermsOf(cover)
          .map((v, m) => (v ? -1 : m))
          .filter((m) => m >= 0);
        if (offMinterms.length === 0) {
          expect(smallest).toBeNull();
          return;
        }
        // The supercube of the OFF minterms, computed directly.
        let zeros = 0;
        let ones = 0;
        for (const m of offMinterms) {
          zeros |= ~m & (nMinterms - 1);
          ones |= m;
        }
        expect(smallest).not.toBeNull();
        expect({ zeros: smallest!.zeros, ones: smallest!.ones }).toEqual({ zeros, ones });
      }),
      { numRuns: 400 },
    );
  });

  it('multi-output containment and complement', () => {
    const space2 = makeSpace(3, 2);
    // Output 0: a0; output 1: a0 & a1.
    const cover = [cubeFromTerm({ care: 1, value: 1 }, 0b01, space2), cubeFromTerm({ care: 3, value: 3 }, 0b10, space2)];
    expect(coversCube(cover, cubeFromTerm({ care: 3, value: 3 }, 0b11, space2), space2)).toBe(true);
    expect(coversCube(cover, cubeFromTerm({ care: 1, value: 1 }, 0b11, space2), space2)).toBe(false);
    const off = complement(cover, space2);
    expect(off.map((c) => [termFromCube(c, space2), c.outs])).toEqual([
      [{ care: 1, value: 0 }, 1],
      [{ care: 1, value: 0 }, 2],
      [{ care: 2, value: 0 }, 2],
    ]);
  });

  it('removes contained cubes and keeps the rest', () => {
    const big = cubeFromTerm({ care: 1, value: 1 }, 1, space);
    const small = cubeFromTerm({ care: 3, value: 3 }, 1, space);
    const other = cubeFromTerm({ care: 1, value: 0 }, 1, space);
    expect(contains(big, small)).toBe(true);
    expect(contains(small, big)).toBe(false);
    expect(removeContained([small, big, other, big])).toEqual([big, other]);
  });
});
