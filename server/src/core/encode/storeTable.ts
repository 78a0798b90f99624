// The truth tables of a control store for programmable logic: every control output bit as a
// function of the store's address lines. At addresses the table can never reach — opcodes
// without a class, steps past the end of a class, instruction encodings that are not RV32I,
// address lines nothing drives — only the bits logic/safeCare.ts lets float are don't-cares
// (plain fields, and one driver per bus); strobes that act and the other drivers keep the fill
// word's level, so no minimised cover can ever fight on a bus or write there. `keepFill` keeps
// the whole fill word there. Field bits a step leaves open are don't-cares; reachable
// addresses holding the fill word (a skipped step inside a class) always keep it.
import { instructionCube, instructionsOfClass, intersects } from '../checks/inputSpace';
import { storeSafety, type StoreSafety } from '../logic/safeCare';
import { createTruthTable, setValue, wordsFor, type TruthTable } from '../logic/truthTable';
import type { Machine } from '../model/types';
import type { EncodedMachine, EncodedStore } from './encoder';
import { PointDecoder } from './decodePoint';
import { addressTable, lookupAddress } from './pointIndex';
import { pointInputs, pointInputsInto } from './universe';

export interface StoreTableOptions {
  keepFill?: boolean;
  /** Only these outputs (signal names, or `field[i]` bits); all placed signals by default. */
  outputs?: string[];
}

export interface StoreTable {
  table: TruthTable;
  /** Word bit of each output, in output order. */
  outputBits: number[];
  /** Addresses the table never reaches (where some outputs may float). */
  unreachable: number;
  /** The same addresses as a bitset (bit a of word a >> 5), for reports and the benchmark. */
  unreachableBits: Uint32Array;
  /** How each word bit is treated at those addresses. */
  safety: StoreSafety;
}

/** Names of the address lines: `step[0]`, `taken`, `funct3[2]`, `ir20`, in address-bit order. */
export function addressInputNames(enc: EncodedStore): string[] {
  const names: string[] = new Array(enc.addressBits).fill('').map((_, i) => `a${i}`);
  for (const s of enc.store.address!.sources) {
    const width = s.hi - s.lo + 1;
    const base = s.label.replace(/\[(\d+)(?::(\d+))?\]/, (_, hi, lo) => (lo ? `${hi}_${lo}` : hi));
    for (let i = 0; i < width; i++) names[s.lo + i] = width > 1 ? `${base}[${i}]` : base;
  }
  return names;
}

/** The control outputs of a store, one per word bit a signal occupies: `x.rs1.oe`, `alu.fn[2]`. */
export function storeOutputs(machine: Machine, enc: EncodedStore): { name: string; bit: number }[] {
  const outputs: { name: string; bit: number }[] = [];
  for (const p of enc.store.word!.placements) {
    const signal = machine.signals.get(p.signal);
    if (!signal) continue;
    if (p.hi === p.lo && signal.type === 'strobe') outputs.push({ name: p.signal, bit: p.lo });
    else for (let b = p.lo; b <= p.hi; b++) outputs.push({ name: `${p.signal}[${b - p.lo}]`, bit: b });
  }
  return outputs.sort((a, b) => a.bit - b.bit);
}

export function storeTruthTable(machine: Machine, encoded: EncodedMachine, enc: EncodedStore, options: StoreTableOptions = {}): StoreTable {
  const all = storeOutputs(machine, enc);
  const chosen = options.outputs ? all.filter((o) => options.outputs!.some((w) => w === o.name || o.name.startsWith(`${w}[`))) : all;
  const table = createTruthTable(addressInputNames(enc), chosen.map((o) => o.name));
  const safety = storeSafety(machine, enc, new Set(chosen.map((o) => o.name)));
  const mayFloat = new Set(safety.bits.filter((b) => b.mayFloat).map((b) => b.bit));
  const reachable = reachableFill(machine, encoded, enc);
  const nAddresses = 2 ** enc.addressBits;
  const unreachableBits = new Uint32Array(wordsFor(enc.addressBits));
  let unreachable = 0;
  for (let address = 0; address < nAddresses; address++) {
    const base = address * enc.lanes;
    const used = enc.origin[address] >= 0;
    const floating = !used && !reachable[address] && !options.keepFill;
    if (floating) {
      unreachable++;
      unreachableBits[address >>> 5] |= 1 << (address & 31);
    }
    chosen.forEach((o, k) => {
      const lane = base + (o.bit >>> 5);
      const mask = 1 << (o.bit & 31);
      // Unused addresses hold the fill word in `words`: a held bit keeps that level.
      if ((floating && mayFloat.has(o.bit)) || (used && !(enc.care[lane] & mask))) {
        setValue(table, k, address, '-');
        return;
      }
      setValue(table, k, address, enc.words[lane] & mask ? 1 : 0);
    });
  }
  return { table, outputBits: chosen.map((o) => o.bit), unreachable, unreachableBits, safety };
}

/**
 * Fill-word addresses a running machine can reach: those of an RV32I instruction's class at a
 * step before the class's last step (a skipped step, or a guard gap a flag can hit).
 */
function reachableFill(machine: Machine, encoded: EncodedMachine, enc: EncodedStore): Uint8Array {
  const reachable = new Uint8Array(2 ** enc.addressBits);
  const universe = encoded.universe;
  const tables = addressTable(enc.store, universe);
  const decoder = new PointDecoder(machine);
  const inputs = pointInputs(universe, 0);
  const lastStep = new Map(machine.classes.map((c) => [c, Math.max(-1, ...c.steps.keys())]));
  const cubes = new Map(machine.classes.map((c) => [c, instructionsOfClass(c).map(instructionCube)]));
  const nPoints = 2 ** universe.bits;
  for (let point = 0; point < nPoints; point++) {
    pointInputsInto(universe, point, inputs);
    const address = tables ? lookupAddress(tables, point) : -1;
    if (address < 0 || enc.origin[address] >= 0 || reachable[address]) continue;
    const cls = decoder.classFor(inputs);
    if (!cls || inputs.step > lastStep.get(cls)!) continue;
    const classCubes = cubes.get(cls)!;
    const here = { mask: inputs.irMask, value: inputs.ir };
    if (classCubes.length > 0 && !classCubes.some((c) => intersects(c, here))) continue;
    reachable[address] = 1;
  }
  return reachable;
}
