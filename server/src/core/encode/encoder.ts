// The encoder: the control word of every address of every store. It walks the input universe
// once; each point's word (strobes at their active or inactive level by their own polarity,
// field codes) lands at the address the store's lines form from that point. Addresses no
// covered point reaches keep the fill word: every strobe inactive, every field at its idle
// code, unused bits at the declared level. Where two covered points land on one address of a
// store and disagree on a bit both care about, that store cannot hold its signals: the
// disagreement is returned (the store-ambiguous check reports it). It takes a model the
// checks have passed; it re-implements no check.
import type { Field, Machine, StepAlt, Store, Strobe } from '../model/types';
import { type PointDecode, PointDecoder } from './decodePoint';
import { PointIndex, addressTable, lookupAddress } from './pointIndex';
import { type Universe, pointInputs, pointInputsInto, universeOf } from './universe';

export interface EncodedStore {
  store: Store;
  addressBits: number;
  wordBits: number;
  /** 32-bit lanes per word: word w's bit b is in words[w * lanes + (b >> 5)], bit (b & 31). */
  lanes: number;
  words: Uint32Array;
  /** The universe point whose word stands at each address, or -1 where the fill word stands. */
  origin: Int32Array;
  fillWord: Uint32Array;
  /** Addresses holding a word from the table (the rest hold the fill word). */
  usedCount: number;
  /**
   * Bits some step cares about at each address (same layout as `words`): strobes everywhere a
   * step applies, fields only where a step sets them; 0 where the fill word stands.
   */
  care: Uint32Array;
}

export interface Ambiguity {
  store: string;
  signal: string;
  address: number;
  /** Two universe points landing on `address` that need different values of `signal`. */
  points: [number, number];
}

export interface EncodedMachine {
  universe: Universe;
  stores: EncodedStore[];
  ambiguities: Ambiguity[];
  decoder: PointDecoder;
}

interface PlacedSignal {
  signal: Strobe | Field;
  lo: number;
  width: number;
}

/** Largest universe the encoder walks (inputs over all stores). */
export const maxUniverseBits = 24;

export function encodeMachine(machine: Machine, options: { stores?: string[] } = {}): EncodedMachine {
  const universe = universeOf(machine);
  const decoder = new PointDecoder(machine);
  const targets = machine.stores.filter((s) => s.word && s.address && (!options.stores || options.stores.includes(s.name)));
  const stores = targets.map((store) => prepareStore(machine, store));
  const ambiguities: Ambiguity[] = [];
  if (universe.bits > maxUniverseBits) return { universe, stores: [], ambiguities, decoder };
  const nPoints = 2 ** universe.bits;
  const prepared = targets.map((store, i) => ({ enc: stores[i], placed: placedSignals(machine, store), care: stores[i].care, seenAmbiguity: new Set<string>() }));
  // Points with the same alternative and map rows share one decode object, and so one word
  // per store: build each word once.
  const wordCache = prepared.map(() => new Map<PointDecode, { word: Uint32Array; care: Uint32Array }>());
  const inputs = pointInputs(universe, 0);
  const fast = new PointIndex(machine, universe);
  const addressTables = prepared.map((p) => addressTable(p.enc.store, universe));
  for (let point = 0; point < nPoints; point++) {
    const decoded = fast.decode(point, () => decoder.decodeShared(pointInputsInto(universe, point, inputs)));
    if (!decoded) continue;
    for (let s = 0; s < prepared.length; s++) {
      const { enc, placed, care, seenAmbiguity } = prepared[s];
      let cached = wordCache[s].get(decoded);
      if (!cached) {
        cached = { word: new Uint32Array(enc.lanes), care: new Uint32Array(enc.lanes) };
        buildWord(enc, placed, decoded, new Set(decoded.alt!.actions.map((a) => a.signal)), cached.word, cached.care);
        wordCache[s].set(decoded, cached);
      }
      const table = addressTables[s];
      const address = table ? lookupAddress(table, point) : addressOf(enc.store, universe, pointInputsInto(universe, point, inputs), decoded, machine);
      if (address < 0 || address >= enc.origin.length) continue;
      const { word, care: pointCare } = cached;
      const base = address * enc.lanes;
      if (enc.origin[address] < 0) {
        for (let l = 0; l < enc.lanes; l++) {
          enc.words[base + l] = (enc.fillWord[l] & ~pointCare[l]) | (word[l] & pointCare[l]);
          care[base + l] = pointCare[l];
        }
        enc.origin[address] = point;
        enc.usedCount++;
        continue;
      }
      for (let l = 0; l < enc.lanes; l++) {
        const both = care[base + l] & pointCare[l];
        const differ = (enc.words[base + l] ^ word[l]) & both;
        if (differ !== 0) {
          const signal = signalAtBit(placed, l * 32 + (31 - Math.clz32(differ & -differ)));
          const key = signal ?? '?';
          if (!seenAmbiguity.has(key)) {
            seenAmbiguity.add(key);
            ambiguities.push({ store: enc.store.name, signal: key, address, points: [enc.origin[address], point] });
          }
        }
        const add = pointCare[l] & ~care[base + l];
        enc.words[base + l] = (enc.words[base + l] & ~add) | (word[l] & add);
        care[base + l] |= pointCare[l];
      }
    }
  }
  return { universe, stores, ambiguities, decoder };
}

function prepareStore(machine: Machine, store: Store): EncodedStore {
  const addressBits = store.address!.width;
  const wordBits = store.word!.width;
  const lanes = Math.max(1, Math.ceil(wordBits / 32));
  const fillWord = fillWordOf(machine, store, lanes);
  const nAddresses = 2 ** addressBits;
  const words = new Uint32Array(nAddresses * lanes);
  if (lanes === 1) words.fill(fillWord[0]);
  else for (let a = 0; a < nAddresses; a++) words.set(fillWord, a * lanes);
  const origin = new Int32Array(nAddresses).fill(-1);
  return { store, addressBits, wordBits, lanes, words, origin, fillWord, usedCount: 0, care: new Uint32Array(nAddresses * lanes) };
}

function placedSignals(machine: Machine, store: Store): PlacedSignal[] {
  const placed: PlacedSignal[] = [];
  for (const p of store.word!.placements) {
    const signal = machine.signals.get(p.signal);
    if (signal) placed.push({ signal, lo: p.lo, width: p.hi - p.lo + 1 });
  }
  return placed;
}

function setBits(lanes: Uint32Array, lo: number, width: number, value: number): void {
  for (let i = 0; i < width; i++) {
    const bit = lo + i;
    const lane = bit >>> 5;
    if (lane >= lanes.length) return;
    const mask = 1 << (bit & 31);
    if ((value >>> i) & 1) lanes[lane] |= mask;
    else lanes[lane] &= ~mask;
  }
}

/** The word of an address no step covers: strobes inactive by polarity, fields idle, spare bits at the declared level. */
export function fillWordOf(machine: Machine, store: Store, lanes = Math.max(1, Math.ceil(store.word!.width / 32))): Uint32Array {
  const word = new Uint32Array(lanes);
  const layout = store.word!;
  if (layout.unusedLevel === 1) setBits(word, 0, layout.width, 0xffffffff);
  for (const p of layout.placements) {
    const signal = machine.signals.get(p.signal);
    if (!signal) continue;
    const width = p.hi - p.lo + 1;
    if (signal.type === 'strobe') setBits(word, p.lo, width, signal.active === 'low' ? 0xffffffff : 0);
    else setBits(word, p.lo, width, signal.idle);
  }
  return word;
}

function buildWord(enc: EncodedStore, placed: PlacedSignal[], decoded: PointDecode, asserted: Set<string>, word: Uint32Array, care: Uint32Array): void {
  word.set(enc.fillWord);
  care.fill(0);
  laySignals(placed, asserted, decoded.fieldCodes, word, care);
}

/**
 * Writes the placed signals of one step alternative over a word that holds the fill word:
 * every placed strobe at its active or inactive level by its own polarity, every field the
 * step sets at its code. Fields without a code keep the fill word's idle code and stay out of
 * `care` (the step does not care about them).
 */
function laySignals(placed: PlacedSignal[], asserted: ReadonlySet<string>, fieldCodes: ReadonlyMap<string, number>, word: Uint32Array, care: Uint32Array): void {
  for (const { signal, lo, width } of placed) {
    if (signal.type === 'strobe') {
      const on = asserted.has(signal.name);
      const level = on === (signal.active === 'high') ? 0xffffffff : 0;
      setBits(word, lo, width, level);
      setBits(care, lo, width, 0xffffffff);
    } else {
      const code = fieldCodes.get(signal.name);
      if (code === undefined) continue;
      setBits(word, lo, width, code);
      setBits(care, lo, width, 0xffffffff);
    }
  }
}

/**
 * The word `store` holds wherever the step alternative `alt` applies, laid exactly as the
 * encoder lays it. `mapCodes` gives, for each decode map the alternative uses, the code the
 * map yields at the address in question (one row's code); a field set through a map missing
 * from `mapCodes` keeps its idle code. Returns the word's 32-bit lanes (bit b in lane b >> 5).
 */
export function wordForAlternative(machine: Machine, store: Store, alt: StepAlt, mapCodes: ReadonlyMap<string, number> = new Map()): Uint32Array {
  const lanes = Math.max(1, Math.ceil(store.word!.width / 32));
  const word = fillWordOf(machine, store, lanes);
  const asserted = new Set<string>();
  const fieldCodes = new Map<string, number>();
  for (const action of alt.actions) {
    if (!action.value) asserted.add(action.signal);
    else if (action.value.kind === 'code') fieldCodes.set(action.signal, action.value.code);
    else {
      const code = mapCodes.get(action.value.map);
      if (code !== undefined) fieldCodes.set(action.signal, code);
    }
  }
  laySignals(placedSignals(machine, store), asserted, fieldCodes, word, new Uint32Array(lanes));
  return word;
}

function signalAtBit(placed: PlacedSignal[], bit: number): string | undefined {
  return placed.find((p) => bit >= p.lo && bit < p.lo + p.width)?.signal.name;
}

/** The address of `store` that a universe point drives, as the table lays it. Address widths are at most 24 bits. */
export function addressOf(store: Store, universe: Universe, inputs: ReturnType<typeof pointInputs>, decoded: PointDecode, machine: Machine): number {
  void universe;
  return formAddress(machine, store, inputs, (name) => decoded.fieldCodes.get(name));
}

/**
 * A store's address from the step counter, the instruction bits and flags of `inputs`, and the
 * code `fieldCode` gives for each field of another store its lines carry (a field without one
 * sits at its idle code). The encoder passes the table's field values; a check that follows the
 * board passes what the feeding stores hold.
 */
export function formAddress(machine: Machine, store: Store, inputs: ReturnType<typeof pointInputs>, fieldCode: (name: string) => number | undefined): number {
  let address = 0;
  const sources = store.address!.sources;
  for (let k = 0; k < sources.length; k++) {
    const s = sources[k];
    const lines = s.hi - s.lo + 1;
    let value: number;
    const input = s.input;
    if (input.kind === 'step') value = inputs.step;
    else if (input.kind === 'ir') value = inputs.ir >>> input.lo;
    else if (input.kind === 'flag') value = inputs.flags.get(input.name) ?? 0;
    else {
      const field = machine.signals.get(input.name);
      value = fieldCode(input.name) ?? (field?.type === 'field' ? field.idle : 0);
    }
    address |= (value & ((1 << lines) - 1)) << s.lo;
  }
  return address >>> 0;
}

/** Reads a word of an encoded store back into its strobes and field codes (for listings and tests). */
export function decodeWord(machine: Machine, enc: EncodedStore, address: number): { asserted: string[]; fields: Map<string, number> } {
  const asserted: string[] = [];
  const fields = new Map<string, number>();
  const base = address * enc.lanes;
  const bitAt = (bit: number) => (enc.words[base + (bit >>> 5)] >>> (bit & 31)) & 1;
  for (const p of enc.store.word!.placements) {
    const signal = machine.signals.get(p.signal);
    if (!signal) continue;
    let value = 0;
    for (let i = p.hi; i >= p.lo; i--) value = value * 2 + bitAt(i);
    if (signal.type === 'strobe') {
      if ((value === 1) === (signal.active === 'high')) asserted.push(signal.name);
    } else {
      fields.set(signal.name, value);
    }
  }
  return { asserted, fields };
}
