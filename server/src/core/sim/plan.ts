// The simulator's plan of one machine: numbers for its buses, parts, register files and flags,
// which part is the program counter and which the instruction register, and for every control
// store the ENCODED words (what would be burned into the chips) with how its address lines are
// formed from the step counter, the instruction register, the flags and other stores' fields.
// The micro-ops the hot loop runs are compiled from these words (microops.ts); nothing here
// reads the steps of the source table, so a wrong encoding shows up in simulation.
//
// Which part plays which RV32I role follows the parts' kind definitions (their `holds` lines,
// parts/kinds.ts), never a kind's name: the register files hold `registers`, the instruction
// register is the model's (a part whose kind holds the `instruction`), the memory is a part
// whose kind has the program memory (`x memory`). The program-counter rule: the part named `pc`
// whose kind holds the `pc`; otherwise the only part whose kind holds it; otherwise a part named
// `pc` with a single 32-bit register (a plain register). A machine where none applies is refused.
//
// Deliberately not here: machine state or running (simulator.ts), reports (describe.ts).
import { decodeWord, encodeMachine, type EncodedMachine, type EncodedStore } from '../encode/encoder';
import { pointInputs } from '../encode/universe';
import type { PointDecode } from '../encode/decodePoint';
import type { ClassDef, Machine, Part, StepAlt, Store } from '../model/types';
import type { HoldsRole } from '../parts/kinds';
import { sizeOf } from '../parts/behaviour';
import { elementZeroWritable } from '../model/partFacts';
import { MAX_BUSES, MicroOps } from './microops';
import { CustomParts } from './customParts';


/** One distinct control word of a store, read back from its bits. */
export interface StoreWord {
  /** The first address holding this word. */
  address: number;
  /** Strobes asserted by this word (by their polarity), in placement order. */
  asserted: string[];
  /** Code of every field the store holds. */
  fields: Map<string, number>;
}

export interface StorePlan {
  store: Store;
  enc: EncodedStore;
  /** Distinct-word number at each address. */
  wordOfAddress: Int32Array;
  words: StoreWord[];
  /** Address lines fed by instruction bits: address += ((ir >>> inputLo) & lineMask) << addressLo. */
  irSources: { inputLo: number; lineMask: number; addressLo: number }[];
  flagSources: { flag: number; lineMask: number; addressLo: number }[];
  /** Address contribution of each step counter value. */
  stepPart: Int32Array;
  /** Lines fed by a field of an earlier store: the contribution for each distinct word of that store. */
  fieldSources: { fromStore: number; byWord: Int32Array }[];
  /** Contribution of fields no store holds (they sit at their idle code). */
  constantPart: number;
}

export type PlanResult = { ok: true; plan: SimPlan } | { ok: false; errors: string[] };

function maskOf(width: number): number {
  return width >= 32 ? -1 : (1 << width) - 1;
}

// Address widths stay far below 31 bits (the encoder walks at most 2^24 points), so a shift is exact.
function contribution(value: number, lineMask: number, addressLo: number): number {
  return ((value & lineMask) << addressLo) >>> 0;
}

export class SimPlan {
  readonly busNames: string[];
  readonly busIndex = new Map<string, number>();
  readonly busMask: Int32Array;
  readonly busKeeper: Uint8Array;
  readonly busWidth: Int32Array;
  readonly parts: Part[];
  readonly partIndex = new Map<string, number>();
  readonly partMask: Int32Array;
  /** Parts holding the RV32I registers (`holds registers`), each with 32 entries of the simulator's register file. */
  readonly regfiles: Part[];
  readonly regfileIndex = new Map<string, number>();
  /** Whether an instruction can write x0 of the first register file (a stored x0), so the environment and the debugger may too. */
  readonly x0Stored: boolean;
  readonly flagNames: string[];
  readonly flagIndex = new Map<string, number>();
  /** Part numbers of the program counter and the instruction register. */
  readonly pcPart: number;
  readonly irPart: number;
  /**
   * The sequencer's part number (the part whose kind `holds step`), or -1: its state is the step
   * counter, computed at every closing edge; the instruction retires when it returns to 0.
   * Without one the simulator keeps the implicit counter (`end` returns it to 0).
   */
  readonly seqPart: number;
  readonly stepBits: number;
  readonly nSteps: number;
  /** Stores in evaluation order: a store whose address reads another store's field comes after it. */
  readonly stores: StorePlan[];
  /** Index in machine.classes of the class for each 7-bit opcode, or -1. */
  readonly classOfOpcode: Int16Array;
  readonly microOps: MicroOps;
  /** Parts of the table's own kinds: their compiled behaviour and state slots. */
  readonly custom: CustomParts;

  private constructor(
    readonly machine: Machine,
    readonly encoded: EncodedMachine,
    stores: StorePlan[],
    pcPart: number,
    irPart: number,
  ) {
    this.busNames = [...machine.buses.keys()];
    this.busNames.forEach((name, i) => this.busIndex.set(name, i));
    const buses = [...machine.buses.values()];
    this.busMask = Int32Array.from(buses, (b) => maskOf(b.width));
    this.busWidth = Int32Array.from(buses, (b) => b.width);
    this.busKeeper = Uint8Array.from(buses, (b) => (b.keeper ? 1 : 0));
    this.parts = [...machine.parts.values()];
    this.parts.forEach((p, i) => this.partIndex.set(p.name, i));
    this.partMask = Int32Array.from(this.parts, (p) => maskOf(p.width));
    this.regfiles = this.parts.filter((p) => holds(machine, p, 'registers'));
    this.regfiles.forEach((p, i) => this.regfileIndex.set(p.name, i));
    this.flagNames = [...machine.flags.keys()];
    this.flagNames.forEach((f, i) => this.flagIndex.set(f, i));
    this.pcPart = pcPart;
    this.irPart = irPart;
    this.seqPart = machine.sequencer !== undefined ? (this.partIndex.get(machine.sequencer) ?? -1) : -1;
    this.stepBits = machine.stepBits ?? 0;
    this.nSteps = 2 ** this.stepBits;
    this.stores = stores;
    this.classOfOpcode = new Int16Array(128).fill(-1);
    machine.classes.forEach((cls, i) => {
      if (cls.opcode !== undefined && this.classOfOpcode[cls.opcode] === -1) this.classOfOpcode[cls.opcode] = i;
    });
    this.custom = new CustomParts(machine, this.busIndex, this.partIndex, this.flagIndex, this.regfileIndex, irPart);
    this.x0Stored = this.regfiles.length > 0 && elementZeroWritable(machine, this.regfiles[0]);
    this.microOps = new MicroOps(this);
  }

  /** Builds the plan, or says in plain words why this machine cannot be simulated. */
  static build(machine: Machine): PlanResult {
    const errors: string[] = [];
    const parts = [...machine.parts.values()];
    const pc = findProgramCounter(machine, parts);
    if (typeof pc === 'string') errors.push(pc);
    const ir = machine.instructionRegister ? machine.parts.get(machine.instructionRegister) : parts.find((p) => holds(machine, p, 'instruction'));
    if (!ir) errors.push('the machine has no instruction register (`part ir instruction 32`), so it cannot hold an instruction');
    const holdsMemory = (p: Part) => p.def.states.some((s) => s.count === 'memory');
    if (!parts.some(holdsMemory)) errors.push('the machine has no memory part, so it cannot fetch instructions');
    if (!parts.some((p) => holds(machine, p, 'registers'))) errors.push('the machine has no register file (`part x regfile 32`), so it cannot hold x1..x31');
    if (machine.buses.size > MAX_BUSES) errors.push(`the machine has ${machine.buses.size} buses; the simulator handles up to ${MAX_BUSES}`);
    if (!machine.stepBits) errors.push('no control-store address carries the step counter (`step 0..N` in an `address` layout)');
    errors.push(...CustomParts.problems(machine));
    const usable = machine.stores.filter((s) => s.word && s.address);
    for (const s of machine.stores) {
      if (!s.word) errors.push(`store ${s.name} has no word layout`);
      if (!s.address) errors.push(`store ${s.name} has no address layout`);
    }
    if (usable.length === 0) errors.push('the machine declares no control store (a `word` and an `address` layout)');
    if (errors.length) return { ok: false, errors };
    const encoded = encodeMachine(machine);
    if (encoded.stores.length === 0) {
      return { ok: false, errors: [`the address inputs of all stores together take ${encoded.universe.bits} bits; Phasewright encodes (and so simulates) up to 24`] };
    }
    const order = evaluationOrder(machine, encoded.stores);
    if (typeof order === 'string') return { ok: false, errors: [order] };
    const partNumbers = new Map(parts.map((p, i) => [p.name, i]));
    const flagNumbers = new Map([...machine.flags.keys()].map((f, i) => [f, i]));
    const stores: StorePlan[] = [];
    for (const enc of order) stores.push(planStore(machine, enc, stores, flagNumbers));
    const plan = new SimPlan(machine, encoded, stores, partNumbers.get((pc as Part).name)!, partNumbers.get(ir!.name)!);
    return { ok: true, plan };
  }

  /** The table's step alternative (and class) behind the word at `address` of store `storeIndex`, if the table wrote one there. */
  sourceOf(storeIndex: number, address: number): { alt?: StepAlt; cls?: ClassDef; mapRows?: PointDecode['mapRows'] } {
    const enc = this.stores[storeIndex].enc;
    const point = enc.origin[address];
    if (point === undefined || point < 0) return {};
    const decoded = this.encoded.decoder.decode(pointInputs(this.encoded.universe, point));
    return { alt: decoded.alt, cls: decoded.cls, mapRows: decoded.mapRows };
  }

  /** Address contribution of the instruction bits and flags (the parts that change only at clock edges). */
  staticPart(storeIndex: number, ir: number, flags: Uint8Array): number {
    const s = this.stores[storeIndex];
    let address = s.constantPart;
    for (const src of s.irSources) address += contribution(ir >>> src.inputLo, src.lineMask, src.addressLo);
    for (const src of s.flagSources) address += contribution(flags[src.flag], src.lineMask, src.addressLo);
    return address;
  }
}

/** Whether the part's kind says a state of it holds `role` (`holds registers r`). */
function holds(machine: Machine, part: Part, role: HoldsRole): boolean {
  return part.def.holds.some((h) => h.role === role);
}

function findProgramCounter(machine: Machine, parts: Part[]): Part | string {
  const candidates = parts.filter((p) => holds(machine, p, 'pc'));
  const named = candidates.find((p) => p.name === 'pc');
  if (named) return named;
  if (candidates.length === 1) return candidates[0];
  const register = parts.find((p) => {
    if (p.name !== 'pc') return false;
    const defined = p;
    const first = defined.def.states.find((s) => !s.count);
    return first !== undefined && sizeOf(first.width, defined.settings) === 32;
  });
  if (register) return register;
  if (candidates.length > 1) return `the machine has ${candidates.length} program counters (${candidates.map((c) => c.name).join(', ')}); name the program counter \`pc\` so the simulator knows where programs start`;
  return 'the machine has no program counter: declare a counter (`part pc counter 32 inc=4 bit0=zero`)';
}

/** Stores ordered so every store comes after the stores whose fields feed its address. */
function evaluationOrder(machine: Machine, stores: EncodedStore[]): EncodedStore[] | string {
  const holder = new Map<string, string>();
  for (const enc of stores) for (const p of enc.store.word!.placements) holder.set(p.signal, enc.store.name);
  const ordered: EncodedStore[] = [];
  const done = new Set<string>();
  let progress = true;
  while (ordered.length < stores.length && progress) {
    progress = false;
    for (const enc of stores) {
      if (done.has(enc.store.name)) continue;
      const needs = enc.store.address!.sources.filter((s) => s.input.kind === 'field').map((s) => holder.get((s.input as { name: string }).name));
      if (needs.every((n) => n === undefined || done.has(n))) {
        ordered.push(enc);
        done.add(enc.store.name);
        progress = true;
      }
    }
  }
  if (ordered.length < stores.length) {
    const left = stores.filter((s) => !done.has(s.store.name)).map((s) => s.store.name);
    return `the address lines of stores ${left.join(', ')} are fed by each other's fields in a loop; no store can settle first`;
  }
  void machine;
  return ordered;
}

function planStore(machine: Machine, enc: EncodedStore, earlier: StorePlan[], flagNumbers: Map<string, number>): StorePlan {
  const nAddresses = 2 ** enc.addressBits;
  const wordOfAddress = new Int32Array(nAddresses);
  const words: StoreWord[] = [];
  // Words of one lane are their own key; wider words are keyed by their lanes as text.
  const seen = new Map<number | string, number>();
  for (let address = 0; address < nAddresses; address++) {
    const base = address * enc.lanes;
    let key: number | string = enc.words[base];
    if (enc.lanes > 1) {
      key = '';
      for (let l = 0; l < enc.lanes; l++) key += enc.words[base + l].toString(36) + ',';
    }
    let index = seen.get(key);
    if (index === undefined) {
      index = words.length;
      seen.set(key, index);
      const { asserted, fields } = decodeWord(machine, enc, address);
      words.push({ address, asserted, fields });
    }
    wordOfAddress[address] = index;
  }
  const stepBits = machine.stepBits ?? 0;
  const stepPart = new Int32Array(2 ** stepBits);
  const irSources: StorePlan['irSources'] = [];
  const flagSources: StorePlan['flagSources'] = [];
  const fieldSources: StorePlan['fieldSources'] = [];
  let constantPart = 0;
  for (const s of enc.store.address!.sources) {
    const lines = s.hi - s.lo + 1;
    const lineMask = maskOf(lines);
    const input = s.input;
    if (input.kind === 'step') {
      for (let step = 0; step < stepPart.length; step++) stepPart[step] += contribution(step, lineMask, s.lo);
    } else if (input.kind === 'ir') {
      irSources.push({ inputLo: input.lo, lineMask, addressLo: s.lo });
    } else if (input.kind === 'flag') {
      const flag = flagNumbers.get(input.name);
      if (flag !== undefined) flagSources.push({ flag, lineMask, addressLo: s.lo });
    } else {
      const from = earlier.findIndex((e) => e.words.length > 0 && e.words[0].fields.has(input.name));
      if (from < 0) {
        const field = machine.signals.get(input.name);
        constantPart += contribution(field?.type === 'field' ? field.idle : 0, lineMask, s.lo);
      } else {
        const byWord = Int32Array.from(earlier[from].words, (w) => contribution(w.fields.get(input.name) ?? 0, lineMask, s.lo));
        fieldSources.push({ fromStore: from, byWord });
      }
    }
  }
  return { store: enc.store, enc, wordOfAddress, words, irSources, flagSources, stepPart, fieldSources, constantPart };
}
