// Outside check of our minimiser against espresso-iisojs (npm, MIT), an independent Espresso-II
// implementation for single-output functions used here as the reference. On seeded random
// functions of 6-12 inputs with don't-cares, our cover must verify against the function on
// every care minterm, so must the reference's, and ours must not have more product terms.
// Reference API (its README and index.d.ts): espresso(onSet, dcSet) over cubes written as
// arrays of literals, literal = 2 * variable + 1 for the plain variable, + 0 for its complement.
import { espresso as referenceEspresso } from 'espresso-iisojs';
import { describe, expect, it } from 'vitest';
import { minimise } from '../../server/src/core/logic/minimise';
import { type ProductTerm, type TruthTable, verifyCover } from '../../server/src/core/logic/truthTable';
import { randomTable, seededRandom } from '../logic/randomTables';

function mintermCubes(table: TruthTable): { on: number[][]; dc: number[][] } {
  const on: number[][] = [];
  const dc: number[][] = [];
  const bits = table.outputs[0];
  for (let m = 0; m < 2 ** table.nInputs; m++) {
    const literals = Array.from({ length: table.nInputs }, (_, i) => 2 * i + ((m >>> i) & 1));
    const bit = 1 << (m & 31);
    if (bits.on[m >>> 5] & bit) on.push(literals);
    else if (bits.dc[m >>> 5] & bit) dc.push(literals);
  }
  return { on, dc };
}

function termsOf(cubes: number[][]): ProductTerm[] {
  return cubes.map((literals) => {
    let care = 0;
    let value = 0;
    for (const literal of literals) {
      care |= 1 << (literal >> 1);
      if (literal & 1) value |= 1 << (literal >> 1);
    }
    return { care, value };
  });
}

/** Function number k of the 200: inputs cycle through 6-12; shares and shape drawn from the seed. */
function functionNumber(k: number): TruthTable {
  const random = seededRandom(1000 + k);
  const nInputs = 6 + (k % 7);
  const structured = random() < 0.5;
  return randomTable(2000 + k, {
    nInputs,
    structured,
    maxCubes: 4 + Math.floor(random() * 12),
    onShare: 0.05 + random() * 0.35,
    dcShare: random() * 0.25,
  });
}

describe('our minimiser against espresso-iisojs on 200 seeded random functions', () => {
  const blockSize = 40;
  let ourTotal = 0;
  let referenceTotal = 0;
  for (let block = 0; block < 200 / blockSize; block++) {
    it(`functions ${block * blockSize + 1}-${(block + 1) * blockSize}: both verify, ours is never larger`, { timeout: 600_000 }, () => {
      for (let k = block * blockSize; k < (block + 1) * blockSize; k++) {
        const table = functionNumber(k);
        const ours = minimise(table).outputs[0];
        const { on, dc } = mintermCubes(table);
        const reference = termsOf(on.length === 0 ? [] : referenceEspresso(on, dc));
        expect(verifyCover(table, 0, ours.terms), `function ${k + 1}: ours`).toEqual({ ok: true });
        expect(verifyCover(table, 0, reference), `function ${k + 1}: reference`).toEqual({ ok: true });
        expect(ours.terms.length, `function ${k + 1} (${table.nInputs} inputs): ours ${ours.terms.length}, reference ${reference.length}`).toBeLessThanOrEqual(reference.length);
        ourTotal += ours.terms.length;
        referenceTotal += reference.length;
      }
    });
  }

  it('the comparison is not vacuous: the functions need many terms and a wrong cover is caught', () => {
    // Runs after the blocks above (vitest keeps declaration order within a file).
    expect(referenceTotal).toBeGreaterThan(2000);
    expect(ourTotal).toBeLessThanOrEqual(referenceTotal);
    const table = functionNumber(3);
    const ours = minimise(table).outputs[0];
    expect(verifyCover(table, 0, ours.terms.slice(1)).ok).toBe(false);
  });
});
