import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { type Cube, cubeFromTerm, makeSpace, termFromCube } from '../../server/src/core/logic/cube';
import { espresso } from '../../server/src/core/logic/espresso';

// Espresso run directly on cube covers (no truth table, OFF-set by complementing ON ∪ DC),
// checked by enumerating every (minterm, output) point (common practice, no source).
const nInputs = 5;
const nOutputs = 3;
const space = makeSpace(nInputs, nOutputs);

const cubeArbitrary = fc
  .tuple(fc.integer({ min: 0, max: 31 }), fc.integer({ min: 0, max: 31 }), fc.integer({ min: 1, max: 7 }))
  .map(([care, value, outs]) => cubeFromTerm({ care, value: value & care }, outs, space));

function pointCovered(cover: readonly Cube[], minterm: number, outputIndex: number): boolean {
  return cover.some((c) => {
    if (((c.outs >>> outputIndex) & 1) === 0) return false;
    const term = termFromCube(c, space);
    return ((minterm ^ term.value) & term.care) === 0;
  });
}

describe('Espresso on cube covers', () => {
  it('keeps ON \\ DC ⊆ result ⊆ ON ∪ DC for multi-output covers (property)', () => {
    fc.assert(
      fc.property(fc.array(cubeArbitrary, { maxLength: 10 }), fc.array(cubeArbitrary, { maxLength: 4 }), (on, dc) => {
        const result = espresso({ space, on, dc });
        for (let m = 0; m < 32; m++) {
          for (let j = 0; j < nOutputs; j++) {
            // A point in both covers is a don't-care.
            const isDc = pointCovered(dc, m, j);
            const isOn = pointCovered(on, m, j) && !isDc;
            const allowed = isOn || isDc || pointCovered(on, m, j);
            const got = pointCovered(result, m, j);
            if (isOn) expect(got, `minterm ${m} output ${j}`).toBe(true);
            if (!allowed) expect(got, `minterm ${m} output ${j}`).toBe(false);
          }
        }
        expect(result.length).toBeLessThanOrEqual(on.length);
      }),
      { numRuns: 300 },
    );
  });

  it('merges what can be merged: eight minterm cubes of a0 become one cube', () => {
    const single = makeSpace(4, 1);
    const on = Array.from({ length: 8 }, (_, k) => cubeFromTerm({ care: 15, value: (k << 1) | 1 }, 1, single));
    expect(espresso({ space: single, on, dc: [] }).map((c) => termFromCube(c, single))).toEqual([{ care: 1, value: 1 }]);
  });
});
