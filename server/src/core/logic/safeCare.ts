// Which bits of a control word may take any value at an address no step covers, and the rule a
// word must pass there. The ROM holds the fill word at such addresses (every strobe inactive,
// every field idle), and a counter that powers up anywhere or a program that jumps into data
// reaches them; programmable logic minimised with free don't-cares there could assert two
// drivers on one bus, write memory or clock a register. So, where no step covers the address:
//   - a strobe that changes state or ends the cycle (write, clock, count, end, trap) is held at
//     its idle level, and so is a field that forms another store's address (it picks what that
//     store does next) or that drives a part acting at every closing edge (a sequencer's op and
//     jump target: they pick the next step);
//   - of the drivers (enables and memory reads) of one bus, one chosen driver may stay a
//     don't-care (a driver alone cannot fight); the others are held idle; a bus also driven
//     from another store gets no free driver, since that store's word is not known here;
//   - every other field bit stays a don't-care: with nothing clocked or written its value does
//     nothing.
// The truth-table builder (encode/storeTable.ts) applies this classification; the verifier
// (verifyFit.ts) checks words against `wordHazards`, which applies the one contention rule of
// model/busDrivers.ts and the held bits. Nothing here is an option: there is deliberately no way
// to free a held bit.
import type { EncodedStore } from '../encode/encoder';
import { type Contention, contendedBuses, drivenBus } from '../model/busDrivers';
import type { Machine } from '../model/types';

/** What a word bit does: drives a bus, must be held at the fill level where no step covers, or may take any value there. */
export type BitRole = 'driver' | 'held' | 'free';

export interface WordBit {
  readonly bit: number;
  /** The strobe or field the bit belongs to. */
  readonly signal: string;
  /** Output name as the truth tables use it: the strobe, or `field[i]`. */
  readonly output: string;
  readonly role: BitRole;
  /** Drivers: the bus driven. */
  readonly bus?: string;
  /** Strobes: the line level that asserts it. */
  readonly activeLevel?: 0 | 1;
  /** The fill word's level of this bit (the idle level, by polarity). */
  readonly fillLevel: 0 | 1;
  /** Whether the bit may stay a don't-care where no step covers the address. */
  readonly mayFloat: boolean;
}

export interface StoreSafety {
  /** Every placed bit of the store's word, in bit order. */
  readonly bits: readonly WordBit[];
  /** Per bus, the one driver allowed to keep its don't-cares. */
  readonly freeDriver: ReadonlyMap<string, string>;
  /** Buses this store drives that other stores drive too (no free driver on them). */
  readonly sharedBuses: ReadonlySet<string>;
}

function bitOf(lanes: Uint32Array, base: number, bit: number): 0 | 1 {
  return ((lanes[base + (bit >>> 5)] >>> (bit & 31)) & 1) as 0 | 1;
}

/**
 * Classifies the word bits of an encoded store. `fitted` names the outputs going into
 * programmable logic (all bits by default): a bus's free driver is chosen among them, as the
 * one asserted at the most covered addresses (its cover gains most from don't-cares); drivers
 * left in the ROM hold the fill word there anyway.
 */
export function storeSafety(machine: Machine, enc: EncodedStore, fitted?: ReadonlySet<string>): StoreSafety {
  const placements = enc.store.word!.placements;
  const here = new Set(placements.map((p) => p.signal));
  const steering = new Set<string>();
  const elsewhere = new Set<string>();
  for (const store of machine.stores) {
    for (const s of store.address?.sources ?? []) if (s.input.kind === 'field' && store !== enc.store) steering.add(s.input.name);
    if (store === enc.store) continue;
    for (const p of store.word?.placements ?? []) {
      const signal = machine.signals.get(p.signal);
      const bus = signal?.type === 'strobe' && !here.has(p.signal) ? drivenBus(signal) : undefined;
      if (bus !== undefined) elsewhere.add(bus);
    }
  }
  // A part with an edge port that acts at every closing edge (`on next always`: a sequencer)
  // changes state at every address: the fields driving its controls or read by its inputs pick
  // what it does next, so they are held like strobes that change state.
  for (const part of machine.parts.values()) {
    if (!part.def.edges.some((e) => e.always)) continue;
    for (const field of part.controlFields.values()) steering.add(field);
    for (const source of part.inputs.values()) if (source.from === 'field') steering.add(source.name);
  }
  const raw: Omit<WordBit, 'mayFloat'>[] = [];
  for (const p of placements) {
    const signal = machine.signals.get(p.signal);
    if (!signal) continue;
    for (let bit = p.lo; bit <= p.hi; bit++) {
      const fillLevel = bitOf(enc.fillWord, 0, bit);
      if (signal.type === 'field') {
        const output = `${p.signal}[${bit - p.lo}]`; // as storeOutputs names field bits
        raw.push({ bit, signal: p.signal, output, role: steering.has(p.signal) ? 'held' : 'free', fillLevel });
        continue;
      }
      const bus = drivenBus(signal);
      const activeLevel = signal.active === 'high' ? 1 : 0;
      raw.push({ bit, signal: p.signal, output: p.signal, role: bus === undefined ? 'held' : 'driver', bus, activeLevel, fillLevel });
    }
  }
  const sharedBuses = new Set(raw.filter((b) => b.bus !== undefined && elsewhere.has(b.bus)).map((b) => b.bus!));
  const freeDriver = chooseFreeDrivers(enc, raw, sharedBuses, fitted);
  const bits = raw
    .map((b) => ({ ...b, mayFloat: b.role === 'free' || (b.role === 'driver' && freeDriver.get(b.bus!) === b.signal) }))
    .sort((a, b) => a.bit - b.bit);
  return { bits, freeDriver, sharedBuses };
}

function chooseFreeDrivers(enc: EncodedStore, bits: readonly Omit<WordBit, 'mayFloat'>[], shared: ReadonlySet<string>, fitted?: ReadonlySet<string>): Map<string, string> {
  const best = new Map<string, { signal: string; asserted: number }>();
  const nAddresses = enc.origin.length;
  for (const b of bits) {
    if (b.role !== 'driver' || shared.has(b.bus!) || (fitted && !fitted.has(b.output))) continue;
    let asserted = 0;
    for (let address = 0; address < nAddresses; address++) {
      if (enc.origin[address] >= 0 && bitOf(enc.words, address * enc.lanes, b.bit) === b.activeLevel) asserted++;
    }
    const current = best.get(b.bus!);
    if (!current || asserted > current.asserted) best.set(b.bus!, { signal: b.signal, asserted });
  }
  return new Map([...best].map(([bus, { signal }]) => [bus, signal]));
}

/** What makes a word unsafe: buses with two drivers (anywhere), and held bits off their fill level (where no step covers). */
export interface WordHazards {
  readonly contention: Contention[];
  /** Where no step covers the address: held signals not at their fill level, and drivers on buses other stores drive. */
  readonly offIdle: string[];
}

/**
 * The hazards of one word of the store, given its bits (`levelOf(bit)`, the line level) and
 * whether a step covers its address. This is the same rule a ROM word passes: the contention
 * rule over its asserted drivers, and at an uncovered address the fill word's idleness.
 */
export function wordHazards(machine: Machine, safety: StoreSafety, levelOf: (bit: number) => 0 | 1, uncovered: boolean): WordHazards {
  const asserted: string[] = [];
  const offIdle: string[] = [];
  for (const b of safety.bits) {
    const level = levelOf(b.bit);
    if (b.role === 'driver') {
      if (level !== b.activeLevel) continue;
      asserted.push(b.signal);
      if (uncovered && safety.sharedBuses.has(b.bus!)) offIdle.push(b.signal);
    } else if (b.role === 'held' && uncovered && level !== b.fillLevel && !offIdle.includes(b.signal)) {
      offIdle.push(b.signal);
    }
  }
  return { contention: contendedBuses(machine, asserted), offIdle };
}

/** The bits whose level `wordHazards` reads: drivers everywhere, held bits where no step covers. */
export function ruledBits(safety: StoreSafety): WordBit[] {
  return safety.bits.filter((b) => b.role !== 'free');
}
