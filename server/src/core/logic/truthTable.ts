// Multi-output truth tables over up to MAX_TABLE_INPUTS named address inputs, stored as dense
// bitsets (one bit per minterm, 32 minterms per Uint32Array word) for the ON-set and the
// don't-care set of every output, plus exhaustive checking of a sum-of-products cover against
// a table. It deliberately knows nothing about control words, devices or minimisation.
import { LogicInputError, invariant } from './errors';
import { lowMask, popcount } from './bits';

/** The most address inputs a table may have; 2^24 minterms cost 2 MiB per bitset. */
export const MAX_TABLE_INPUTS = 24;

/** Names usable in equations, Verilog comments and JEDEC notes without quoting. */
const NAME_PATTERN = /^[A-Za-z_][A-Za-z0-9_.]*(\[[0-9]+\])?$/;

/**
 * A product term over the table inputs: input i appears in the term when bit i of `care` is
 * set, as a true literal when bit i of `value` is 1 and as a complemented literal when it is 0.
 * A term with `care` 0 is the constant-true term. Bits of `value` outside `care` are 0.
 */
export interface ProductTerm {
  readonly care: number;
  readonly value: number;
}

/** One output column: minterm m is ON when bit m of `on` is set, don't-care when bit m of `dc` is. */
export interface TableOutput {
  readonly name: string;
  readonly on: Uint32Array;
  readonly dc: Uint32Array;
}

/**
 * A truth table. Minterm index m assigns input i the value of bit i of m, so input 0 is the
 * least significant address bit. A minterm is OFF when it is neither ON nor don't-care;
 * ON and don't-care never overlap.
 */
export interface TruthTable {
  readonly inputNames: readonly string[];
  readonly outputs: readonly TableOutput[];
  readonly nInputs: number;
  /** Words per bitset: 2^nInputs / 32, at least 1. */
  readonly nWords: number;
}

/** The value of one output at one minterm: 0, 1 or '-' for don't-care. */
export type TableValue = 0 | 1 | '-';

/** Number of 32-bit words needed for 2^nInputs bits. */
export function wordsFor(nInputs: number): number {
  return nInputs <= 5 ? 1 : 1 << (nInputs - 5);
}

/** Mask of the minterm bits that exist in word `wordIndex` (only tables with < 5 inputs use a partial word). */
export function validBitsOfWord(nInputs: number): number {
  return nInputs >= 5 ? -1 : lowMask(1 << nInputs);
}

function checkNames(kind: string, names: readonly string[]): void {
  const seen = new Set<string>();
  for (const name of names) {
    if (!NAME_PATTERN.test(name)) {
      throw new LogicInputError(
        `${kind} name "${name}" cannot be used: names start with a letter or "_" and contain only letters, digits, "_" and ".", optionally ending in an index like "[3]"`,
      );
    }
    if (seen.has(name)) throw new LogicInputError(`${kind} name "${name}" appears twice`);
    seen.add(name);
  }
}

/** An all-OFF table with the given input and output names. Throws LogicInputError on bad names or sizes. */
export function createTruthTable(inputNames: readonly string[], outputNames: readonly string[]): TruthTable {
  if (inputNames.length > MAX_TABLE_INPUTS) {
    throw new LogicInputError(
      `a truth table may have at most ${MAX_TABLE_INPUTS} inputs; this one has ${inputNames.length}`,
    );
  }
  if (outputNames.length === 0) throw new LogicInputError('a truth table needs at least one output');
  checkNames('input', inputNames);
  checkNames('output', outputNames);
  const allNames = new Set<string>(inputNames);
  for (const name of outputNames) {
    if (allNames.has(name)) throw new LogicInputError(`"${name}" is used both as an input and as an output`);
  }
  const nInputs = inputNames.length;
  const nWords = wordsFor(nInputs);
  return {
    inputNames: [...inputNames],
    outputs: outputNames.map((name) => ({ name, on: new Uint32Array(nWords), dc: new Uint32Array(nWords) })),
    nInputs,
    nWords,
  };
}

/**
 * A table filled by calling `valueAt(minterm, outputIndex)` for every minterm and output.
 * Meant for tests and small generated tables; large tables are better set word by word.
 */
export function tableFromFunction(
  inputNames: readonly string[],
  outputNames: readonly string[],
  valueAt: (minterm: number, outputIndex: number) => TableValue,
): TruthTable {
  const table = createTruthTable(inputNames, outputNames);
  const nMinterms = 2 ** table.nInputs;
  for (let outputIndex = 0; outputIndex < table.outputs.length; outputIndex++) {
    for (let minterm = 0; minterm < nMinterms; minterm++) {
      const value = valueAt(minterm, outputIndex);
      if (value !== 0) setValue(table, outputIndex, minterm, value);
    }
  }
  return table;
}

function checkAddress(table: TruthTable, outputIndex: number, minterm: number): void {
  if (!Number.isInteger(outputIndex) || outputIndex < 0 || outputIndex >= table.outputs.length) {
    throw new LogicInputError(`output index ${outputIndex} is outside the table (it has ${table.outputs.length} outputs)`);
  }
  if (!Number.isInteger(minterm) || minterm < 0 || minterm >= 2 ** table.nInputs) {
    throw new LogicInputError(`address ${minterm} is outside the table (it has ${table.nInputs} inputs)`);
  }
}

/** Sets one output at one minterm to 0, 1 or don't-care. */
export function setValue(table: TruthTable, outputIndex: number, minterm: number, value: TableValue): void {
  checkAddress(table, outputIndex, minterm);
  const output = table.outputs[outputIndex];
  const wordIndex = minterm >>> 5;
  const bit = 1 << (minterm & 31);
  output.on[wordIndex] &= ~bit;
  output.dc[wordIndex] &= ~bit;
  if (value === 1) output.on[wordIndex] |= bit;
  else if (value === '-') output.dc[wordIndex] |= bit;
}

/** The value of one output at one minterm. */
export function getValue(table: TruthTable, outputIndex: number, minterm: number): TableValue {
  checkAddress(table, outputIndex, minterm);
  const output = table.outputs[outputIndex];
  const wordIndex = minterm >>> 5;
  const bit = 1 << (minterm & 31);
  if (output.dc[wordIndex] & bit) return '-';
  return output.on[wordIndex] & bit ? 1 : 0;
}

/** Index of the output called `name`, or -1. */
export function outputIndexOf(table: TruthTable, name: string): number {
  return table.outputs.findIndex((output) => output.name === name);
}

/** Whether a product term is true at a minterm. */
export function termCovers(term: ProductTerm, minterm: number): boolean {
  return ((minterm ^ term.value) & term.care) === 0;
}

/** The value of a sum of products at a minterm. */
export function evaluateCover(cover: readonly ProductTerm[], minterm: number): boolean {
  for (const term of cover) if (termCovers(term, minterm)) return true;
  return false;
}

/**
 * Marks in `bits` (a bitset over all 2^nInputs minterms) every minterm where `term` is true.
 * The low five inputs select a bit within a word, so a term costs one OR per word it touches.
 */
export function paintTerm(bits: Uint32Array, nInputs: number, term: ProductTerm): void {
  let wordMask = 0;
  const lowInputs = Math.min(nInputs, 5);
  for (let bitIndex = 0; bitIndex < 1 << lowInputs; bitIndex++) {
    if (((bitIndex ^ term.value) & term.care & 31) === 0) wordMask |= 1 << bitIndex;
  }
  if (nInputs <= 5) {
    bits[0] |= wordMask;
    return;
  }
  const highMask = lowMask(nInputs - 5);
  const careHigh = (term.care >>> 5) & highMask;
  const valueHigh = (term.value >>> 5) & careHigh;
  const freeHigh = ~careHigh & highMask;
  // Walk every subset of the free high inputs (the usual "subtract and mask" enumeration).
  let subset = 0;
  do {
    bits[valueHigh | subset] |= wordMask;
    subset = (subset - freeHigh) & freeHigh;
  } while (subset !== 0);
}

/** A bitset of the minterms where the sum of products is true. */
export function coverBits(nInputs: number, cover: readonly ProductTerm[]): Uint32Array {
  const bits = new Uint32Array(wordsFor(nInputs));
  for (const term of cover) paintTerm(bits, nInputs, term);
  return bits;
}

/** The outcome of checking a cover: ok, or the lowest care minterm where it disagrees. */
export type CoverCheck =
  | { readonly ok: true }
  | { readonly ok: false; readonly minterm: number; readonly expected: 0 | 1; readonly actual: 0 | 1 };

/**
 * Checks a cover against one output on EVERY care minterm (don't-cares may go either way).
 * With `inverted` the cover describes the complement: the output is NOT(sum of products).
 */
export function verifyCover(
  table: TruthTable,
  outputIndex: number,
  cover: readonly ProductTerm[],
  inverted = false,
): CoverCheck {
  if (outputIndex < 0 || outputIndex >= table.outputs.length) {
    throw new LogicInputError(`output index ${outputIndex} is outside the table`);
  }
  const output = table.outputs[outputIndex];
  const painted = coverBits(table.nInputs, cover);
  const validBits = validBitsOfWord(table.nInputs);
  for (let wordIndex = 0; wordIndex < table.nWords; wordIndex++) {
    const actualWord = inverted ? ~painted[wordIndex] : painted[wordIndex];
    const mismatch = (actualWord ^ output.on[wordIndex]) & ~output.dc[wordIndex] & validBits;
    if (mismatch !== 0) {
      const bitIndex = 31 - Math.clz32(mismatch & -mismatch);
      const minterm = wordIndex * 32 + bitIndex;
      const expected = output.on[wordIndex] & (1 << bitIndex) ? 1 : 0;
      return { ok: false, minterm, expected, actual: expected === 1 ? 0 : 1 };
    }
  }
  return { ok: true };
}

/** Number of ON minterms and of care minterms of one output. */
export function countMinterms(table: TruthTable, outputIndex: number): { on: number; care: number } {
  const output = table.outputs[outputIndex];
  const validBits = validBitsOfWord(table.nInputs);
  let on = 0;
  let dc = 0;
  for (let wordIndex = 0; wordIndex < table.nWords; wordIndex++) {
    on += popcount(output.on[wordIndex] & validBits);
    dc += popcount(output.dc[wordIndex] & validBits);
  }
  return { on, care: 2 ** table.nInputs - dc };
}

/** Checks the table's own invariant: ON and don't-care bits never overlap. */
export function checkTable(table: TruthTable): void {
  for (const output of table.outputs) {
    invariant(output.on.length === table.nWords && output.dc.length === table.nWords, `bitset size of ${output.name}`);
    for (let wordIndex = 0; wordIndex < table.nWords; wordIndex++) {
      if ((output.on[wordIndex] & output.dc[wordIndex]) !== 0) {
        throw new LogicInputError(`output "${output.name}" is both ON and don't-care at some address in word ${wordIndex}`);
      }
    }
  }
}
