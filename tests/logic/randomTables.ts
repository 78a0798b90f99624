// Seeded random truth tables for the logic tests: irregular functions (independent random
// minterms) and structured ones (an OR of random cubes, the shape control logic tends to
// have), both with don't-cares. Not a test file itself; the tests import it.
import { type TableValue, type TruthTable, tableFromFunction } from '../../server/src/core/logic/truthTable';

/** A small deterministic generator (mulberry32), so every failing case can be replayed from its seed. */
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function inputNames(nInputs: number): string[] {
  return Array.from({ length: nInputs }, (_, i) => `a${i}`);
}

export interface RandomTableOptions {
  readonly nInputs: number;
  readonly nOutputs?: number;
  /** Share of minterms that are ON (irregular) or the number of cubes (structured). */
  readonly onShare?: number;
  readonly dcShare?: number;
  readonly structured?: boolean;
  /** Structured tables: most cubes per output (at least 2). */
  readonly maxCubes?: number;
}

export function randomTable(seed: number, options: RandomTableOptions): TruthTable {
  const random = seededRandom(seed);
  const n = options.nInputs;
  const nOutputs = options.nOutputs ?? 1;
  const onShare = options.onShare ?? 0.3;
  const dcShare = options.dcShare ?? 0.1;
  const cubesPerOutput = Array.from({ length: nOutputs }, () =>
    Array.from({ length: 2 + Math.floor(random() * ((options.maxCubes ?? 11) - 1)) }, () => {
      let care = 0;
      let value = 0;
      for (let i = 0; i < n; i++) {
        if (random() < 0.55) {
          care |= 1 << i;
          if (random() < 0.5) value |= 1 << i;
        }
      }
      return { care, value };
    }),
  );
  const outputNames = Array.from({ length: nOutputs }, (_, j) => `y${j}`);
  return tableFromFunction(inputNames(n), outputNames, (minterm, outputIndex): TableValue => {
    if (random() < dcShare) return '-';
    if (options.structured) return cubesPerOutput[outputIndex].some((c) => ((minterm ^ c.value) & c.care) === 0) ? 1 : 0;
    return random() < onShare ? 1 : 0;
  });
}
