// Parts of a table's own kinds in the simulator: their behaviour is their kind's expressions,
// compiled to JavaScript per part and per control code (parts/behaviour.ts), so the simulator
// runs exactly what the definition says. One slot per scalar state in one Int32Array (the
// checkpoint copies it with the rest of the machine); a part's first state is mirrored into its
// part value so traces, and parts that read it as an input, see what it holds.
//
// With the plan option `fromDefinitions`, the standard library's parts run here too, read as
// parts of their kinds' definitions (model/libraryParts.ts). Their state lives where the
// built-in path keeps it, so the environment, lock-step comparison, traces and the debugger read
// it unchanged: a register's, counter's or instruction register's `q` is its part value, a
// register file's `r` the simulator's register file, a memory's `x memory` the program memory.
//
// Timing (docs/notation.md, "Timing model"): a drive port is combinational for the whole step;
// at the closing edge every edge port of every part computes from the values before the edge,
// then all of them are stored at once, then the flags are read from the new state.
import type { CustomPart, Field, Machine, Strobe } from '../model/types';
import type { Memory } from '../isa/memory';
import { compilePort, liveNames, sizeOf, choiceCodes, parsedExpr } from '../parts/behaviour';
import { edgeInputName } from '../parts/kinds';
import { customPortBusReads, partSetting } from '../model/buildCustomPart';
import { asDefinedPart, definedPortOf } from '../model/libraryParts';
import { lineMask } from '../model/busDrivers';

/** What a compiled port reads from the running machine. */
export interface CustomAccess {
  busValue: Int32Array;
  partValue: Int32Array;
  /** The register files, 32 entries each (a library register file's `r`). */
  regs: Int32Array;
  ir: number;
  customState: Int32Array;
  /** The program memory (a kind's `x memory` state reads its bytes). */
  memory: Memory;
  /** Stores bytes at a closing edge, recorded as the board's write (size code: 0 byte, 1 half, 2 word). */
  store: (size: number, address: number, value: number) => void;
}

type Getter = (m: CustomAccess) => number;

/** Where a state is stored (staged edge values name it by this number). */
const IN_STATE = 0; // customState, from `base`
const IN_PART = 1; // partValue[base]: a library register's, counter's or instruction register's `q`
const IN_REGS = 2; // regs, from `base` (register file f at f * 32): a library register file's `r`
const IN_MEMORY = 3; // the program memory, by byte address
interface Storage {
  in: number;
  base: number;
}

interface PartRuntime {
  part: CustomPart;
  partNumber: number;
  /** Where each state is stored. */
  storage: Map<string, Storage>;
  widths: Map<string, number>;
  /** Register arrays: element count; the program memory: `memory`. */
  arrays: Map<string, number | 'memory'>;
  /** A table's own part mirrors its first state into its part value (a library part keeps its value where it lives). */
  mirror: number;
  /** Reads an element of one of this part's arrays from where it is stored. */
  element: (array: string, index: number) => number;
  /** Computes every flag from the state; indices into the simulator's flags. */
  flags?: { run: (m: CustomAccess) => number[]; flagNumbers: number[] };
}

/**
 * Why a port cannot run in this micro-op (a control code that names no value), or the port:
 * the buses it reads (for an edge port that takes its strobe's bus as `in`, that bus first, and
 * `loadsIn` set).
 */
export type CustomOp = { index: number; reads: number[]; loadsIn?: boolean } | { problem: string };

export interface CustomPartsOptions {
  /** Run the standard library's parts from their definitions too (model/libraryParts.ts). */
  fromDefinitions?: boolean;
}

export class CustomParts {
  readonly runtimes: PartRuntime[] = [];
  private readonly byName = new Map<string, PartRuntime>();
  /** Number of scalar state slots of all parts. */
  stateCount = 0;
  readonly resetValues: number[] = [];
  /** Reset values of states stored in part values (part number, value), set by the simulator at reset. */
  readonly partResets: { part: number; value: number }[] = [];
  /** Library parts left on the built-in path, and why (with `fromDefinitions`). */
  readonly builtIn: { part: string; why: string }[] = [];
  readonly drivers: Getter[] = [];
  /** Edge ports: each pushes (storage, index, value) triples into `stage`. */
  readonly edges: ((m: CustomAccess, stage: number[]) => void)[] = [];

  constructor(
    private readonly machine: Machine,
    private readonly busIndex: ReadonlyMap<string, number>,
    private readonly partIndex: ReadonlyMap<string, number>,
    flagIndex: ReadonlyMap<string, number>,
    regfileIndex: ReadonlyMap<string, number> = new Map(),
    options: CustomPartsOptions = {},
  ) {
    for (const original of machine.parts.values()) {
      if (original.kind !== 'custom' && !options.fromDefinitions) continue;
      const defined = asDefinedPart(machine, original);
      if ('problem' in defined) {
        this.builtIn.push({ part: original.name, why: defined.problem });
        continue;
      }
      const part = defined;
      const partNumber = partIndex.get(part.name)!;
      const rt: PartRuntime = { part, partNumber, storage: new Map(), widths: new Map(), arrays: new Map(), mirror: original.kind === 'custom' ? -1 : -2, element: () => 0 };
      for (const state of part.def.states) {
        rt.widths.set(state.name, sizeOf(state.width, part.settings));
        if (state.count === 'memory') {
          rt.arrays.set(state.name, 'memory');
          rt.storage.set(state.name, { in: IN_MEMORY, base: 0 });
          continue;
        }
        const count = state.count ? sizeOf(state.count, part.settings) : 1;
        if (state.count) rt.arrays.set(state.name, count);
        if (original.kind === 'regfile' && state.count) rt.storage.set(state.name, { in: IN_REGS, base: regfileIndex.get(part.name)! * 32 });
        else if ((original.kind === 'register' || original.kind === 'counter' || original.kind === 'instruction') && !state.count) rt.storage.set(state.name, { in: IN_PART, base: partNumber });
        else {
          if (rt.mirror === -1) rt.mirror = this.stateCount;
          rt.storage.set(state.name, { in: IN_STATE, base: this.stateCount });
          this.stateCount += count;
        }
      }
      rt.element = elementReader(this, rt);
      this.runtimes.push(rt);
      this.byName.set(part.name, rt);
    }
    // Reset values and flags, once every part has its slots (a flag reads only its own state).
    for (const rt of this.runtimes) {
      const def = rt.part.def;
      const setting = partSetting(this.machine, rt.part);
      for (const state of def.states) {
        const storage = rt.storage.get(state.name)!;
        if (storage.in === IN_MEMORY || storage.in === IN_REGS) continue; // the program and the register file's reset (sp) are the simulator's
        const count = rt.arrays.get(state.name) ?? 1;
        let value = 0;
        if (state.reset) {
          const port = compilePort(def, setting, [{ text: state.reset, width: rt.widths.get(state.name)! }]);
          // Number settings are already their values; a reset reads nothing that changes.
          value = Number(port.run(port.inputs.map(() => 0))[0]) | 0;
        }
        if (storage.in === IN_PART) this.partResets.push({ part: storage.base, value });
        else for (let k = 0; k < (count as number); k++) this.resetValues[storage.base + k] = value;
      }
      if (def.flags.length) {
        const port = compilePort(def, setting, def.flags.map((f) => ({ text: f.expr, width: 1 })));
        const getters = port.inputs.map((name) => this.getter(rt, name, new Map(), -1));
        const values = new Array<number>(getters.length);
        rt.flags = {
          run: (m) => {
            for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
            return port.run(values).map((v) => Number(v));
          },
          flagNumbers: def.flags.map((f) => flagIndex.get(rt.part.flagNames.get(f.name)!) ?? -1),
        };
      }
    }
  }

  /** The machine a compiled port runs on right now (element reads go through it). */
  current: CustomAccess | undefined;
  private refreshed: PartRuntime[] | undefined;

  /** Whether a strobe acts on a part run here through a port of its definition (else the built-in path runs it). */
  runs(strobe: Strobe): boolean {
    const rt = this.byName.get(strobe.part ?? '');
    return rt !== undefined && definedPortOf(rt.part, strobe) !== undefined;
  }

  /** Problems that stop the simulator from running these parts at all (widths it does not hold). */
  static problems(machine: Machine): string[] {
    const out: string[] = [];
    for (const part of machine.parts.values()) {
      if (part.kind !== 'custom') continue;
      for (const state of part.def.states) {
        if (sizeOf(state.width, part.settings) > 32) out.push(`part \`${part.name}\`: state \`${state.name}\` is wider than 32 bits, which the simulator does not hold yet`);
      }
      for (const drive of part.def.drives) if (sizeOf(drive.width, part.settings) > 32) out.push(`part \`${part.name}\`: port \`${drive.name}\` is wider than 32 bits, which the simulator does not hold yet`);
    }
    return out;
  }

  private controlField(part: CustomPart, control: string): Field | undefined {
    const name = part.controlFields.get(control);
    const field = name ? this.machine.signals.get(name) : undefined;
    return field?.type === 'field' ? field : undefined;
  }

  /**
   * How one name an expression reads gets its value now; `edgeBus` is the bus an edge port loads,
   * `edgeLines` the lines of it the strobe names (`result[15:8]`: `in` is lines 15..8, shifted down).
   */
  private getter(rt: PartRuntime, name: string, fields: ReadonlyMap<string, number>, edgeBus: number, edgeLines?: { hi: number; lo: number }): Getter {
    const part = rt.part;
    if (name === edgeInputName && edgeBus >= 0) {
      if (!edgeLines) return (m) => m.busValue[edgeBus] >>> 0;
      const mask = lineMask(edgeLines.hi, edgeLines.lo);
      const lo = edgeLines.lo;
      return (m) => (m.busValue[edgeBus] & mask) >>> lo;
    }
    const storage = rt.storage.get(name);
    if (storage?.in === IN_STATE) return (m) => m.customState[storage.base] >>> 0;
    if (storage?.in === IN_PART) return (m) => m.partValue[storage.base] >>> 0;
    const input = part.inputs.get(name);
    if (input?.from === 'bus') {
      const bus = this.busIndex.get(input.name)!;
      return (m) => m.busValue[bus] >>> 0;
    }
    if (input?.from === 'part') {
      const p = this.partIndex.get(input.name)!;
      return (m) => m.partValue[p] >>> 0;
    }
    if (input?.from === 'instruction') return (m) => m.ir >>> 0;
    if (part.def.controls.some((c) => c.name === name)) {
      const field = this.controlField(part, name);
      const code = field ? (fields.get(field.name) ?? field.idle) : 0;
      return () => code;
    }
    const setting = part.def.settings.find((s) => s.name === name);
    if (setting?.type === 'choice') {
      const index = setting.choices.indexOf(String(part.settings.get(name)));
      return () => index;
    }
    throw new Error(`custom part ${part.name}: no value for \`${name}\``);
  }

  /** Codes of the part's controls in this micro-op (a control no field drives is absent). */
  private controlCodes(rt: PartRuntime, fields: ReadonlyMap<string, number>): Map<string, number> {
    const codes = new Map<string, number>();
    for (const control of rt.part.def.controls) {
      const field = this.controlField(rt.part, control.name);
      if (field) codes.set(control.name, fields.get(field.name) ?? field.idle);
    }
    return codes;
  }

  /** Buses a port reads with this micro-op's control codes (they must be defined, and settle first). */
  private busReads(rt: PartRuntime, port: string, fields: ReadonlyMap<string, number>): number[] {
    return customPortBusReads(rt.part, port, this.controlCodes(rt, fields)).map((b) => this.busIndex.get(b)!);
  }

  /**
   * A control this port really reads (its choice settings known: a comparator whose condition
   * comes from funct3 does not read its `test` control) whose field holds a code that names
   * none of its values, or that no field drives.
   */
  private unnamedControl(rt: PartRuntime, texts: CompileText[], names: string[], fields: ReadonlyMap<string, number>): string | undefined {
    const choices = choiceCodes(rt.part.def, rt.part.settings);
    const live = new Set<string>();
    for (const t of texts) {
      const expr = parsedExpr(rt.part.def, t.text).expr;
      if (expr) for (const n of liveNames(expr, choices, (name) => valuesOfChoice(rt.part, name))) live.add(n);
    }
    for (const name of names) {
      const control = rt.part.def.controls.find((c) => c.name === name);
      if (!control || !live.has(name)) continue;
      const field = this.controlField(rt.part, name);
      if (!field) return `control \`${name}\` of \`${rt.part.name}\` is driven by no field`;
      const code = fields.get(field.name) ?? field.idle;
      const value = [...field.values.values()].find((v) => v.code === code);
      if (!value || !control.values.includes(value.name)) return `\`${field.name}\` holds code ${code}, which names no value of control \`${name}\` of \`${rt.part.name}\``;
    }
    return undefined;
  }

  /** The driver of an enable or read strobe on a drive port, for one micro-op's field codes. */
  driver(strobe: Strobe, fields: ReadonlyMap<string, number>): CustomOp {
    const rt = this.byName.get(strobe.part ?? '')!;
    const drive = rt.part.def.drives.find((d) => d.name === definedPortOf(rt.part, strobe))!;
    const texts = [{ text: drive.expr, width: sizeOf(drive.width, rt.part.settings) }];
    const port = compilePort(rt.part.def, partSetting(this.machine, rt.part), texts, undefined, { element: rt.element });
    const problem = this.unnamedControl(rt, texts, port.inputs, fields);
    if (problem) return { problem };
    const getters = port.inputs.map((name) => this.getter(rt, name, fields, -1));
    const values = new Array<number>(getters.length);
    const run = port.run;
    this.drivers.push((m) => {
      for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
      this.current = m;
      return Number(run(values)[0]) | 0;
    });
    return { index: this.drivers.length - 1, reads: this.busReads(rt, drive.name, fields) };
  }

  /** The closing-edge action of a clock, count or write strobe on an edge port, for one micro-op. */
  edge(strobe: Strobe, fields: ReadonlyMap<string, number>, bus: number): CustomOp {
    const rt = this.byName.get(strobe.part ?? '')!;
    const def = rt.part.def;
    const edge = def.edges.find((e) => e.name === definedPortOf(rt.part, strobe))!;
    const texts = edge.assigns.flatMap((a) => [{ text: a.expr, width: rt.widths.get(a.target)! }, ...(a.when ? [{ text: a.when, width: 1 }] : []), ...(a.index ? [{ text: a.index }] : [])]);
    const edgeWidth = edge.width ? sizeOf(edge.width, rt.part.settings) : undefined;
    const port = compilePort(def, partSetting(this.machine, rt.part), texts, edgeWidth, { element: rt.element });
    const problem = this.unnamedControl(rt, texts, port.inputs, fields);
    if (problem) return { problem };
    const getters = port.inputs.map((name) => this.getter(rt, name, fields, bus, strobe.lines));
    const values = new Array<number>(getters.length);
    // For each assignment: where its target is stored, where its value, condition and index
    // stand in the results, and an array's element count.
    const plan: { storage: Storage; value: number; when: number; index: number; count: number }[] = [];
    let k = 0;
    for (const a of edge.assigns) {
      const array = rt.arrays.get(a.target);
      const value = k++;
      const when = a.when ? k++ : -1;
      const index = a.index ? k++ : -1;
      plan.push({ storage: rt.storage.get(a.target)!, value, when, index, count: typeof array === 'number' ? array : 1 });
    }
    const run = port.run;
    this.edges.push((m, stage) => {
      for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
      this.current = m;
      const out = run(values);
      for (const a of plan) {
        if (a.when >= 0 && Number(out[a.when]) === 0) continue;
        const index = a.index < 0 ? 0 : Number(out[a.index]);
        // A write to the memory is staged by its byte address; an index past an array's end writes nothing.
        if (a.storage.in === IN_MEMORY) stage.push(IN_MEMORY, index >>> 0, Number(out[a.value]) & 0xff);
        else if (index < a.count) stage.push(a.storage.in, a.storage.base + index, Number(out[a.value]) | 0);
      }
    });
    const reads = this.busReads(rt, edge.name, fields);
    const loadsIn = bus >= 0 && port.inputs.includes(edgeInputName);
    return { index: this.edges.length - 1, reads: loadsIn ? [bus, ...reads] : reads, loadsIn };
  }

  /** Stores what the edge ports computed, mirrors first states into part values and reads the flags. */
  commit(m: CustomAccess, stage: number[], flags: Uint8Array): void {
    let bytes: { address: number; value: number }[] | undefined;
    for (let i = 0; i < stage.length; i += 3) {
      const at = stage[i + 1];
      const value = stage[i + 2];
      switch (stage[i]) {
        case IN_STATE:
          m.customState[at] = value;
          break;
        case IN_PART:
          m.partValue[at] = value;
          break;
        case IN_REGS:
          m.regs[at] = value;
          break;
        default:
          (bytes ??= []).push({ address: at >>> 0, value });
      }
    }
    stage.length = 0;
    if (bytes) storeBytes(m, bytes);
    this.refresh(m, flags);
  }

  /** Part values and flags from the current state (after reset and after every commit). */
  refresh(m: CustomAccess, flags: Uint8Array): void {
    // Only parts with a mirrored state or flags have anything to refresh (this runs every step).
    this.refreshed ??= this.runtimes.filter((rt) => rt.mirror >= 0 || rt.flags);
    for (const rt of this.refreshed) {
      if (rt.mirror >= 0) m.partValue[rt.partNumber] = m.customState[rt.mirror];
      if (rt.flags) {
        const values = rt.flags.run(m);
        rt.flags.flagNumbers.forEach((f, i) => {
          if (f >= 0) flags[f] = values[i] & 1;
        });
      }
    }
  }
}

type CompileText = Parameters<typeof compilePort>[2][number];

/** A choice setting's choices by code (the names a `select` on it is keyed by). */
function valuesOfChoice(part: CustomPart, name: string): ReadonlyMap<string, number> | undefined {
  const setting = part.def.settings.find((s) => s.name === name);
  return setting?.type === 'choice' ? new Map(setting.choices.map((c, i) => [c, i])) : undefined;
}

/** Element reads of one part's register arrays and memory, from where each is stored, on the machine running now. */
function elementReader(parts: CustomParts, rt: PartRuntime): (array: string, index: number) => number {
  return (array, index) => {
    const m = parts.current!;
    const storage = rt.storage.get(array)!;
    if (storage.in === IN_MEMORY) return m.memory.load8(index >>> 0);
    if (storage.in === IN_REGS) return m.regs[storage.base + index] >>> 0;
    return m.customState[storage.base + index] >>> 0;
  };
}

/**
 * The bytes one closing edge writes, stored as the board writes them: a run of 2 or 4 bytes at
 * ascending addresses (a halfword or word lane set, low byte first, little-endian as RV32I
 * memory is, RISC-V Unprivileged ISA 20191213, section 2.6) is one write of that size, the
 * rest single bytes. The lock-step comparison then sees the sizes the reference reports.
 */
function storeBytes(m: CustomAccess, bytes: { address: number; value: number }[]): void {
  bytes.sort((a, b) => a.address - b.address);
  for (let i = 0; i < bytes.length; ) {
    let run = 1;
    while (i + run < bytes.length && run < 4 && bytes[i + run].address === bytes[i].address + run) run++;
    const size = run >= 4 ? 4 : run >= 2 ? 2 : 1;
    let value = 0;
    for (let k = size - 1; k >= 0; k--) value = (value << 8) | bytes[i + k].value;
    m.store(size === 4 ? 2 : size === 2 ? 1 : 0, bytes[i].address, value | 0);
    i += size;
  }
}
