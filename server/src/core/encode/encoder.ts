// The encoder: the control word of every address of every store. It walks the input universe
// once; each point's word (strobes at their active or inactive level by their own polarity,
// field codes) lands at the address the store's lines form from that point. Addresses no
// covered point reaches keep the fill word: every strobe inactive, every field at its idle
// code, unused bits at the declared level. Where two covered points land on one address of a
// store and disagree on a bit both care about, that store cannot hold its signals: the
// disagreement is returned (the store-ambiguous check reports it). It takes a model the
// checks have passed; it re-implements no check.
import type { Field, Machine, Store, Strobe } from '../model/types';
import { type PointDecode, PointDecoder } from './decodePoint';
import { type Universe, pointInputs, universeOf } from './universe';

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
  const prepared = targets.map((store, i) => ({ enc: stores[i], placed: placedSignals(machine, store), care: new Uint32Array(stores[i].words.length), seenAmbiguity: new Set<string>() }));
  const scratch = prepared.map((p) => ({ word: new Uint32Array(p.enc.lanes), care: new Uint32Array(p.enc.lanes) }));
  for (let point = 0; point < nPoints; point++) {
    const inputs = pointInputs(universe, point);
    const decoded = decoder.decode(inputs);
    if (!decoded.alt) continue;
    const asserted = new Set(decoded.alt.actions.map((a) => a.signal));
    for (let s = 0; s < prepared.length; s++) {
      const { enc, placed, care, seenAmbiguity } = prepared[s];
      const { word, care: pointCare } = scratch[s];
      const address = addressOf(enc.store, universe, inputs, decoded, machine);
      if (address < 0 || address >= enc.origin.length) continue;
      buildWord(enc, placed, decoded, asserted, word, pointCare);
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
  for (let a = 0; a < nAddresses; a++) words.set(fillWord, a * lanes);
  const origin = new Int32Array(nAddresses).fill(-1);
  return { store, addressBits, wordBits, lanes, words, origin, fillWord, usedCount: 0 };
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
  for (const { signal, lo, width } of placed) {
    if (signal.type === 'strobe') {
      const on = asserted.has(signal.name);
      const level = on === (signal.active === 'high') ? 0xffffffff : 0;
      setBits(word, lo, width, level);
      setBits(care, lo, width, 0xffffffff);
    } else {
      const code = decoded.fieldCodes.get(signal.name);
      if (code === undefined) continue;
      setBits(word, lo, width, code);
      setBits(care, lo, width, 0xffffffff);
    }
  }
}

function signalAtBit(placed: PlacedSignal[], bit: number): string | undefined {
  return placed.find((p) => bit >= p.lo && bit < p.lo + p.width)?.signal.name;
}

/** The address of `store` that a universe point drives. */
export function addressOf(store: Store, universe: Universe, inputs: ReturnType<typeof pointInputs>, decoded: PointDecode, machine: Machine): number {
  let address = 0;
  for (const s of store.address!.sources) {
    const lines = s.hi - s.lo + 1;
    let value: number;
    if (s.input.kind === 'step') value = inputs.step;
    else if (s.input.kind === 'ir') value = inputs.ir >>> s.input.lo;
    else if (s.input.kind === 'flag') value = inputs.flags.get(s.input.name) ?? 0;
    else {
      const field = machine.signals.get(s.input.name);
      value = decoded.fieldCodes.get(s.input.name) ?? (field?.type === 'field' ? field.idle : 0);
    }
    for (let i = 0; i < lines; i++) if ((value >>> i) & 1) address += 2 ** (s.lo + i);
  }
  void universe;
  return address;
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
