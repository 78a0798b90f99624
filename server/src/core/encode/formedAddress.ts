// Which addresses the hardware actually forms, for a store whose address lines carry a field
// of another store (an entry-point decoder feeding the main store). The encoder lays each
// step's word at the address formed with the field's code *as that step sets it* (its idle
// code where the step does not set it); the hardware forms the address from the code the
// other store's burned word holds at that moment. Where the two differ, a step's word sits at
// an address nothing forms, and the step itself reads another address, often the fill word:
// the table never runs there. This module finds both, per address, so the listing can say so
// instead of labelling those words with the step. It changes no word.
import type { Machine } from '../model/types';
import type { EncodedMachine, EncodedStore } from './encoder';
import { addressOf } from './encoder';
import { PointIndex, addressTable, lookupAddress } from './pointIndex';
import { pointInputs, pointInputsInto } from './universe';

export interface FormedAddresses {
  /** 1 where some covered point forms this address and finds the word the table laid for it. */
  formed: Uint8Array;
  /** A covered point that forms this address although the table laid its word elsewhere, or -1. */
  stray: Int32Array;
}

/**
 * The addresses the hardware forms in `enc`, or undefined when its address lines carry no
 * field of another store (then the encoder's address is the hardware's, nothing to find), or
 * when a source store was not encoded or is itself addressed through fields.
 */
export function formedAddresses(machine: Machine, encoded: EncodedMachine, enc: EncodedStore): FormedAddresses | undefined {
  const sources = enc.store.address!.sources.filter((s) => s.input.kind === 'field');
  if (sources.length === 0) return undefined;
  const universe = encoded.universe;
  // For each field source: the store that holds the field, its address table and the field's bits in its word.
  const feeds: { name: string; from: EncodedStore; table: NonNullable<ReturnType<typeof addressTable>>; lo: number; width: number }[] = [];
  for (const s of sources) {
    const name = (s.input as { name: string }).name;
    for (const other of encoded.stores) {
      if (other === enc) continue;
      const placement = other.store.word!.placements.find((p) => p.signal === name);
      if (!placement) continue;
      const table = addressTable(other.store, universe);
      if (!table) return undefined;
      feeds.push({ name, from: other, table, lo: placement.lo, width: placement.hi - placement.lo + 1 });
      break;
    }
  }
  if (feeds.length !== new Set(sources.map((s) => (s.input as { name: string }).name)).size) return undefined;

  const n = 2 ** enc.addressBits;
  const formed = new Uint8Array(n);
  const stray = new Int32Array(n).fill(-1);
  const fast = new PointIndex(machine, universe);
  const inputs = pointInputs(universe, 0);
  const burned = new Map<string, number>();
  // addressOf reads only the field codes of a decode: one object serves every point.
  const asBurned = { fieldCodes: burned } as unknown as Parameters<typeof addressOf>[3];
  for (let point = 0; point < 2 ** universe.bits; point++) {
    const decoded = fast.decode(point, () => encoded.decoder.decodeShared(pointInputsInto(universe, point, inputs)));
    if (!decoded) continue;
    pointInputsInto(universe, point, inputs);
    const laid = addressOf(enc.store, universe, inputs, decoded, machine);
    for (const feed of feeds) {
      const address = lookupAddress(feed.table, point);
      burned.set(feed.name, readBits(feed.from, address, feed.lo, feed.width));
    }
    const hardware = addressOf(enc.store, universe, inputs, asBurned, machine);
    if (hardware === laid) formed[hardware] = 1;
    else if (stray[hardware] < 0) stray[hardware] = point;
  }
  return { formed, stray };
}

function readBits(enc: EncodedStore, address: number, lo: number, width: number): number {
  let value = 0;
  const base = address * enc.lanes;
  for (let i = width - 1; i >= 0; i--) {
    const bit = lo + i;
    value = value * 2 + ((enc.words[base + (bit >>> 5)]! >>> (bit & 31)) & 1);
  }
  return value;
}
