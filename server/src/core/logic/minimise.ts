// The entry point that turns a truth table into minimised sums of products, one per output:
// builds cube covers from the table's bitsets, picks the method (exact up to MAX_EXACT_INPUTS
// inputs; Espresso above, then a covering step over the primes Espresso met, and exact
// minimisation on the inputs an output really depends on when they are few; the smallest
// verified cover wins), optionally picks the output polarity with fewer terms, optionally
// shares terms between outputs, and verifies every result exhaustively against the table
// before returning it. It deliberately knows nothing about devices.
import { bitIndexes, lowMask, popcount } from './bits';
import { type Cube, type CubeSpace, makeSpace, termFromCube } from './cube';
import { LogicInputError, LogicInvariantError } from './errors';
import { PrimePool, espresso } from './espresso';
import { solveUnateCover } from './unateCover';
import { MAX_EXACT_INPUTS, MAX_QM_INPUTS, minimiseExact } from './qm';
import { complementNeedsAtLeast } from './polarityBound';
import { type ProductTerm, type TruthTable, checkTable, validBitsOfWord, verifyCover, wordsFor } from './truthTable';

export interface MinimiseOptions {
  /** 'positive' minimises each output as given; 'best' also tries its complement and keeps the smaller. */
  readonly polarity?: 'positive' | 'best';
  /** 'auto' = exact up to MAX_EXACT_INPUTS inputs, Espresso above. */
  readonly method?: 'auto' | 'exact' | 'espresso';
  /** Minimise outputs together so they can share product terms (multi-output Espresso). */
  readonly shareTerms?: boolean;
  /** Names of the outputs to minimise; all when absent. */
  readonly outputs?: readonly string[];
  /**
   * Time bound per output, in milliseconds: past it, improvement stops and the correct cover
   * reached so far is kept, with a note (it may have more terms than needed). Default: none.
   */
  readonly timePerOutputMs?: number;
  /** The clock the time bound reads (milliseconds); tests give their own. */
  readonly clock?: () => number;
  /** Called after each output: how many of how many are done, and the one just finished. */
  readonly onProgress?: (done: number, total: number, name: string) => void;
}

export type MinimiseMethod = 'exact' | 'exact-on-support' | 'espresso' | 'espresso-shared';

export interface MinimisedOutput {
  readonly name: string;
  readonly outputIndex: number;
  /** True when `terms` describe the complement: the output is NOT(sum of terms). */
  readonly inverted: boolean;
  readonly terms: ProductTerm[];
  readonly method: MinimiseMethod;
  /** True when the term count is proven minimal for the chosen polarity. */
  readonly provedMinimal: boolean;
  /** Set when the time bound stopped the minimisation early: what was kept and why. */
  readonly note?: string;
}

export interface Minimised {
  readonly inputNames: readonly string[];
  readonly nInputs: number;
  readonly outputs: MinimisedOutput[];
}

/** The three sets of one single-output function as bitsets. */
interface FunctionBits {
  readonly on: Uint32Array;
  readonly dc: Uint32Array;
  readonly nInputs: number;
}

function offBits(f: FunctionBits): Uint32Array {
  const off = new Uint32Array(f.on.length);
  const valid = validBitsOfWord(f.nInputs);
  for (let i = 0; i < off.length; i++) off[i] = ~(f.on[i] | f.dc[i]) & valid;
  return off;
}

function complementFunction(f: FunctionBits): FunctionBits {
  return { on: offBits(f), dc: f.dc, nInputs: f.nInputs };
}

/**
 * Covers of the regions of the minterm space that lie inside `allowed` and meet `wanted`,
 * found by splitting on the highest input first (a BDD-like walk over the bitset).
 */
function regionCover(allowed: Uint32Array, wanted: Uint32Array, nInputs: number, outs: number, space: CubeSpace): Cube[] {
  const cubes: Cube[] = [];
  const inputMask = space.inputMask;
  const valid = validBitsOfWord(nInputs);
  // Region = minterms whose inputs >= freeInputs equal `prefix` (the low `freeInputs` inputs are free).
  const walk = (prefix: number, freeInputs: number) => {
    let anyWanted = false;
    let allAllowed = true;
    if (freeInputs >= 5) {
      const firstWord = prefix >>> 5;
      const nWords = 1 << (freeInputs - 5);
      for (let w = firstWord; w < firstWord + nWords; w++) {
        if (wanted[w] !== 0) anyWanted = true;
        if (~allowed[w] & valid) allAllowed = false;
        if (anyWanted && !allAllowed) break;
      }
    } else {
      const bitMask = lowMask(1 << freeInputs) << (prefix & 31);
      const w = prefix >>> 5;
      anyWanted = (wanted[w] & bitMask) !== 0;
      allAllowed = (~allowed[w] & bitMask & valid) === 0;
    }
    if (!anyWanted) return;
    if (allAllowed) {
      const fixedMask = inputMask & ~lowMask(freeInputs);
      cubes.push({ zeros: inputMask & ~(fixedMask & prefix), ones: inputMask & ~(fixedMask & ~prefix), outs });
      return;
    }
    const splitBit = 1 << (freeInputs - 1);
    walk(prefix, freeInputs - 1);
    walk(prefix | splitBit, freeInputs - 1);
  };
  walk(0, nInputs);
  return cubes;
}

function orBits(a: Uint32Array, b: Uint32Array): Uint32Array {
  const result = new Uint32Array(a.length);
  for (let i = 0; i < a.length; i++) result[i] = a[i] | b[i];
  return result;
}

/** Above this many ON minterms Espresso starts from region cubes instead of single minterms. */
const MINTERM_START_LIMIT = 4096;

/**
 * The ON cover Espresso starts from. Single minterms let EXPAND choose every direction freely
 * (better results on irregular functions in our trials); big ON-sets start from the region
 * cubes so that the first EXPAND does not face hundreds of thousands of cubes.
 */
function startCover(f: FunctionBits, outs: number, space: CubeSpace): Cube[] {
  const minterms: Cube[] = [];
  for (let wordIndex = 0; wordIndex < f.on.length; wordIndex++) {
    let word = f.on[wordIndex];
    while (word !== 0) {
      const minterm = wordIndex * 32 + (31 - Math.clz32(word & -word));
      word &= word - 1;
      minterms.push({ zeros: space.inputMask & ~minterm, ones: space.inputMask & minterm, outs });
      if (minterms.length > MINTERM_START_LIMIT) return regionCover(orBits(f.on, f.dc), f.on, f.nInputs, outs, space);
    }
  }
  return minterms;
}

/** ON, don't-care and OFF covers of several single-output functions, output j tagged with bit j. */
function coversOf(functions: readonly FunctionBits[], space: CubeSpace): { on: Cube[]; dc: Cube[]; off: Cube[] } {
  const on: Cube[] = [];
  const dc: Cube[] = [];
  const off: Cube[] = [];
  functions.forEach((f, outputIndex) => {
    const bit = 1 << outputIndex;
    const offSet = offBits(f);
    // Loops, not push(...cubes): a spread of a few hundred thousand cubes overflows the stack.
    for (const c of startCover(f, bit, space)) on.push(c);
    for (const c of regionCover(f.dc, f.dc, f.nInputs, bit, space)) dc.push(c);
    for (const c of regionCover(offSet, offSet, f.nInputs, bit, space)) off.push(c);
  });
  return { on, dc, off };
}

interface SingleResult {
  readonly terms: ProductTerm[];
  readonly method: MinimiseMethod;
  readonly provedMinimal: boolean;
}

function literalTotal(terms: readonly ProductTerm[]): number {
  return terms.reduce((sum, term) => sum + popcount(term.care), 0);
}

function better(a: SingleResult, b: SingleResult): SingleResult {
  if (b.terms.length !== a.terms.length) return b.terms.length < a.terms.length ? b : a;
  return literalTotal(b.terms) < literalTotal(a.terms) ? b : a;
}

/**
 * Drops inputs the function can ignore, one at a time: input i can go when no ON minterm and
 * OFF minterm differ only in i. Merged pairs become ON if either was ON, OFF if either was OFF.
 */
function reduceSupport(f: FunctionBits): { kept: number[]; reduced: FunctionBits } {
  let kept = Array.from({ length: f.nInputs }, (_, i) => i);
  let current = f;
  for (let position = current.nInputs - 1; position >= 0; position--) {
    const off = offBits(current);
    if (!independentOf(current.on, off, current.nInputs, position)) continue;
    current = dropInput(current, off, position);
    kept = kept.filter((_, k) => k !== position);
  }
  return { kept, reduced: current };
}

function independentOf(on: Uint32Array, off: Uint32Array, nInputs: number, position: number): boolean {
  if (position >= 5) {
    const stride = 1 << (position - 5);
    for (let w = 0; w < on.length; w++) {
      if (w & stride) continue;
      if ((on[w] & off[w | stride]) !== 0 || (off[w] & on[w | stride]) !== 0) return false;
    }
    return true;
  }
  const shift = 1 << position;
  const lowHalf = lowHalfMask(position) & validBitsOfWord(nInputs);
  for (let w = 0; w < on.length; w++) {
    if (((on[w] & lowHalf) & ((off[w] >>> shift) & lowHalf)) !== 0) return false;
    if (((off[w] & lowHalf) & ((on[w] >>> shift) & lowHalf)) !== 0) return false;
  }
  return true;
}

/** Bits of a word whose minterm index has bit `position` (< 5) clear. */
function lowHalfMask(position: number): number {
  let mask = 0;
  for (let bitIndex = 0; bitIndex < 32; bitIndex++) if (((bitIndex >> position) & 1) === 0) mask |= 1 << bitIndex;
  return mask;
}

function dropInput(f: FunctionBits, off: Uint32Array, position: number): FunctionBits {
  const nInputs = f.nInputs - 1;
  const on = new Uint32Array(wordsFor(nInputs));
  const newOff = new Uint32Array(wordsFor(nInputs));
  const nMinterms = 2 ** nInputs;
  const below = (1 << position) - 1;
  const bit = (set: Uint32Array, m: number) => (set[m >>> 5] >>> (m & 31)) & 1;
  for (let m = 0; m < nMinterms; m++) {
    const m0 = ((m & ~below) << 1) | (m & below);
    const m1 = m0 | (1 << position);
    const isOn = bit(f.on, m0) | bit(f.on, m1);
    const isOff = bit(off, m0) | bit(off, m1);
    if (isOn) on[m >>> 5] |= 1 << (m & 31);
    else if (isOff) newOff[m >>> 5] |= 1 << (m & 31);
  }
  const valid = validBitsOfWord(nInputs);
  const dc = on.map((word, i) => ~(word | newOff[i]) & valid);
  return { on, dc, nInputs };
}

function liftTerm(term: ProductTerm, kept: readonly number[]): ProductTerm {
  let care = 0;
  let value = 0;
  for (const k of bitIndexes(term.care)) {
    care |= 1 << kept[k];
    if (term.value & (1 << k)) value |= 1 << kept[k];
  }
  return { care: care >>> 0, value: value >>> 0 };
}

/** Most ON minterms for which the prime-pool covering step is attempted. */
const POOL_ROW_LIMIT = 20000;

/** Branch-and-bound nodes for covering steps inside the automatic strategy. */
const COVER_NODE_LIMIT = 2000;

/** Above MAX_EXACT_INPUTS, exact minimisation is only tried when the function has at most this many primes. */
const EXACT_ATTEMPT_PRIME_LIMIT = 1500;

/**
 * Espresso, followed by a covering step over every prime EXPAND produced during the run, with
 * one row per ON minterm: IRREDUNDANT only chooses among the primes of the current cover, so
 * primes dropped in earlier iterations can sometimes make a smaller cover. The smaller of the
 * two covers is kept.
 */
/** The time bound of one output's minimisation: whether it is up, and whether it stopped anything. */
interface TimeBound {
  readonly timeUp: () => boolean;
  readonly stopped: { early: boolean };
}

const unbounded: TimeBound = { timeUp: () => false, stopped: { early: false } };

function minimiseEspressoSingle(f: FunctionBits, bound: TimeBound = unbounded): SingleResult {
  const space = makeSpace(f.nInputs, 1);
  const covers = coversOf([f], space);
  const pool = new PrimePool();
  const cover = espresso({ space, ...covers }, { pool, timeUp: bound.timeUp, stopped: bound.stopped });
  const result: SingleResult = { terms: cover.map((c) => termFromCube(c, space)), method: 'espresso', provedMinimal: false };
  const pooled = coverFromPool(f, pool.primes().map((c) => termFromCube(c, space)));
  return pooled ? better(result, { terms: pooled, method: 'espresso', provedMinimal: false }) : result;
}

function coverFromPool(f: FunctionBits, primes: ProductTerm[]): ProductTerm[] | null {
  if (primes.length === 0) return null;
  const rowOf = new Map<number, number>();
  for (let wordIndex = 0; wordIndex < f.on.length; wordIndex++) {
    let word = f.on[wordIndex];
    while (word !== 0) {
      rowOf.set(wordIndex * 32 + (31 - Math.clz32(word & -word)), rowOf.size);
      word &= word - 1;
      if (rowOf.size > POOL_ROW_LIMIT) return null;
    }
  }
  const rows: number[][] = Array.from({ length: rowOf.size }, () => []);
  const full = lowMask(f.nInputs);
  primes.forEach((prime, column) => {
    const free = full & ~prime.care;
    let subset = 0;
    do {
      const rowIndex = rowOf.get(prime.value | subset);
      if (rowIndex !== undefined) rows[rowIndex].push(column);
      subset = (subset - free) & free;
    } while (subset !== 0);
  });
  if (rows.some((row) => row.length === 0)) return null;
  const solution = solveUnateCover(rows, primes.length, { nodeLimit: COVER_NODE_LIMIT });
  return solution.columns.map((column) => primes[column]);
}

function exactResult(f: FunctionBits, nodeLimit: number, maxPrimes?: number): SingleResult | null {
  const exact = minimiseExact(f.on, f.dc, f.nInputs, { nodeLimit, maxPrimes });
  return exact && { terms: exact.terms, method: 'exact', provedMinimal: exact.provedMinimal };
}

/**
 * One output, one polarity. 'exact' insists on the exact method; 'espresso' runs Espresso
 * only; 'auto' is exact up to MAX_EXACT_INPUTS inputs (falling back to the better of the best
 * cover found and Espresso when the covering search cannot prove a minimum), and Espresso
 * above, improved where possible by exact minimisation on the inputs the output really needs.
 */
function minimiseSingle(f: FunctionBits, method: 'auto' | 'exact' | 'espresso', bound: TimeBound = unbounded): SingleResult {
  if (method === 'exact') {
    if (f.nInputs > MAX_EXACT_INPUTS) {
      throw new LogicInputError(
        `exact minimisation handles at most ${MAX_EXACT_INPUTS} inputs; the table has ${f.nInputs} (use method "auto" or "espresso")`,
      );
    }
    return exactResult(f, 50000)!;
  }
  if (method === 'espresso') return minimiseEspressoSingle(f, bound);
  if (f.nInputs <= MAX_EXACT_INPUTS) {
    const exact = exactResult(f, COVER_NODE_LIMIT)!;
    return exact.provedMinimal ? exact : better(exact, minimiseEspressoSingle(f, bound));
  }
  let result = minimiseEspressoSingle(f, bound);
  if (bound.timeUp()) return result;
  // Many control outputs depend on few address lines: minimise exactly on those alone when
  // they are few enough, and keep whichever cover is smaller.
  const { kept, reduced } = reduceSupport(f);
  if (reduced.nInputs <= MAX_QM_INPUTS) {
    const limit = reduced.nInputs <= MAX_EXACT_INPUTS ? undefined : EXACT_ATTEMPT_PRIME_LIMIT;
    const exact = exactResult(reduced, COVER_NODE_LIMIT, limit);
    if (exact) {
      const onFullTable = reduced.nInputs === f.nInputs;
      const lifted: SingleResult = {
        terms: exact.terms.map((term) => liftTerm(term, kept)),
        method: onFullTable ? 'exact' : 'exact-on-support',
        provedMinimal: onFullTable && exact.provedMinimal,
      };
      result = better(result, lifted);
    }
  }
  return result;
}

function checkResult(table: TruthTable, outputIndex: number, terms: readonly ProductTerm[], inverted: boolean): void {
  const check = verifyCover(table, outputIndex, terms, inverted);
  if (!check.ok) {
    throw new LogicInvariantError(
      `the minimised cover of output "${table.outputs[outputIndex].name}" gives ${check.actual} at address ${check.minterm} where the table says ${check.expected}`,
    );
  }
}

function selectOutputs(table: TruthTable, names: readonly string[] | undefined): number[] {
  if (!names) return table.outputs.map((_, index) => index);
  return names.map((name) => {
    const index = table.outputs.findIndex((output) => output.name === name);
    if (index < 0) throw new LogicInputError(`the table has no output called "${name}"`);
    return index;
  });
}

/**
 * Minimises every selected output of a table. The result of every output is checked on every
 * care address of the table; a disagreement is an internal error (LogicInvariantError).
 */
export function minimise(table: TruthTable, options: MinimiseOptions = {}): Minimised {
  checkTable(table);
  const method = options.method ?? 'auto';
  const polarity = options.polarity ?? 'positive';
  const selected = selectOutputs(table, options.outputs);

  const clock = options.clock ?? Date.now;
  const singles = selected.map((outputIndex, k) => {
    const output = table.outputs[outputIndex];
    const f: FunctionBits = { on: output.on, dc: output.dc, nInputs: table.nInputs };
    // One bound for the whole output, both polarities: the complement is tried only with time left.
    const deadline = options.timePerOutputMs === undefined ? Infinity : clock() + options.timePerOutputMs;
    const bound: TimeBound = { timeUp: () => clock() >= deadline, stopped: { early: false } };
    const positive = minimiseSingle(f, method, bound);
    let chosen = { outputIndex, inverted: false, result: positive, stopped: bound.stopped.early };
    // The complement is kept only with fewer terms; a lower bound on its cover (polarityBound.ts)
    // spares minimising it where it cannot win, which is most control outputs.
    if (polarity === 'best' && !bound.timeUp()) {
      if (!complementNeedsAtLeast(f, positive.terms.length)) {
        const negative = minimiseSingle(complementFunction(f), method, bound);
        if (negative.terms.length < positive.terms.length) chosen = { outputIndex, inverted: true, result: negative, stopped: bound.stopped.early };
      }
    } else if (polarity === 'best') chosen.stopped = true;
    options.onProgress?.(k + 1, selected.length, output.name);
    return chosen;
  });

  const seconds = (options.timePerOutputMs ?? 0) / 1000;
  let outputs: MinimisedOutput[] = singles.map(({ outputIndex, inverted, result, stopped }) => ({
    name: table.outputs[outputIndex].name,
    outputIndex,
    inverted,
    terms: result.terms,
    method: result.method,
    provedMinimal: result.provedMinimal && !stopped,
    ...(stopped ? { note: `minimisation stopped after ${seconds} s (the time bound per output): the cover kept is correct at every address, but may have more terms than needed` } : {}),
  }));

  if (options.shareTerms && outputs.length > 1) outputs = shareTerms(table, outputs);
  for (const output of outputs) checkResult(table, output.outputIndex, output.terms, output.inverted);
  return { inputNames: table.inputNames, nInputs: table.nInputs, outputs };
}

/** Multi-output Espresso over groups of up to 32 outputs, keeping each output's chosen polarity. */
function shareTerms(table: TruthTable, outputs: MinimisedOutput[]): MinimisedOutput[] {
  const result: MinimisedOutput[] = [];
  for (let start = 0; start < outputs.length; start += 32) {
    const group = outputs.slice(start, start + 32);
    const space = makeSpace(table.nInputs, group.length);
    const functions = group.map((output) => {
      const source = table.outputs[output.outputIndex];
      const f: FunctionBits = { on: source.on, dc: source.dc, nInputs: table.nInputs };
      return output.inverted ? complementFunction(f) : f;
    });
    const cover = espresso({ space, ...coversOf(functions, space) });
    group.forEach((output, k) => {
      const terms = cover.filter((c) => (c.outs & (1 << k)) !== 0).map((c) => termFromCube(c, space));
      result.push({ ...output, terms, method: 'espresso-shared', provedMinimal: false });
    });
  }
  return result;
}

/** Distinct product terms over all outputs (what a shared-term array would need). */
export function distinctTermCount(minimised: Minimised): number {
  const keys = new Set<string>();
  for (const output of minimised.outputs) for (const term of output.terms) keys.add(`${term.care}:${term.value}`);
  return keys.size;
}
