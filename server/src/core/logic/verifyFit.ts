// Exhaustive safety check of programmable logic standing in for a control store: at EVERY
// address the address lines can form (not only those the table cares about), the word the
// fitted outputs give — the rest of the word still coming from the ROM image — must pass the
// rule of safeCare.ts's `wordHazards`: no bus with two drivers anywhere, and where no step
// covers the address, nothing that acts off its idle level. Outputs come in as level bitsets
// over all addresses (from covers, from fuse maps read back), so one evaluation serves the
// equations, the Verilog and every fuse map. Distinct words are few, so each is judged once.
import type { EncodedStore } from '../encode/encoder';
import type { Machine } from '../model/types';
import { type StoreSafety, type WordHazards, ruledBits, wordHazards } from './safeCare';
import { type ProductTerm, coverBits, wordsFor } from './truthTable';
import { invariant } from './errors';
import type { FittedDevice } from './fit';
import { fuseMapLevels } from './galImage';
import { readJedec } from './jedec';
import type { Minimised } from './minimise';
import { equationsLevels, readEquations } from './readEquations';

/** One fitted output: its word bit and its line level at every address (bit a of word a >> 5). */
export interface FittedLevels {
  readonly bit: number;
  readonly levels: Uint32Array;
}

export interface UnsafeAddress extends WordHazards {
  readonly address: number;
}

export interface SafetyReport {
  /** Addresses checked: every address the store's lines can form. */
  readonly checked: number;
  readonly unsafe: number;
  /** Of those, the addresses where two drivers share a bus. */
  readonly contended: number;
  /** The lowest unsafe address, with what is wrong there. */
  readonly first?: UnsafeAddress;
}

/** The level of a sum of products (complemented when `inverted`) at every one of the 2^nInputs addresses. */
export function coverLevels(nInputs: number, terms: readonly ProductTerm[], inverted: boolean): Uint32Array {
  const bits = coverBits(nInputs, terms);
  if (inverted) for (let w = 0; w < bits.length; w++) bits[w] = ~bits[w];
  return bits;
}

const isHazard = (h: WordHazards) => h.contention.length > 0 || h.offIdle.length > 0;

/** Checks the word at every address of `enc` with the fitted outputs in place of their ROM bits. */
export function verifyFitSafety(machine: Machine, enc: EncodedStore, safety: StoreSafety, fitted: readonly FittedLevels[]): SafetyReport {
  const nAddresses = enc.origin.length;
  invariant(fitted.every((f) => f.levels.length >= wordsFor(enc.addressBits)), 'fitted levels cover every address');
  const ruled = ruledBits(safety);
  const bitOf = new Int32Array(ruled.map((b) => b.bit));
  const fromLogic = ruled.map((b) => fitted.find((f) => f.bit === b.bit)?.levels ?? null);
  const keyLanes = Math.ceil((ruled.length + 1) / 31);
  const key = new Uint32Array(keyLanes);
  const verdicts = new Map<number | string, WordHazards | null>();
  const word = new Map<number, 0 | 1>();
  let unsafe = 0;
  let contended = 0;
  let first: UnsafeAddress | undefined;
  for (let address = 0; address < nAddresses; address++) {
    const uncovered = enc.origin[address] < 0;
    key.fill(0);
    key[0] = uncovered ? 1 : 0;
    const base = address * enc.lanes;
    for (let k = 0; k < ruled.length; k++) {
      const bit = bitOf[k];
      const levels = fromLogic[k];
      const level = levels ? (levels[address >>> 5] >>> (address & 31)) & 1 : (enc.words[base + (bit >>> 5)] >>> (bit & 31)) & 1;
      const slot = k + 1;
      key[(slot / 31) | 0] |= level << slot % 31;
    }
    const id: number | string = keyLanes === 1 ? key[0] : key.join(',');
    let verdict = verdicts.get(id);
    if (verdict === undefined) {
      word.clear();
      ruled.forEach((b, k) => word.set(b.bit, ((key[((k + 1) / 31) | 0] >>> (k + 1) % 31) & 1) as 0 | 1));
      const hazards = wordHazards(machine, safety, (bit) => word.get(bit) ?? 0, uncovered);
      verdict = isHazard(hazards) ? hazards : null;
      verdicts.set(id, verdict);
    }
    if (verdict === null) continue;
    unsafe++;
    if (verdict.contention.length > 0) contended++;
    first ??= { address, ...verdict };
  }
  return { checked: nAddresses, unsafe, contended, first };
}

/** "x.rs1.oe and pc.oe both drive bus left; mem.wr is asserted" for a report line. */
export function describeHazards(h: WordHazards): string {
  const parts = h.contention.map((c) => `${c.strobes.map((s) => `\`${s}\``).join(' and ')} both drive bus \`${c.bus}\``);
  if (h.offIdle.length > 0) parts.push(`${h.offIdle.map((s) => `\`${s}\``).join(', ')} ${h.offIdle.length > 1 ? 'are' : 'is'} not idle where no step covers the address`);
  return parts.join('; ');
}

/** The levels of minimised outputs (the equations and the Verilog), `outputBits[k]` being the word bit of table output k. */
export function minimisedLevels(minimised: Minimised, outputBits: readonly number[]): FittedLevels[] {
  return minimised.outputs.map((o) => ({ bit: outputBits[o.outputIndex], levels: coverLevels(minimised.nInputs, o.terms, o.inverted) }));
}

/** The levels of every output of a set of JEDEC files, each read and evaluated as its device would; a file that does not read is an error. */
export function fuseMapsLevels(
  maps: readonly { fitted: FittedDevice; jedec: string }[],
  outputBits: readonly number[],
  nInputs: number,
): { ok: true; levels: FittedLevels[] } | { ok: false; message: string } {
  const levels: FittedLevels[] = [];
  for (const { fitted, jedec } of maps) {
    const read = readJedec(jedec);
    if (!read.ok) return { ok: false, message: `the fuse map of device ${fitted.index + 1} does not read back: ${read.message}` };
    for (const [outputIndex, bits] of fuseMapLevels(fitted, read.file.fuses, nInputs)) levels.push({ bit: outputBits[outputIndex], levels: bits });
  }
  return { ok: true, levels };
}

/**
 * The levels of an equations file as written (equations.ts), read back and evaluated at every
 * address. They must equal the minimised covers everywhere (the Verilog is printed from those),
 * so the text, the Verilog and the covers are one function; a file that does not read, or
 * disagrees anywhere, is an error naming the output and the address.
 */
export function equationsTextLevels(
  text: string,
  minimised: Minimised,
  outputBits: readonly number[],
): { ok: true; levels: FittedLevels[] } | { ok: false; message: string } {
  const read = readEquations(text, minimised);
  if (!read.ok) return read;
  const fromText = equationsLevels(read, minimised.nInputs);
  const levels: FittedLevels[] = [];
  for (const [k, output] of minimised.outputs.entries()) {
    const fromCover = coverLevels(minimised.nInputs, output.terms, output.inverted);
    for (let address = 0; address < 2 ** minimised.nInputs; address++) {
      const bit = 1 << (address & 31);
      if ((fromText[k][address >>> 5] & bit) !== (fromCover[address >>> 5] & bit)) {
        return { ok: false, message: `the equation of ${output.name} read back gives ${fromText[k][address >>> 5] & bit ? 1 : 0} at address ${address}, its cover ${fromCover[address >>> 5] & bit ? 1 : 0}` };
      }
    }
    levels.push({ bit: outputBits[output.outputIndex], levels: fromText[k] });
  }
  return { ok: true, levels };
}
