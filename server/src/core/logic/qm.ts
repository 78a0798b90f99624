// Exact two-level minimisation of one output (up to MAX_QM_INPUTS inputs; the method of choice
// up to MAX_EXACT_INPUTS): Quine–McCluskey prime generation done as a dynamic programme over
// all 3^n cubes, then a minimum cover of the ON minterms by primes (essentials, dominance,
// branch and bound within a node budget, reported when it runs out). It deliberately handles
// one output at a time and only small input counts; larger functions go to Espresso.
import { LogicInputError } from './errors';
import type { ProductTerm } from './truthTable';
import { solveUnateCover } from './unateCover';

/** Up to this many inputs exact minimisation is the method of choice (a 1 MiB implicant table). */
export const MAX_EXACT_INPUTS = 10;

/** The hard limit of this module: the implicant table takes 4^n bytes (16 MiB at 12 inputs). */
export const MAX_QM_INPUTS = 12;

export interface ExactOptions {
  /** Branch-and-bound nodes for the covering step. */
  readonly nodeLimit?: number;
  /** Give up (return null) when the function has more primes than this. */
  readonly maxPrimes?: number;
}

export interface ExactResult {
  readonly terms: ProductTerm[];
  /** False when the covering search hit its node budget; the cover is then the best found. */
  readonly provedMinimal: boolean;
  readonly primeCount: number;
}

/**
 * Minimises the function whose ON and don't-care minterms are the set bits of `on` and `dc`
 * (bitsets over 2^nInputs minterms). Returns a cover with the fewest product terms (proven
 * when `provedMinimal`), ties broken towards fewer literals by preferring bigger primes in the
 * covering search; null only when `maxPrimes` was exceeded.
 */
export function minimiseExact(on: Uint32Array, dc: Uint32Array, nInputs: number, options: ExactOptions = {}): ExactResult | null {
  if (nInputs > MAX_QM_INPUTS) {
    throw new LogicInputError(`exact minimisation handles at most ${MAX_QM_INPUTS} inputs; this function has ${nInputs}`);
  }
  const maxPrimes = options.maxPrimes ?? Infinity;
  const nMinterms = 1 << nInputs;
  const full = nMinterms - 1;
  const bitOf = (set: Uint32Array, minterm: number) => (set[minterm >>> 5] >>> (minterm & 31)) & 1;
  const onMinterms: number[] = [];
  for (let minterm = 0; minterm < nMinterms; minterm++) if (bitOf(on, minterm)) onMinterms.push(minterm);
  if (onMinterms.length === 0) return { terms: [], provedMinimal: true, primeCount: 0 };

  // flags[(mask << n) | value]: bit 0 = the cube lies inside ON ∪ DC (an implicant), bit 1 =
  // it holds at least one ON minterm. `mask` marks the free inputs; `value` is 0 on them.
  const flags = new Uint8Array(nMinterms * nMinterms);
  for (let minterm = 0; minterm < nMinterms; minterm++) {
    const isOn = bitOf(on, minterm);
    flags[minterm] = (isOn | bitOf(dc, minterm)) | (isOn << 1);
  }
  for (let mask = 1; mask <= full; mask++) {
    const lowBit = mask & -mask;
    const smaller = (mask ^ lowBit) * nMinterms;
    const base = mask * nMinterms;
    const fixed = full & ~mask;
    // Every value that is 0 on the free inputs: the submasks of `fixed`.
    let value = 0;
    do {
      const a = flags[smaller | value];
      const b = flags[smaller | value | lowBit];
      flags[base | value] = (a & b & 1) | ((a | b) & 2);
      value = (value - fixed) & fixed;
    } while (value !== 0);
  }

  // A prime is an implicant holding an ON minterm that no one-input widening keeps inside ON ∪ DC.
  const primes: ProductTerm[] = [];
  for (let mask = 0; mask <= full; mask++) {
    const fixed = full & ~mask;
    let value = 0;
    do {
      if (flags[mask * nMinterms + value] === 3) {
        let prime = true;
        let rest = fixed;
        while (rest !== 0) {
          const bit = rest & -rest;
          rest ^= bit;
          if (flags[(mask | bit) * nMinterms + (value & ~bit)] & 1) {
            prime = false;
            break;
          }
        }
        if (prime) {
          primes.push({ care: fixed, value });
          if (primes.length > maxPrimes) return null;
        }
      }
      value = (value - fixed) & fixed;
    } while (value !== 0);
  }

  // Bigger primes first, so that among equally small covers the search meets fewer literals first.
  primes.sort((a, b) => literalsOf(a.care) - literalsOf(b.care) || a.care - b.care || a.value - b.value);
  const rowOf = new Map<number, number>();
  onMinterms.forEach((minterm, rowIndex) => rowOf.set(minterm, rowIndex));
  const rows: number[][] = onMinterms.map(() => []);
  primes.forEach((prime, column) => {
    const free = full & ~prime.care;
    let subset = 0;
    do {
      const rowIndex = rowOf.get(prime.value | subset);
      if (rowIndex !== undefined) rows[rowIndex].push(column);
      subset = (subset - free) & free;
    } while (subset !== 0);
  });
  const solution = solveUnateCover(rows, primes.length, { nodeLimit: options.nodeLimit ?? 2000 });
  return {
    terms: solution.columns.map((column) => primes[column]),
    provedMinimal: solution.optimal,
    primeCount: primes.length,
  };
}

function literalsOf(care: number): number {
  let count = 0;
  for (let rest = care; rest !== 0; rest &= rest - 1) count++;
  return count;
}
