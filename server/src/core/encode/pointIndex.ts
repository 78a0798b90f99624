// Speed-ups for walking the input universe: most universe bits do not matter to a given class
// (a LOAD step does not look at the branch flag), so decodes are cached per class under only
// the bits that class's guards and maps test; and a store's address is assembled from a
// universe point with a few table lookups instead of bit-by-bit work.
import { cubeOfBits } from '../checks/inputSpace';
import type { ClassDef, Machine, Store } from '../model/types';
import type { PointDecode } from './decodePoint';
import type { Universe } from './universe';

export class PointIndex {
  /** Universe bit position of each instruction bit, or -1 if the universe does not carry it. */
  private readonly irPosition = new Int32Array(32).fill(-1);
  private readonly opcodeComplete: boolean;
  private readonly classByOpcode: (ClassDef | undefined)[] = new Array(128);
  private readonly relevantMask = new Map<ClassDef, number>();
  private readonly cache = new Map<ClassDef, Map<number, PointDecode | null>>();

  constructor(machine: Machine, private readonly universe: Universe) {
    universe.irBits.forEach((bit, i) => (this.irPosition[bit] = universe.stepBits + i));
    this.opcodeComplete = [2, 3, 4, 5, 6].every((b) => this.irPosition[b] >= 0);
    for (const cls of machine.classes) {
      if (cls.opcode !== undefined && !this.classByOpcode[cls.opcode]) this.classByOpcode[cls.opcode] = cls;
      this.relevantMask.set(cls, this.maskFor(machine, cls));
    }
  }

  /** Universe bits a class's decode depends on: the step, and what its guards and maps test. */
  private maskFor(machine: Machine, cls: ClassDef): number {
    let mask = (1 << this.universe.stepBits) - 1;
    const addIr = (hi: number, lo: number) => {
      const irMask = cubeOfBits(hi, lo, '0'.repeat(hi - lo + 1)).mask;
      for (let b = 0; b < 32; b++) if ((irMask >>> b) & 1 && this.irPosition[b] >= 0) mask |= 1 << this.irPosition[b];
    };
    const addFlag = (name: string) => {
      const i = this.universe.flags.indexOf(name);
      if (i >= 0) mask |= 1 << (this.universe.stepBits + this.universe.irBits.length + i);
    };
    for (const alts of cls.steps.values()) {
      for (const alt of alts) {
        for (const lit of alt.guard ?? []) {
          if (lit.input.kind === 'ir') addIr(lit.input.hi, lit.input.lo);
          else if (lit.input.kind === 'flag') addFlag(lit.input.name);
        }
        for (const action of alt.actions) {
          if (action.value?.kind !== 'map') continue;
          for (const input of machine.maps.get(action.value.map)?.inputs ?? []) {
            if (input.input.kind === 'ir') addIr(input.input.hi, input.input.lo);
            else if (input.input.kind === 'flag') addFlag(input.input.name);
          }
        }
      }
    }
    return mask >>> 0;
  }

  /**
   * The decode of a universe point, from the cache when a point with the same relevant bits was
   * decoded before; `slow` decodes it fully. Falls back to `slow` when the universe does not
   * carry all opcode bits (then the class itself depends on the store layout).
   */
  decode(point: number, slow: () => PointDecode | undefined): PointDecode | undefined {
    if (!this.opcodeComplete) return slow();
    let opcode = 3;
    for (let b = 2; b <= 6; b++) opcode |= ((point >>> this.irPosition[b]) & 1) << b;
    const cls = this.classByOpcode[opcode];
    if (!cls) return undefined;
    const key = (point & this.relevantMask.get(cls)!) >>> 0;
    let byKey = this.cache.get(cls);
    if (!byKey) this.cache.set(cls, (byKey = new Map()));
    const hit = byKey.get(key);
    if (hit !== undefined) return hit ?? undefined;
    const decoded = slow();
    byKey.set(key, decoded ?? null);
    return decoded;
  }
}

/** Per 8-bit chunk of the universe point, the address bits those point bits produce. */
export type AddressTable = Uint32Array[];

/**
 * Lookup tables mapping a universe point to a store address, or undefined when the store's
 * address uses a field of another store (then it depends on the decode, not only the point).
 */
export function addressTable(store: Store, universe: Universe): AddressTable | undefined {
  const lineOfPointBit = new Map<number, number[]>();
  for (const s of store.address!.sources) {
    for (let i = 0; i <= s.hi - s.lo; i++) {
      let pointBit = -1;
      if (s.input.kind === 'step') pointBit = i < universe.stepBits ? i : -1;
      else if (s.input.kind === 'ir') {
        const idx = universe.irBits.indexOf(s.input.lo + i);
        pointBit = idx >= 0 ? universe.stepBits + idx : -1;
      } else if (s.input.kind === 'flag') {
        const idx = universe.flags.indexOf(s.input.name);
        pointBit = idx >= 0 && i === 0 ? universe.stepBits + universe.irBits.length + idx : -1;
      } else return undefined;
      if (pointBit < 0) continue;
      const lines = lineOfPointBit.get(pointBit) ?? [];
      lines.push(s.lo + i);
      lineOfPointBit.set(pointBit, lines);
    }
  }
  const chunks = Math.max(1, Math.ceil(universe.bits / 8));
  const tables: AddressTable = [];
  for (let c = 0; c < chunks; c++) {
    const table = new Uint32Array(256);
    for (let v = 0; v < 256; v++) {
      let address = 0;
      for (let b = 0; b < 8; b++) {
        if (!((v >>> b) & 1)) continue;
        for (const line of lineOfPointBit.get(c * 8 + b) ?? []) address |= 1 << line;
      }
      table[v] = address >>> 0;
    }
    tables.push(table);
  }
  return tables;
}

export function lookupAddress(tables: AddressTable, point: number): number {
  let address = 0;
  for (let c = 0; c < tables.length; c++) address |= tables[c][(point >>> (c * 8)) & 0xff];
  return address >>> 0;
}
