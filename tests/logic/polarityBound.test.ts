// The lower bound that lets polarity "best" skip minimising an output's complement
// (logic/polarityBound.ts) must never claim more terms than the complement's minimum cover
// needs: checked against exact minimisation (Quine-McCluskey with an exact covering search,
// logic/qm.ts) on random functions of up to 8 inputs. If it did, `fit` could keep a larger
// cover than it should; it could never make a cover wrong (every cover is verified), so this is
// about term counts. The minimum itself is the textbook definition (common practice, no source).
import { describe, expect, it } from 'vitest';
import { minimiseExact } from '../../server/src/core/logic/qm';
import { complementNeedsAtLeast } from '../../server/src/core/logic/polarityBound';
import { minimise } from '../../server/src/core/logic/minimise';
import { randomTable, seededRandom } from './randomTables';

function randomFunction(random: () => number, nInputs: number, onShare: number, dcShare: number) {
  const words = Math.max(1, (2 ** nInputs) >>> 5);
  const on = new Uint32Array(words);
  const dc = new Uint32Array(words);
  for (let m = 0; m < 2 ** nInputs; m++) {
    const r = random();
    if (r < onShare) on[m >>> 5] |= 1 << (m & 31);
    else if (r < onShare + dcShare) dc[m >>> 5] |= 1 << (m & 31);
  }
  return { on, dc, nInputs };
}

function complementOf(f: { on: Uint32Array; dc: Uint32Array; nInputs: number }) {
  const size = 2 ** f.nInputs;
  const off = new Uint32Array(f.on.length);
  for (let m = 0; m < size; m++) if (!((f.on[m >>> 5] >>> (m & 31)) & 1) && !((f.dc[m >>> 5] >>> (m & 31)) & 1)) off[m >>> 5] |= 1 << (m & 31);
  return { on: off, dc: f.dc, nInputs: f.nInputs };
}

describe('the lower bound on the complement cover', () => {
  it('never exceeds the exact minimum number of terms of the complement (random functions, 3 to 8 inputs)', () => {
    const random = seededRandom(20261204);
    let bounded = 0;
    for (let trial = 0; trial < 300; trial++) {
      const nInputs = 3 + (trial % 6);
      const f = randomFunction(random, nInputs, [0.05, 0.2, 0.5, 0.8][trial % 4], [0, 0.2, 0.5][trial % 3]);
      const g = complementOf(f);
      const exact = minimiseExact(g.on, g.dc, nInputs, { nodeLimit: 200_000 });
      if (!exact?.provedMinimal) continue;
      const minimum = exact.terms.length;
      // The bound may be weak, never too strong: true for k = minimum + 1 would be a false claim.
      expect(complementNeedsAtLeast(f, minimum + 1), `trial ${trial}: ${nInputs} inputs, minimum ${minimum}`).toBe(false);
      if (minimum > 0 && complementNeedsAtLeast(f, minimum)) bounded++;
    }
    // And it is useful: on many functions it reaches the minimum itself.
    expect(bounded).toBeGreaterThan(100);
  });

  it('polarity "best" still picks the complement where it has fewer terms, and never more terms than positive', () => {
    const table = randomTable(808, { nInputs: 6, nOutputs: 24, onShare: 0.7, dcShare: 0.1 });
    const positive = minimise(table, { polarity: 'positive', method: 'exact' });
    const best = minimise(table, { polarity: 'best', method: 'exact' });
    for (const [i, o] of best.outputs.entries()) {
      const exactComplement = minimiseExact(complementOf({ on: table.outputs[i].on, dc: table.outputs[i].dc, nInputs: 6 }).on, table.outputs[i].dc, 6)!;
      expect(o.terms.length).toBe(Math.min(positive.outputs[i].terms.length, exactComplement.terms.length));
    }
    expect(best.outputs.some((o) => o.inverted)).toBe(true);
  });
});
