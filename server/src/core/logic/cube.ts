// Cubes in positional notation and the cover operations the minimisers are built from:
// intersection, containment, cofactor, tautology, complement and the smallest cube containing
// a complement, the last three by the unate recursive paradigm (Brayton et al., "Logic
// Minimization Algorithms for VLSI Synthesis", 1984, ch. 3). It deliberately has no notion of
// truth tables, devices or minimisation strategy.
import { bitIndexes, lowMask, popcount } from './bits';
import type { ProductTerm } from './truthTable';
import { invariant } from './errors';

/**
 * A cube over up to 32 binary inputs plus an output part. For input i, bit i of `zeros` says
 * the cube allows value 0 and bit i of `ones` says it allows value 1: both set means the input
 * is absent from the product term, exactly one set is a literal, neither set is an empty cube.
 * Bit j of `outs` says the cube is a term of output j. All masks are stored as 32-bit ints.
 */
export interface Cube {
  readonly zeros: number;
  readonly ones: number;
  readonly outs: number;
}

/** The dimensions of the cubes being worked on. */
export interface CubeSpace {
  readonly nInputs: number;
  readonly inputMask: number;
  readonly nOutputs: number;
  readonly outputMask: number;
}

export function makeSpace(nInputs: number, nOutputs: number): CubeSpace {
  invariant(nInputs >= 0 && nInputs <= 32, `cube inputs ${nInputs}`);
  invariant(nOutputs >= 1 && nOutputs <= 32, `cube outputs ${nOutputs}`);
  return { nInputs, inputMask: lowMask(nInputs), nOutputs, outputMask: lowMask(nOutputs) };
}

/** The cube containing every input combination for every output. */
export function universe(space: CubeSpace): Cube {
  return { zeros: space.inputMask, ones: space.inputMask, outs: space.outputMask };
}

export function cubeFromTerm(term: ProductTerm, outs: number, space: CubeSpace): Cube {
  const mask = space.inputMask;
  return { zeros: mask & ~(term.care & term.value), ones: mask & ~(term.care & ~term.value), outs: outs | 0 };
}

export function termFromCube(cube: Cube, space: CubeSpace): ProductTerm {
  const care = (cube.zeros ^ cube.ones) & space.inputMask;
  return { care: care >>> 0, value: (cube.ones & care) >>> 0 };
}

/** Inputs that appear as literals in the cube. */
export function literalMask(cube: Cube, space: CubeSpace): number {
  return (cube.zeros ^ cube.ones) & space.inputMask;
}

export function literalCount(cube: Cube, space: CubeSpace): number {
  return popcount(literalMask(cube, space));
}

export function isInputVoid(cube: Cube, space: CubeSpace): boolean {
  return ((cube.zeros | cube.ones) & space.inputMask) !== space.inputMask;
}

export function isInputUniversal(cube: Cube, space: CubeSpace): boolean {
  return (cube.zeros & cube.ones & space.inputMask) === space.inputMask;
}

export function intersect(a: Cube, b: Cube): Cube {
  return { zeros: a.zeros & b.zeros, ones: a.ones & b.ones, outs: a.outs & b.outs };
}

export function inputsIntersect(a: Cube, b: Cube, space: CubeSpace): boolean {
  return (((a.zeros & b.zeros) | (a.ones & b.ones)) & space.inputMask) === space.inputMask;
}

/** Whether a and b share at least one (input combination, output) point. */
export function cubesIntersect(a: Cube, b: Cube, space: CubeSpace): boolean {
  return (a.outs & b.outs) !== 0 && inputsIntersect(a, b, space);
}

/** Whether cube a contains cube b, output parts included. */
export function contains(a: Cube, b: Cube): boolean {
  return (a.zeros & b.zeros) === b.zeros && (a.ones & b.ones) === b.ones && (a.outs & b.outs) === b.outs;
}

export function inputContains(a: Cube, b: Cube, space: CubeSpace): boolean {
  const mask = space.inputMask;
  return (a.zeros & b.zeros & mask) === (b.zeros & mask) && (a.ones & b.ones & mask) === (b.ones & mask);
}

export function supercube(a: Cube, b: Cube): Cube {
  return { zeros: a.zeros | b.zeros, ones: a.ones | b.ones, outs: a.outs | b.outs };
}

/** Number of inputs on which the cubes are disjoint. */
export function inputDistance(a: Cube, b: Cube, space: CubeSpace): number {
  return popcount(space.inputMask & ~((a.zeros & b.zeros) | (a.ones & b.ones)));
}

export function sameCube(a: Cube, b: Cube): boolean {
  return a.zeros === b.zeros && a.ones === b.ones && a.outs === b.outs;
}

/** Minterm count of the input part, as a float (exact below 2^53). */
export function inputSize(cube: Cube, space: CubeSpace): number {
  return 2 ** popcount(cube.zeros & cube.ones & space.inputMask);
}

/**
 * The cofactor of a cover with respect to the input part of cube p: the cubes whose inputs
 * meet p, each widened on p's literals. The result is a tautology exactly when p's input part
 * is covered. Output parts are kept as they are.
 */
export function cofactorInputs(cover: readonly Cube[], p: Cube, space: CubeSpace): Cube[] {
  const mask = space.inputMask;
  const widenZeros = ~p.zeros & mask;
  const widenOnes = ~p.ones & mask;
  const result: Cube[] = [];
  for (const c of cover) {
    if ((((c.zeros & p.zeros) | (c.ones & p.ones)) & mask) !== mask) continue;
    result.push({ zeros: c.zeros | widenZeros, ones: c.ones | widenOnes, outs: c.outs });
  }
  return result;
}

/**
 * The cofactor, with respect to the input part of p, of the cubes of output bit `outputBit`
 * found in `lists`, leaving out the cube object `skip` and null entries. It is the same as
 * cofactorInputs(coverOfOutput(...)) without building the intermediate arrays.
 */
export function cofactorOfOutputExcept(
  p: Cube,
  outputBit: number,
  skip: Cube | null,
  lists: readonly (readonly (Cube | null)[])[],
  space: CubeSpace,
): Cube[] {
  const mask = space.inputMask;
  const widenZeros = ~p.zeros & mask;
  const widenOnes = ~p.ones & mask;
  const result: Cube[] = [];
  for (const list of lists) {
    for (const c of list) {
      if (c === null || c === skip || (c.outs & outputBit) === 0) continue;
      if ((((c.zeros & p.zeros) | (c.ones & p.ones)) & mask) !== mask) continue;
      result.push({ zeros: c.zeros | widenZeros, ones: c.ones | widenOnes, outs: c.outs });
    }
  }
  return result;
}

/** Whether the cubes of `lists` other than `skip` cover cube p, for every output of p. */
export function coveredByOthers(p: Cube, skip: Cube | null, lists: readonly (readonly (Cube | null)[])[], space: CubeSpace): boolean {
  for (const outputIndex of bitIndexes(p.outs & space.outputMask)) {
    if (!tautology(cofactorOfOutputExcept(p, 1 << outputIndex, skip, lists, space), space)) return false;
  }
  return true;
}

/** The cubes of a cover that are terms of output bit `outputBit`. */
export function coverOfOutput(cover: readonly Cube[], outputBit: number): Cube[] {
  return cover.filter((c) => (c.outs & outputBit) !== 0);
}

/** Shannon cofactor on input `inputIndex` = value (only input parts matter). */
export function cofactorOnInput(cover: readonly Cube[], inputIndex: number, value: 0 | 1): Cube[] {
  const bit = 1 << inputIndex;
  const result: Cube[] = [];
  for (const c of cover) {
    if (value === 1) {
      if (c.ones & bit) result.push(c.zeros & bit ? c : { zeros: c.zeros | bit, ones: c.ones, outs: c.outs });
    } else if (c.zeros & bit) {
      result.push(c.ones & bit ? c : { zeros: c.zeros, ones: c.ones | bit, outs: c.outs });
    }
  }
  return result;
}

interface ColumnSummary {
  /** Inputs with a complemented literal in some cube. */
  readonly anyZero: number;
  /** Inputs with a true literal in some cube. */
  readonly anyOne: number;
  /** Whether some cube has no literal at all (covers every input combination). */
  readonly hasUniversal: boolean;
}

function summarise(cover: readonly Cube[], mask: number): ColumnSummary {
  let anyZero = 0;
  let anyOne = 0;
  let hasUniversal = false;
  for (const c of cover) {
    const onlyZero = c.zeros & ~c.ones & mask;
    const onlyOne = c.ones & ~c.zeros & mask;
    if ((onlyZero | onlyOne) === 0) hasUniversal = true;
    anyZero |= onlyZero;
    anyOne |= onlyOne;
  }
  return { anyZero, anyOne, hasUniversal };
}

/**
 * The input to split on: the binate input with the most literals (ties go to the more
 * balanced one), or, in a unate cover, the input with the most literals. -1 when no cube has
 * a literal.
 */
function chooseSplitInput(cover: readonly Cube[], mask: number, binate: number): number {
  const candidates = binate !== 0 ? binate : mask;
  const zeroCounts = new Int32Array(32);
  const oneCounts = new Int32Array(32);
  for (const c of cover) {
    let onlyZero = c.zeros & ~c.ones & candidates;
    while (onlyZero !== 0) {
      zeroCounts[31 - Math.clz32(onlyZero & -onlyZero)]++;
      onlyZero &= onlyZero - 1;
    }
    let onlyOne = c.ones & ~c.zeros & candidates;
    while (onlyOne !== 0) {
      oneCounts[31 - Math.clz32(onlyOne & -onlyOne)]++;
      onlyOne &= onlyOne - 1;
    }
  }
  let best = -1;
  let bestTotal = 0;
  let bestBalance = -1;
  for (const inputIndex of bitIndexes(candidates)) {
    const total = zeroCounts[inputIndex] + oneCounts[inputIndex];
    const balance = Math.min(zeroCounts[inputIndex], oneCounts[inputIndex]);
    if (total > bestTotal || (total === bestTotal && total > 0 && balance > bestBalance)) {
      best = inputIndex;
      bestTotal = total;
      bestBalance = balance;
    }
  }
  return best;
}

/** The input a recursive cover algorithm should split on next, or -1 when no cube has a literal. */
export function splitInputOf(cover: readonly Cube[], space: CubeSpace): number {
  const summary = summarise(cover, space.inputMask);
  return chooseSplitInput(cover, space.inputMask, summary.anyZero & summary.anyOne);
}

/**
 * Whether the input parts of a cover cover every input combination (output parts ignored).
 * Unate recursive paradigm: a unate cover is a tautology only if it holds the universal cube;
 * cubes with literals in unate inputs can be dropped; a cover whose cubes hold fewer minterms
 * in total than the space cannot be a tautology; otherwise split on the most binate input.
 */
export function tautology(cover: readonly Cube[], space: CubeSpace): boolean {
  return tautologyWithin(cover, space.inputMask);
}

function tautologyWithin(cover: readonly Cube[], mask: number): boolean {
  if (cover.length === 0) return false;
  const summary = summarise(cover, mask);
  if (summary.hasUniversal) return true;
  const binate = summary.anyZero & summary.anyOne;
  if (binate === 0) return false;
  const unate = (summary.anyZero | summary.anyOne) & ~binate;
  let work = cover;
  if (unate !== 0) {
    work = cover.filter((c) => ((c.zeros ^ c.ones) & unate) === 0);
    if (work.length === 0) return false;
    if (work.length !== cover.length) return tautologyWithin(work, mask);
  }
  let mintermTotal = 0;
  const nFree = popcount(mask);
  for (const c of work) mintermTotal += 2 ** (nFree - popcount((c.zeros ^ c.ones) & mask));
  if (mintermTotal < 2 ** nFree) return false;
  const splitIndex = chooseSplitInput(work, mask, binate);
  return (
    tautologyWithin(cofactorOnInput(work, splitIndex, 1), mask) &&
    tautologyWithin(cofactorOnInput(work, splitIndex, 0), mask)
  );
}

/** Whether the input parts of a cover cover the input part of cube p. */
export function coversInputs(cover: readonly Cube[], p: Cube, space: CubeSpace): boolean {
  return tautology(cofactorInputs(cover, p, space), space);
}

/** Whether a multi-output cover covers cube p: for every output of p, p's inputs are covered by that output's cubes. */
export function coversCube(cover: readonly Cube[], p: Cube, space: CubeSpace): boolean {
  return coveredByOthers(p, null, [cover], space);
}

/** Removes cubes contained in another cube of the list (and duplicates), keeping the first of equals. */
export function removeContained(cover: readonly Cube[]): Cube[] {
  const order = cover.map((_, index) => index);
  // Bigger cubes first, so each cube only needs comparing with the cubes already kept.
  const size = cover.map((c) => popcount(c.zeros) + popcount(c.ones) + popcount(c.outs));
  order.sort((a, b) => size[b] - size[a] || a - b);
  const kept: Cube[] = [];
  for (const index of order) {
    const c = cover[index];
    if (!kept.some((k) => contains(k, c))) kept.push(c);
  }
  return kept;
}

/**
 * The complement of the input parts of a cover, as a cover whose cubes all carry output part
 * `outs`. Unate recursive paradigm: split on the most binate input, complement both
 * cofactors, and merge (cubes found on both sides lose the split literal).
 */
export function complementInputs(cover: readonly Cube[], space: CubeSpace, outs: number): Cube[] {
  return complementWithin(cover, space.inputMask).map((c) => ({ zeros: c.zeros, ones: c.ones, outs }));
}

function complementWithin(cover: readonly Cube[], mask: number): Cube[] {
  if (cover.length === 0) return [{ zeros: mask, ones: mask, outs: 0 }];
  const summary = summarise(cover, mask);
  if (summary.hasUniversal) return [];
  if (cover.length === 1) {
    // De Morgan: the complement of a product is the sum of its complemented literals.
    const c = cover[0];
    const result: Cube[] = [];
    for (const inputIndex of bitIndexes((c.zeros ^ c.ones) & mask)) {
      const bit = 1 << inputIndex;
      result.push(c.ones & bit ? { zeros: mask, ones: mask & ~bit, outs: 0 } : { zeros: mask & ~bit, ones: mask, outs: 0 });
    }
    return result;
  }
  const binate = summary.anyZero & summary.anyOne;
  const splitIndex = chooseSplitInput(cover, mask, binate);
  invariant(splitIndex >= 0, 'complement: no input to split on');
  const bit = 1 << splitIndex;
  const whenOne = complementWithin(cofactorOnInput(cover, splitIndex, 1), mask);
  const whenZero = complementWithin(cofactorOnInput(cover, splitIndex, 0), mask);
  const zeroKeys = new Set(whenZero.map((c) => `${c.zeros},${c.ones}`));
  const shared = new Set<string>();
  const result: Cube[] = [];
  for (const c of whenOne) {
    const key = `${c.zeros},${c.ones}`;
    if (zeroKeys.has(key)) {
      shared.add(key);
      result.push(c);
    } else {
      result.push({ zeros: c.zeros & ~bit, ones: c.ones, outs: 0 });
    }
  }
  for (const c of whenZero) {
    if (!shared.has(`${c.zeros},${c.ones}`)) result.push({ zeros: c.zeros, ones: c.ones & ~bit, outs: 0 });
  }
  return result.length <= 512 ? removeContained(result) : result;
}

/** The OFF-set of a multi-output cover: for each output, the complement of that output's cubes, with single-output cubes. */
export function complement(cover: readonly Cube[], space: CubeSpace): Cube[] {
  const result: Cube[] = [];
  for (let outputIndex = 0; outputIndex < space.nOutputs; outputIndex++) {
    const bit = 1 << outputIndex;
    for (const c of complementInputs(coverOfOutput(cover, bit), space, bit)) result.push(c);
  }
  return result;
}

/**
 * The smallest cube containing the complement of the input parts of a cover, or null when the
 * cover is a tautology (its complement is empty). Used by REDUCE. The returned cube has output
 * part 0; callers attach their own.
 */
export function smallestCubeContainingComplement(cover: readonly Cube[], space: CubeSpace): Cube | null {
  return scccWithin(cover, space.inputMask);
}

function scccWithin(cover: readonly Cube[], mask: number): Cube | null {
  if (cover.length === 0) return { zeros: mask, ones: mask, outs: 0 };
  const summary = summarise(cover, mask);
  if (summary.hasUniversal) return null;
  if (cover.length === 1) {
    const literals = (cover[0].zeros ^ cover[0].ones) & mask;
    if (popcount(literals) >= 2) return { zeros: mask, ones: mask, outs: 0 };
    // A single literal x: the complement is the cube x'.
    return cover[0].ones & literals
      ? { zeros: mask, ones: mask & ~literals, outs: 0 }
      : { zeros: mask & ~literals, ones: mask, outs: 0 };
  }
  const binate = summary.anyZero & summary.anyOne;
  const splitIndex = chooseSplitInput(cover, mask, binate);
  invariant(splitIndex >= 0, 'smallest cube of complement: no input to split on');
  const bit = 1 << splitIndex;
  const whenOne = scccWithin(cofactorOnInput(cover, splitIndex, 1), mask);
  const whenZero = scccWithin(cofactorOnInput(cover, splitIndex, 0), mask);
  const restrictedOne = whenOne && { zeros: whenOne.zeros & ~bit, ones: whenOne.ones, outs: 0 };
  const restrictedZero = whenZero && { zeros: whenZero.zeros, ones: whenZero.ones & ~bit, outs: 0 };
  if (!restrictedOne) return restrictedZero;
  if (!restrictedZero) return restrictedOne;
  return supercube(restrictedOne, restrictedZero);
}
