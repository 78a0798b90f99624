// Compares the images of two versions of a table chip by chip, so a builder re-programs only
// the chips that changed. For each changed address it names the class and step (from the new
// table) and the strobes and fields whose values differ.
import type { Machine } from '../model/types';
import { decodeWord, encodeMachine, type EncodedMachine, type EncodedStore } from './encoder';
import { chipHex, describeAddress } from './listing';
import { pointInputs } from './universe';

export interface AddressChange {
  address: number;
  inputs: string;
  where: string;
  changes: string[];
}

export interface ChipDiff {
  store: string;
  chip: number;
  changed: number;
  addresses: AddressChange[];
}

export interface StoreDiff {
  store: string;
  /** Set when the two stores cannot be compared address by address (layout changed). */
  incompatible?: string;
  chips: ChipDiff[];
}

export interface TableDiff {
  stores: StoreDiff[];
  identical: boolean;
}

export function diffTables(oldMachine: Machine, newMachine: Machine): TableDiff {
  const oldEnc = encodeMachine(oldMachine);
  const newEnc = encodeMachine(newMachine);
  const stores: StoreDiff[] = [];
  let identical = true;
  const names = new Set([...oldEnc.stores.map((s) => s.store.name), ...newEnc.stores.map((s) => s.store.name)]);
  for (const name of names) {
    const a = oldEnc.stores.find((s) => s.store.name === name);
    const b = newEnc.stores.find((s) => s.store.name === name);
    if (!a || !b) {
      identical = false;
      stores.push({ store: name, incompatible: a ? 'the new table no longer has this store' : 'the old table did not have this store', chips: [] });
      continue;
    }
    const widthsA = a.store.word!.chipWidths.join('+');
    const widthsB = b.store.word!.chipWidths.join('+');
    if (a.addressBits !== b.addressBits || widthsA !== widthsB) {
      identical = false;
      stores.push({
        store: name,
        incompatible: `the layout changed (${a.addressBits} -> ${b.addressBits} address lines, chips ${widthsA} -> ${widthsB} bits): every chip must be re-programmed`,
        chips: [],
      });
      continue;
    }
    const result = diffStore(oldMachine, newMachine, a, b, newEnc);
    if (result.chips.some((c) => c.changed > 0)) identical = false;
    stores.push(result);
  }
  return { stores, identical };
}

function diffStore(oldMachine: Machine, newMachine: Machine, a: EncodedStore, b: EncodedStore, newEnc: EncodedMachine): StoreDiff {
  const widths = b.store.word!.chipWidths;
  const chips: ChipDiff[] = widths.map((_, chip) => ({ store: b.store.name, chip, changed: 0, addresses: [] }));
  const nAddresses = 2 ** b.addressBits;
  for (let address = 0; address < nAddresses; address++) {
    const hexA = chipHex(a, address);
    const hexB = chipHex(b, address);
    let describe: AddressChange | undefined;
    for (let chip = 0; chip < widths.length; chip++) {
      if (hexA[chip] === hexB[chip]) continue;
      chips[chip].changed++;
      describe ??= describeChange(oldMachine, newMachine, a, b, newEnc, address);
      chips[chip].addresses.push(describe);
    }
  }
  return { store: b.store.name, chips };
}

function describeChange(oldMachine: Machine, newMachine: Machine, a: EncodedStore, b: EncodedStore, newEnc: EncodedMachine, address: number): AddressChange {
  const point = b.origin[address] >= 0 ? b.origin[address] : a.origin[address];
  let where = 'fill word';
  if (point >= 0) {
    const decoded = newEnc.decoder.decode(pointInputs(newEnc.universe, point));
    where = decoded.cls ? `class ${decoded.cls.name} step ${decoded.step}` : `step ${decoded.step}`;
    if (b.origin[address] < 0) where += ' (now the fill word)';
  }
  const before = decodeWord(oldMachine, a, address);
  const after = decodeWord(newMachine, b, address);
  const changes: string[] = [];
  for (const s of after.asserted) if (!before.asserted.includes(s)) changes.push(`+${s}`);
  for (const s of before.asserted) if (!after.asserted.includes(s)) changes.push(`-${s}`);
  const valueName = (machine: Machine, name: string, code: number | undefined) => {
    if (code === undefined) return 'absent';
    const field = machine.signals.get(name);
    return (field?.type === 'field' ? [...field.values.values()].find((v) => v.code === code)?.name : undefined) ?? String(code);
  };
  for (const name of new Set([...before.fields.keys(), ...after.fields.keys()])) {
    const x = before.fields.get(name);
    const y = after.fields.get(name);
    if (x !== y) changes.push(`${name} ${valueName(oldMachine, name, x)} -> ${valueName(newMachine, name, y)}`);
  }
  if (changes.length === 0) changes.push('bit positions moved (same strobes, different word layout)');
  return { address, inputs: describeAddress(b, address), where, changes };
}
