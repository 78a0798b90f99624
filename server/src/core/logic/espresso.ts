// The Espresso-II heuristic minimisation loop, written from the algorithm's description in
// Brayton, Hachtel, McMullen and Sangiovanni-Vincentelli, "Logic Minimization Algorithms for
// VLSI Synthesis", Kluwer 1984, ch. 4: EXPAND, IRREDUNDANT, ESSENTIAL primes, then REDUCE,
// EXPAND, IRREDUNDANT while the cost drops, then LAST_GASP. Cubes carry an output part, so one
// run can share product terms between outputs. It deliberately works on cube covers only;
// building covers from truth tables, choosing polarity and verifying live in minimise.ts.
import { bitIndexes, popcount } from './bits';
import {
  type Cube,
  type CubeSpace,
  cofactorInputs,
  cofactorOnInput,
  complement,
  contains,
  coverOfOutput,
  coversCube,
  coveredByOthers,
  cofactorOfOutputExcept,
  inputSize,
  isInputUniversal,
  isInputVoid,
  literalCount,
  makeSpace,
  removeContained,
  sameCube,
  smallestCubeContainingComplement,
  splitInputOf,
  tautology,
} from './cube';
import { invariant } from './errors';
import { solveUnateCover } from './unateCover';

export interface EspressoProblem {
  readonly space: CubeSpace;
  /** A cover of the ON-set; it may also cover don't-care points (points in `dc` are don't-cares even when listed here). */
  readonly on: readonly Cube[];
  /** A cover of the don't-care set. */
  readonly dc: readonly Cube[];
  /** A cover of the OFF-set; computed by complementing ON ∪ DC when absent. */
  readonly off?: readonly Cube[];
}

/** Cost used to decide whether an iteration helped: product terms first, then literals. */
export function coverCost(cover: readonly Cube[], space: CubeSpace): number {
  let literals = 0;
  for (const c of cover) literals += literalCount(c, space) + popcount(c.outs & space.outputMask);
  return cover.length * 1_000_000 + literals;
}

/** OFF-set cubes with exactly one output each, which is what EXPAND's blocking rows expect. */
function splitOutputs(cover: readonly Cube[], space: CubeSpace): Cube[] {
  const result: Cube[] = [];
  for (const c of cover) {
    if (isInputVoid(c, space)) continue;
    for (const outputIndex of bitIndexes(c.outs & space.outputMask)) {
      result.push({ zeros: c.zeros, ones: c.ones, outs: 1 << outputIndex });
    }
  }
  return result;
}

// ---------------------------------------------------------------------------------------------
// EXPAND: make every cube prime, preferring expansions that swallow other cubes of the cover.
// A "part" is one lowered coordinate of the cube: an input with a literal, or an output the
// cube does not yet serve. Raising a part enlarges the cube. Each OFF-set cube gives a
// blocking row: the parts that currently keep the cube away from it; at least one part of
// every row must stay lowered.
// ---------------------------------------------------------------------------------------------

interface Parts {
  inputs: number;
  outputs: number;
}

/**
 * Expands `start` into a prime that does not meet the OFF-set `off`, trying to cover the cubes
 * of `others` whose `alive` flag is set; covered ones get their flag cleared.
 */
function expandCube(start: Cube, others: readonly Cube[], alive: Uint8Array, off: readonly Cube[], space: CubeSpace): Cube {
  const inputMask = space.inputMask;
  let zeros = start.zeros;
  let ones = start.ones;
  let outs = start.outs;
  const free: Parts = { inputs: inputMask & ~(zeros & ones), outputs: space.outputMask & ~outs };
  const fixed: Parts = { inputs: 0, outputs: 0 };

  // Blocking rows. A row with a single part fixes that part at once; rows holding a fixed
  // part are satisfied for good, so most rows never need storing. The rest are de-duplicated.
  const rowCount = off.length;
  const blockInputsOf = new Int32Array(rowCount);
  const blockOutputsOf = new Int32Array(rowCount);
  for (let row = 0; row < rowCount; row++) {
    const r = off[row];
    const blockInputs = inputMask & ~((zeros & r.zeros) | (ones & r.ones));
    const blockOutputs = (outs & r.outs) === 0 ? r.outs & space.outputMask : 0;
    invariant((blockInputs | blockOutputs) !== 0, 'EXPAND started from a cube that meets the OFF-set');
    blockInputsOf[row] = blockInputs;
    blockOutputsOf[row] = blockOutputs;
    if (blockOutputs === 0 && (blockInputs & (blockInputs - 1)) === 0) fixed.inputs |= blockInputs;
    else if (blockInputs === 0 && (blockOutputs & (blockOutputs - 1)) === 0) fixed.outputs |= blockOutputs;
  }
  free.inputs &= ~fixed.inputs;
  free.outputs &= ~fixed.outputs;
  const rowKeys = new Set<number>();
  let rowInputs: number[] = [];
  let rowOutputs: number[] = [];
  for (let row = 0; row < rowCount; row++) {
    const blockInputs = blockInputsOf[row];
    const blockOutputs = blockOutputsOf[row];
    if ((blockInputs & fixed.inputs) !== 0 || (blockOutputs & fixed.outputs) !== 0) continue;
    // Inputs stay below 2^24 and an OFF cube has one output, so this key is exact.
    const key = blockInputs * 33 + (blockOutputs === 0 ? 0 : 32 - Math.clz32(blockOutputs));
    if (rowKeys.has(key)) continue;
    rowKeys.add(key);
    rowInputs.push(blockInputs);
    rowOutputs.push(blockOutputs);
  }

  let candidates: number[] = [];
  for (let index = 0; index < others.length; index++) if (alive[index]) candidates.push(index);

  const raise = (inputs: number, outputs: number) => {
    zeros |= inputs;
    ones |= inputs;
    outs |= outputs;
    free.inputs &= ~inputs;
    free.outputs &= ~outputs;
  };
  let usedGreedyLowering = false;

  for (;;) {
    // Essential lowering: a row with one free part left needs that part kept; rows holding a
    // kept part are satisfied for good and leave the matrix.
    for (let changed = true; changed; ) {
      changed = false;
      const nextInputs: number[] = [];
      const nextOutputs: number[] = [];
      for (let row = 0; row < rowInputs.length; row++) {
        if ((rowInputs[row] & fixed.inputs) !== 0 || (rowOutputs[row] & fixed.outputs) !== 0) continue;
        const freeInputs = rowInputs[row] & free.inputs;
        const freeOutputs = rowOutputs[row] & free.outputs;
        invariant((freeInputs | freeOutputs) !== 0, 'EXPAND raised a part that a blocking row needed');
        if (popcount(freeInputs) + popcount(freeOutputs) === 1) {
          fixed.inputs |= freeInputs;
          fixed.outputs |= freeOutputs;
          free.inputs &= ~freeInputs;
          free.outputs &= ~freeOutputs;
          changed = true;
          continue;
        }
        nextInputs.push(freeInputs);
        nextOutputs.push(freeOutputs);
      }
      rowInputs = nextInputs;
      rowOutputs = nextOutputs;
    }
    // Essential raising: free parts that no row needs can be raised at once.
    let usedInputs = 0;
    let usedOutputs = 0;
    for (let row = 0; row < rowInputs.length; row++) {
      usedInputs |= rowInputs[row];
      usedOutputs |= rowOutputs[row];
    }
    raise(free.inputs & ~usedInputs, free.outputs & ~usedOutputs);

    // Update the cubes still to be covered: drop covered and impossible ones.
    const needInputs: number[] = [];
    const needOutputs: number[] = [];
    const stillOpen: number[] = [];
    for (const index of candidates) {
      const d = others[index];
      const inputs = ((d.zeros & ~zeros) | (d.ones & ~ones)) & inputMask;
      const outputs = d.outs & ~outs & space.outputMask;
      if ((inputs | outputs) === 0) {
        alive[index] = 0;
        continue;
      }
      if ((inputs & fixed.inputs) !== 0 || (outputs & fixed.outputs) !== 0) continue;
      stillOpen.push(index);
      needInputs.push(inputs);
      needOutputs.push(outputs);
    }
    candidates = stillOpen;
    if ((free.inputs | free.outputs) === 0) break;

    if (candidates.length > 0) {
      // Feasibly covered cubes: raising their parts leaves every row with a lowered part.
      const feasible: number[] = [];
      for (let k = 0; k < candidates.length; k++) {
        let ok = true;
        for (let row = 0; row < rowInputs.length; row++) {
          if (((rowInputs[row] & ~needInputs[k]) | (rowOutputs[row] & ~needOutputs[k])) === 0) {
            ok = false;
            break;
          }
        }
        if (ok) feasible.push(k);
      }
      if (feasible.length > 0) {
        // Pick the feasible cube whose raising covers the most other open cubes at once.
        let bestK = feasible[0];
        let bestScore = -1;
        let bestSize = Infinity;
        for (const k of feasible) {
          let score = 0;
          for (let other = 0; other < candidates.length; other++) {
            if ((needInputs[other] & ~needInputs[k]) === 0 && (needOutputs[other] & ~needOutputs[k]) === 0) score++;
          }
          const size = popcount(needInputs[k]) + popcount(needOutputs[k]);
          if (score > bestScore || (score === bestScore && size < bestSize)) {
            bestK = k;
            bestScore = score;
            bestSize = size;
          }
        }
        raise(needInputs[bestK], needOutputs[bestK]);
        for (let row = 0; row < rowInputs.length; row++) {
          rowInputs[row] &= ~needInputs[bestK];
          rowOutputs[row] &= ~needOutputs[bestK];
        }
        continue;
      }
      // Nothing can be covered whole: raise the free part the open cubes need most often.
      const inputCounts = new Int32Array(32);
      const outputCounts = new Int32Array(32);
      for (let k = 0; k < candidates.length; k++) {
        for (const bitIndex of bitIndexes(needInputs[k] & free.inputs)) inputCounts[bitIndex]++;
        for (const bitIndex of bitIndexes(needOutputs[k] & free.outputs)) outputCounts[bitIndex]++;
      }
      let bestCount = 0;
      let bestPart: Parts = { inputs: 0, outputs: 0 };
      for (let bitIndex = 0; bitIndex < 32; bitIndex++) {
        if (inputCounts[bitIndex] > bestCount) {
          bestCount = inputCounts[bitIndex];
          bestPart = { inputs: 1 << bitIndex, outputs: 0 };
        }
      }
      for (let bitIndex = 0; bitIndex < 32; bitIndex++) {
        if (outputCounts[bitIndex] > bestCount) {
          bestCount = outputCounts[bitIndex];
          bestPart = { inputs: 0, outputs: 1 << bitIndex };
        }
      }
      if (bestCount > 0) {
        raise(bestPart.inputs, bestPart.outputs);
        for (let row = 0; row < rowInputs.length; row++) {
          rowInputs[row] &= ~bestPart.inputs;
          rowOutputs[row] &= ~bestPart.outputs;
        }
        continue;
      }
      candidates = [];
    }

    // No cube left to aim at: keep a small set of parts that blocks every row (greedy
    // column cover) and raise everything else, giving a large prime.
    while (rowInputs.length > 0) {
      const inputCounts = new Int32Array(32);
      const outputCounts = new Int32Array(32);
      for (let row = 0; row < rowInputs.length; row++) {
        for (const bitIndex of bitIndexes(rowInputs[row])) inputCounts[bitIndex]++;
        for (const bitIndex of bitIndexes(rowOutputs[row])) outputCounts[bitIndex]++;
      }
      let bestCount = 0;
      let bestPart: Parts = { inputs: 0, outputs: 0 };
      for (let bitIndex = 0; bitIndex < 32; bitIndex++) {
        if (inputCounts[bitIndex] > bestCount) {
          bestCount = inputCounts[bitIndex];
          bestPart = { inputs: 1 << bitIndex, outputs: 0 };
        }
        if (outputCounts[bitIndex] > bestCount) {
          bestCount = outputCounts[bitIndex];
          bestPart = { inputs: 0, outputs: 1 << bitIndex };
        }
      }
      invariant(bestCount > 0, 'EXPAND: a blocking row has no free part');
      fixed.inputs |= bestPart.inputs;
      fixed.outputs |= bestPart.outputs;
      free.inputs &= ~bestPart.inputs;
      free.outputs &= ~bestPart.outputs;
      const keep = (row: number) => (rowInputs[row] & bestPart.inputs) === 0 && (rowOutputs[row] & bestPart.outputs) === 0;
      const nextInputs: number[] = [];
      const nextOutputs: number[] = [];
      for (let row = 0; row < rowInputs.length; row++) {
        if (keep(row)) {
          nextInputs.push(rowInputs[row]);
          nextOutputs.push(rowOutputs[row]);
        }
      }
      rowInputs = nextInputs;
      rowOutputs = nextOutputs;
      usedGreedyLowering = true;
    }
    raise(free.inputs, free.outputs);
    break;
  }

  if (usedGreedyLowering) {
    // A greedy choice of kept parts may keep one too many. A kept part is needed when some
    // OFF cube is blocked by it alone; raise an unneeded one and look again, until the cube is prime.
    for (;;) {
      const loweredInputs = inputMask & ~(zeros & ones);
      const loweredOutputs = space.outputMask & ~outs;
      let neededInputs = 0;
      let neededOutputs = 0;
      for (let row = 0; row < rowCount; row++) {
        const rowIn = blockInputsOf[row] & loweredInputs;
        const rowOut = blockOutputsOf[row] & loweredOutputs;
        if (rowOut === 0 && (rowIn & (rowIn - 1)) === 0) neededInputs |= rowIn;
        else if (rowIn === 0 && (rowOut & (rowOut - 1)) === 0) neededOutputs |= rowOut;
      }
      const spareInputs = loweredInputs & ~neededInputs;
      const spareOutputs = loweredOutputs & ~neededOutputs;
      if (spareInputs !== 0) {
        const bit = spareInputs & -spareInputs;
        zeros |= bit;
        ones |= bit;
      } else if (spareOutputs !== 0) {
        outs |= spareOutputs & -spareOutputs;
      } else {
        break;
      }
    }
  }
  const prime = { zeros, ones, outs };
  for (const index of candidates) if (alive[index] && contains(prime, others[index])) alive[index] = 0;
  return prime;
}

/** Orders cubes so that those least likely to be covered by others (rare parts) come first. */
function weightOrder(cover: readonly Cube[], space: CubeSpace): number[] {
  const zeroCounts = new Int32Array(32);
  const oneCounts = new Int32Array(32);
  const outCounts = new Int32Array(32);
  for (const c of cover) {
    for (const i of bitIndexes(c.zeros & space.inputMask)) zeroCounts[i]++;
    for (const i of bitIndexes(c.ones & space.inputMask)) oneCounts[i]++;
    for (const i of bitIndexes(c.outs & space.outputMask)) outCounts[i]++;
  }
  const weights = cover.map((c) => {
    let weight = 0;
    for (const i of bitIndexes(c.zeros & space.inputMask)) weight += zeroCounts[i];
    for (const i of bitIndexes(c.ones & space.inputMask)) weight += oneCounts[i];
    for (const i of bitIndexes(c.outs & space.outputMask)) weight += outCounts[i];
    return weight;
  });
  return cover.map((_, index) => index).sort((a, b) => weights[a] - weights[b] || a - b);
}

/** Collects every prime EXPAND produces during a run, without duplicates. */
export class PrimePool {
  private readonly byKey = new Map<string, Cube>();
  add(prime: Cube): void {
    this.byKey.set(`${prime.zeros},${prime.ones},${prime.outs}`, prime);
  }
  primes(): Cube[] {
    return [...this.byKey.values()];
  }
}

/** EXPAND: replaces every cube by a prime containing it; cubes swallowed on the way disappear. */
export function expand(cover: readonly Cube[], off: readonly Cube[], space: CubeSpace, pool?: PrimePool): Cube[] {
  const ordered = weightOrder(cover, space).map((index) => cover[index]);
  const alive = new Uint8Array(ordered.length).fill(1);
  const primes: Cube[] = [];
  for (let index = 0; index < ordered.length; index++) {
    if (!alive[index]) continue;
    alive[index] = 0;
    primes.push(expandCube(ordered[index], ordered, alive, off, space));
  }
  if (pool) for (const prime of primes) pool.add(prime);
  return removeContained(primes);
}

// ---------------------------------------------------------------------------------------------
// IRREDUNDANT: keep a small subset of the cover that still covers it. Cubes covered by nothing
// else are relatively essential; cubes covered by those plus don't-cares are totally redundant;
// the rest (partially redundant) go into a covering problem built from the leaves of the
// tautology check of each one against the others.
// ---------------------------------------------------------------------------------------------

/** Leaf rows (sets of partially redundant cubes, each leaf needs one of them) are capped here. */
const IRREDUNDANT_ROW_LIMIT = 20000;

interface TaggedCube {
  readonly cube: Cube;
  readonly column: number;
}

function collectLeafRows(
  fixedCubes: Cube[],
  partial: TaggedCube[],
  self: number,
  space: CubeSpace,
  rows: Map<string, number[]>,
): boolean {
  if (fixedCubes.some((c) => isInputUniversal(c, space))) return true;
  const full = partial.filter((t) => isInputUniversal(t.cube, space));
  if (full.length > 0) {
    const columns = [self, ...full.map((t) => t.column)].sort((a, b) => a - b);
    rows.set(columns.join(','), columns);
    return rows.size <= IRREDUNDANT_ROW_LIMIT;
  }
  if (tautology(fixedCubes, space)) return true;
  const splitIndex = splitInputOf([...fixedCubes, ...partial.map((t) => t.cube)], space);
  invariant(splitIndex >= 0, 'IRREDUNDANT: a partially redundant cube is not covered by the rest of the cover');
  for (const value of [1, 0] as const) {
    const fixedHalf = cofactorOnInput(fixedCubes, splitIndex, value);
    const partialHalf: TaggedCube[] = [];
    const bit = 1 << splitIndex;
    for (const t of partial) {
      if ((value === 1 ? t.cube.ones : t.cube.zeros) & bit) {
        partialHalf.push({ cube: cofactorOnInput([t.cube], splitIndex, value)[0], column: t.column });
      }
    }
    if (!collectLeafRows(fixedHalf, partialHalf, self, space, rows)) return false;
  }
  return true;
}

/** Indexes of a subset of `cover` that, with the don't-cares, still covers all of `cover`. */
export function irredundantIndexes(cover: readonly Cube[], dc: readonly Cube[], space: CubeSpace): number[] {
  const relativelyEssential: number[] = [];
  const redundant: number[] = [];
  cover.forEach((c, index) => {
    (coveredByOthers(c, c, [cover, dc], space) ? redundant : relativelyEssential).push(index);
  });
  if (redundant.length === 0) return relativelyEssential;
  // The fixed part: relatively essential cubes plus don't-cares (kept as two lists, the
  // don't-care list can be long).
  const fixedLists = [relativelyEssential.map((i) => cover[i]), dc];
  const partial = redundant.filter((index) => !coveredByOthers(cover[index], null, fixedLists, space));
  if (partial.length === 0) return relativelyEssential;

  const rows = new Map<string, number[]>();
  let withinLimit = true;
  for (let column = 0; column < partial.length && withinLimit; column++) {
    const p = cover[partial[column]];
    for (const outputIndex of bitIndexes(p.outs & space.outputMask)) {
      const bit = 1 << outputIndex;
      const fixedCubes = cofactorOfOutputExcept(p, bit, null, fixedLists, space);
      const tagged: TaggedCube[] = [];
      partial.forEach((index, otherColumn) => {
        if (otherColumn === column || (cover[index].outs & bit) === 0) return;
        const cofactored = cofactorInputs([cover[index]], p, space);
        if (cofactored.length > 0) tagged.push({ cube: cofactored[0], column: otherColumn });
      });
      if (!collectLeafRows(fixedCubes, tagged, column, space, rows)) {
        withinLimit = false;
        break;
      }
    }
  }
  let keptPartial: number[];
  if (withinLimit) {
    const solution = solveUnateCover([...rows.values()], partial.length, { nodeLimit: 5000 });
    keptPartial = solution.columns.map((column) => partial[column]);
  } else {
    // Too many leaves: fall back to dropping partially redundant cubes one at a time, smallest first.
    keptPartial = [...partial];
    const bySize = [...partial].sort((a, b) => inputSize(cover[a], space) - inputSize(cover[b], space));
    for (const index of bySize) {
      const rest = keptPartial.filter((k) => k !== index).map((k) => cover[k]);
      if (coveredByOthers(cover[index], null, [...fixedLists, rest], space)) keptPartial = keptPartial.filter((k) => k !== index);
    }
  }
  return [...relativelyEssential, ...keptPartial].sort((a, b) => a - b);
}

export function irredundant(cover: readonly Cube[], dc: readonly Cube[], space: CubeSpace): Cube[] {
  return irredundantIndexes(cover, dc, space).map((index) => cover[index]);
}

// ---------------------------------------------------------------------------------------------
// ESSENTIAL primes: a prime c is essential unless the consensus of c with the rest of the
// cover (and the don't-cares) covers c.
// ---------------------------------------------------------------------------------------------

function consensus(q: Cube, c: Cube, space: CubeSpace): Cube | null {
  const inputConflicts = space.inputMask & ~((q.zeros & c.zeros) | (q.ones & c.ones));
  const outputsDisjoint = (q.outs & c.outs) === 0;
  const distance = popcount(inputConflicts) + (outputsDisjoint ? 1 : 0);
  if (distance === 0) return { zeros: q.zeros & c.zeros, ones: q.ones & c.ones, outs: q.outs & c.outs };
  if (distance > 1) return null;
  if (outputsDisjoint) return { zeros: q.zeros & c.zeros, ones: q.ones & c.ones, outs: q.outs | c.outs };
  return {
    zeros: (q.zeros & c.zeros) | inputConflicts,
    ones: (q.ones & c.ones) | inputConflicts,
    outs: q.outs & c.outs,
  };
}

/** Indexes of the essential primes of a prime cover. */
export function essentialIndexes(cover: readonly Cube[], dc: readonly Cube[], space: CubeSpace): number[] {
  const result: number[] = [];
  cover.forEach((c, index) => {
    const consensusCubes: Cube[] = [];
    const consider = (q: Cube) => {
      const k = consensus(q, c, space);
      if (k && !isInputVoid(k, space) && k.outs !== 0) consensusCubes.push(k);
    };
    cover.forEach((q, i) => {
      if (i !== index) consider(q);
    });
    dc.forEach(consider);
    if (!coversCube(consensusCubes, c, space)) result.push(index);
  });
  return result;
}

// ---------------------------------------------------------------------------------------------
// REDUCE: shrink each cube, in turn, to the smallest cube containing the points only it covers,
// which gives the next EXPAND room to move to a different, hopefully better, prime.
// ---------------------------------------------------------------------------------------------

/** The smallest cube holding the points of c not covered by the other cubes of `lists`, or null if there are none. */
function reduceCube(c: Cube, lists: readonly (readonly (Cube | null)[])[], space: CubeSpace): Cube | null {
  let zeros = 0;
  let ones = 0;
  let outs = 0;
  for (const outputIndex of bitIndexes(c.outs & space.outputMask)) {
    const bit = 1 << outputIndex;
    const cofactor = cofactorOfOutputExcept(c, bit, c, lists, space);
    const smallest = smallestCubeContainingComplement(cofactor, space);
    if (!smallest) continue;
    zeros |= c.zeros & smallest.zeros;
    ones |= c.ones & smallest.ones;
    outs |= bit;
  }
  if (outs === 0) return null;
  return { zeros, ones, outs };
}

/** The order REDUCE visits cubes in; alternating orders keeps the loop from circling one local minimum. */
export type ReduceOrder = 'largest-first' | 'weight';

function reduceOrder(cover: readonly Cube[], space: CubeSpace, order: ReduceOrder): number[] {
  const indexes = cover.map((_, index) => index);
  if (order === 'weight') {
    // Cubes made of common parts first (the reverse of EXPAND's order).
    return weightOrder(cover, space).reverse();
  }
  // The largest cube first, then the others by increasing distance from it: cubes near the
  // largest one shrink while it still overlaps them.
  const size = (c: Cube) => inputSize(c, space) * popcount(c.outs & space.outputMask);
  let largest = 0;
  for (const index of indexes) if (size(cover[index]) > size(cover[largest])) largest = index;
  const distance = (c: Cube) =>
    popcount(space.inputMask & ~((c.zeros & cover[largest].zeros) | (c.ones & cover[largest].ones))) +
    ((c.outs & cover[largest].outs) === 0 ? 1 : 0);
  return indexes.sort((a, b) => (a === largest ? -1 : b === largest ? 1 : distance(cover[a]) - distance(cover[b]) || size(cover[b]) - size(cover[a]) || a - b));
}

export function reduce(cover: readonly Cube[], dc: readonly Cube[], space: CubeSpace, order: ReduceOrder = 'largest-first'): Cube[] {
  const current: (Cube | null)[] = [...cover];
  for (const index of reduceOrder(cover, space, order)) {
    current[index] = reduceCube(current[index]!, [current, dc], space);
  }
  return current.filter((c): c is Cube => c !== null);
}

// ---------------------------------------------------------------------------------------------
// LAST_GASP: reduce every cube on its own (against the unreduced rest), expand the reduced cubes
// towards each other, and keep new primes that cover two or more of them.
// ---------------------------------------------------------------------------------------------

export function lastGasp(cover: readonly Cube[], dc: readonly Cube[], off: readonly Cube[], space: CubeSpace, pool?: PrimePool): Cube[] | null {
  const reduced: Cube[] = [];
  cover.forEach((c, index) => {
    const r = reduceCube(c, [cover, dc], space);
    if (r && !sameCube(r, c)) reduced.push(r);
  });
  if (reduced.length < 2) return null;
  const newPrimes: Cube[] = [];
  for (let index = 0; index < reduced.length; index++) {
    const alive = new Uint8Array(reduced.length).fill(1);
    alive[index] = 0;
    const prime = expandCube(reduced[index], reduced, alive, off, space);
    pool?.add(prime);
    const coveredCount = reduced.filter((r) => contains(prime, r)).length;
    if (coveredCount >= 2 && !newPrimes.some((p) => sameCube(p, prime))) newPrimes.push(prime);
  }
  if (newPrimes.length === 0) return null;
  return irredundant([...cover, ...newPrimes], dc, space);
}

// ---------------------------------------------------------------------------------------------
// The loop.
// ---------------------------------------------------------------------------------------------

/** Drops, per output, the output bits a cube does not need for that output (fewer terms per output pin). */
export function makeSparse(cover: readonly Cube[], dc: readonly Cube[], space: CubeSpace): Cube[] {
  if (space.nOutputs === 1) return [...cover];
  const outs = cover.map((c) => c.outs);
  const single = makeSpace(space.nInputs, 1);
  for (let outputIndex = 0; outputIndex < space.nOutputs; outputIndex++) {
    const bit = 1 << outputIndex;
    const members = cover.map((c, index) => ({ c, index })).filter(({ c }) => (c.outs & bit) !== 0);
    const projected = members.map(({ c }) => ({ zeros: c.zeros, ones: c.ones, outs: 1 }));
    const projectedDc = coverOfOutput(dc, bit).map((c) => ({ zeros: c.zeros, ones: c.ones, outs: 1 }));
    const kept = new Set(irredundantIndexes(projected, projectedDc, single));
    members.forEach(({ index }, k) => {
      if (!kept.has(k)) outs[index] &= ~bit;
    });
  }
  return cover.map((c, index) => ({ zeros: c.zeros, ones: c.ones, outs: outs[index] })).filter((c) => c.outs !== 0);
}

export interface EspressoOptions {
  /** When given, receives every prime produced on the way (for a later covering step). */
  readonly pool?: PrimePool;
  /**
   * Time bound: when `timeUp()` says so, the improvement passes stop and the cover reached so
   * far is returned (it is a correct cover after the first EXPAND/IRREDUNDANT, only perhaps not
   * the smallest). `stopped.early` is then set.
   */
  readonly timeUp?: () => boolean;
  readonly stopped?: { early: boolean };
}

/**
 * Runs Espresso-II and returns a cover of the ON-set inside ON ∪ DC: EXPAND and IRREDUNDANT,
 * essential primes set aside as don't-cares, REDUCE/EXPAND/IRREDUNDANT while the cost drops
 * (each idle pass retried once with the other REDUCE order), LAST_GASP, and finally the
 * output parts made sparse so no output carries a term it does not need.
 */
export function espresso(problem: EspressoProblem, options: EspressoOptions = {}): Cube[] {
  const pool = options.pool;
  const space = problem.space;
  const on = problem.on.filter((c) => !isInputVoid(c, space) && (c.outs & space.outputMask) !== 0);
  if (on.length === 0) return [];
  const dc = problem.dc.filter((c) => !isInputVoid(c, space) && (c.outs & space.outputMask) !== 0);
  const off = splitOutputs(problem.off ?? complement([...on, ...dc], space), space);

  const timeUp = () => {
    if (!options.timeUp?.()) return false;
    if (options.stopped) options.stopped.early = true;
    return true;
  };
  // The first EXPAND and IRREDUNDANT always run to the end: only then is the cover both correct
  // and of a useful size. The time bound stops the improvement passes after them.
  let cover = expand(on, off, space, pool);
  cover = irredundant(cover, dc, space);
  const essentials = new Set(essentialIndexes(cover, dc, space));
  const essentialCubes = cover.filter((_, index) => essentials.has(index));
  cover = cover.filter((_, index) => !essentials.has(index));
  const dcWithEssentials = [...dc, ...essentialCubes];

  for (;;) {
    // Iterate while the cost drops; a pass that does not help is retried once with the other
    // REDUCE order before giving up.
    let order: ReduceOrder = 'largest-first';
    let idlePasses = 0;
    while (idlePasses < 2 && !timeUp()) {
      const before = coverCost(cover, space);
      const next = irredundant(expand(reduce(cover, dcWithEssentials, space, order), off, space, pool), dcWithEssentials, space);
      const after = coverCost(next, space);
      if (after <= before) cover = next;
      idlePasses = after < before ? 0 : idlePasses + 1;
      order = order === 'largest-first' ? 'weight' : 'largest-first';
    }
    if (timeUp()) break;
    const gasp = lastGasp(cover, dcWithEssentials, off, space, pool);
    if (gasp && coverCost(gasp, space) < coverCost(cover, space)) {
      cover = gasp;
      continue;
    }
    break;
  }
  return makeSparse([...essentialCubes, ...cover], dc, space);
}
