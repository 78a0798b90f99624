// Parts of a table's own kinds in the simulator: their behaviour is their kind's expressions,
// compiled to JavaScript per part and per control code (parts/behaviour.ts), so the simulator
// runs exactly what the definition says. One slot per scalar state in one Int32Array (the
// checkpoint copies it with the rest of the machine); a part's first state is mirrored into its
// part value so traces, and parts that read it as an input, see what it holds.
//
// Timing (docs/notation.md, "Timing model"): a drive port is combinational for the whole step;
// at the closing edge every edge port of every part computes from the values before the edge,
// then all of them are stored at once, then the flags are read from the new state.
import type { CustomPart, Field, Machine, Strobe } from '../model/types';
import type { Memory } from '../isa/memory';
import { compilePort, sizeOf } from '../parts/behaviour';
import { edgeInputName } from '../parts/kinds';
import { customPortBusReads, partSetting } from '../model/buildCustomPart';

/** What a compiled port reads from the running machine. */
export interface CustomAccess {
  busValue: Int32Array;
  partValue: Int32Array;
  ir: number;
  customState: Int32Array;
  /** The program memory (a kind's `x memory` state reads its bytes). */
  memory: Memory;
  /** Stores bytes at a closing edge, recorded as the board's write (size code: 0 byte, 1 half, 2 word). */
  store: (size: number, address: number, value: number) => void;
}

type Getter = (m: CustomAccess) => number;

interface PartRuntime {
  part: CustomPart;
  partNumber: number;
  /** Slot of each scalar state, by name (an array's first element). */
  slots: Map<string, number>;
  widths: Map<string, number>;
  /** Register arrays: element count; the program memory: `memory`. */
  arrays: Map<string, number | 'memory'>;
  /** Computes every flag from the state; indices into the simulator's flags. */
  flags?: { run: (m: CustomAccess) => number[]; flagNumbers: number[] };
}

/** Why a port cannot run in this micro-op (a control code that names no value), or the port. */
export type CustomOp = { index: number; reads: number[] } | { problem: string };

export class CustomParts {
  readonly runtimes: PartRuntime[] = [];
  private readonly byName = new Map<string, PartRuntime>();
  /** Number of scalar state slots of all parts. */
  stateCount = 0;
  readonly resetValues: number[] = [];
  readonly drivers: Getter[] = [];
  /** Edge ports: each pushes (slot, value) pairs into `stage`. */
  readonly edges: ((m: CustomAccess, stage: number[]) => void)[] = [];

  constructor(
    private readonly machine: Machine,
    private readonly busIndex: ReadonlyMap<string, number>,
    private readonly partIndex: ReadonlyMap<string, number>,
    flagIndex: ReadonlyMap<string, number>,
  ) {
    for (const part of machine.parts.values()) {
      if (part.kind !== 'custom') continue;
      const rt: PartRuntime = { part, partNumber: partIndex.get(part.name)!, slots: new Map(), widths: new Map(), arrays: new Map() };
      for (const state of part.def.states) {
        rt.widths.set(state.name, sizeOf(state.width, part.settings));
        if (state.count === 'memory') {
          rt.arrays.set(state.name, 'memory');
          continue;
        }
        const count = state.count ? sizeOf(state.count, part.settings) : 1;
        if (state.count) rt.arrays.set(state.name, count);
        rt.slots.set(state.name, this.stateCount);
        this.stateCount += count;
      }
      this.runtimes.push(rt);
      this.byName.set(part.name, rt);
    }
    // Reset values and flags, once every part has its slots (a flag reads only its own state).
    for (const rt of this.runtimes) {
      const def = rt.part.def;
      const setting = partSetting(this.machine, rt.part);
      for (const state of def.states) {
        if (state.count === 'memory') continue;
        const slot = rt.slots.get(state.name)!;
        const count = rt.arrays.get(state.name) ?? 1;
        let value = 0;
        if (state.reset) {
          const port = compilePort(def, setting, [{ text: state.reset, width: rt.widths.get(state.name)! }]);
          // Number settings are already their values; a reset reads nothing that changes.
          value = Number(port.run(port.inputs.map(() => 0))[0]) | 0;
        }
        for (let k = 0; k < (count as number); k++) this.resetValues[slot + k] = value;
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
  private current: CustomAccess | undefined;
  private currentPart: PartRuntime | undefined;

  /** Element reads of register arrays and of the program memory, for the part that runs now. */
  private readonly arrayAccess = {
    element: (array: string, index: number): number => {
      const m = this.current!;
      const rt = this.currentPart!;
      if (rt.arrays.get(array) === 'memory') return m.memory.load8(index >>> 0);
      return m.customState[rt.slots.get(array)! + index] >>> 0;
    },
  };

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

  /** How one name an expression reads gets its value now; `edgeBus` is the bus an edge port loads. */
  private getter(rt: PartRuntime, name: string, fields: ReadonlyMap<string, number>, edgeBus: number): Getter {
    const part = rt.part;
    if (name === edgeInputName && edgeBus >= 0) return (m) => m.busValue[edgeBus] >>> 0;
    const slot = rt.slots.get(name);
    if (slot !== undefined) return (m) => m.customState[slot] >>> 0;
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

  /** Buses a port reads with this micro-op's control codes (they must be defined, and settle first). */
  private busReads(rt: PartRuntime, port: string, fields: ReadonlyMap<string, number>): number[] {
    const codes = new Map<string, number>();
    for (const control of rt.part.def.controls) {
      const field = this.controlField(rt.part, control.name);
      if (field) codes.set(control.name, fields.get(field.name) ?? field.idle);
    }
    return customPortBusReads(rt.part, port, codes).map((b) => this.busIndex.get(b)!);
  }

  /** A control this port reads whose field holds a code that names none of its values. */
  private unnamedControl(rt: PartRuntime, names: string[], fields: ReadonlyMap<string, number>): string | undefined {
    for (const name of names) {
      const control = rt.part.def.controls.find((c) => c.name === name);
      if (!control) continue;
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
    const drive = rt.part.def.drives.find((d) => d.name === strobe.kindPort)!;
    const port = compilePort(rt.part.def, partSetting(this.machine, rt.part), [{ text: drive.expr, width: sizeOf(drive.width, rt.part.settings) }], undefined, this.arrayAccess);
    const problem = this.unnamedControl(rt, port.inputs, fields);
    if (problem) return { problem };
    const getters = port.inputs.map((name) => this.getter(rt, name, fields, -1));
    const values = new Array<number>(getters.length);
    const run = port.run;
    this.drivers.push((m) => {
      for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
      this.current = m;
      this.currentPart = rt;
      return Number(run(values)[0]) | 0;
    });
    return { index: this.drivers.length - 1, reads: this.busReads(rt, drive.name, fields) };
  }

  /** The closing-edge action of a clock, count or write strobe on an edge port, for one micro-op. */
  edge(strobe: Strobe, fields: ReadonlyMap<string, number>, bus: number): CustomOp {
    const rt = this.byName.get(strobe.part ?? '')!;
    const def = rt.part.def;
    const edge = def.edges.find((e) => e.name === strobe.kindPort)!;
    const texts = edge.assigns.flatMap((a) => [{ text: a.expr, width: rt.widths.get(a.target)! }, ...(a.when ? [{ text: a.when, width: 1 }] : []), ...(a.index ? [{ text: a.index }] : [])]);
    const edgeWidth = edge.width ? sizeOf(edge.width, rt.part.settings) : undefined;
    const port = compilePort(def, partSetting(this.machine, rt.part), texts, edgeWidth, this.arrayAccess);
    const problem = this.unnamedControl(rt, port.inputs, fields);
    if (problem) return { problem };
    const getters = port.inputs.map((name) => this.getter(rt, name, fields, bus));
    const values = new Array<number>(getters.length);
    // For each assignment: its slot and where its value and condition stand in the results.
    // For each assignment: its slot (-1: the program memory), where its value, condition and
    // index stand in the results, and an array's element count.
    const plan: { slot: number; value: number; when: number; index: number; count: number }[] = [];
    let k = 0;
    for (const a of edge.assigns) {
      const array = rt.arrays.get(a.target);
      const value = k++;
      const when = a.when ? k++ : -1;
      const index = a.index ? k++ : -1;
      plan.push({ slot: array === 'memory' ? -1 : rt.slots.get(a.target)!, value, when, index, count: typeof array === 'number' ? array : 1 });
    }
    const run = port.run;
    this.edges.push((m, stage) => {
      for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
      this.current = m;
      this.currentPart = rt;
      const out = run(values);
      for (const a of plan) {
        if (a.when >= 0 && Number(out[a.when]) === 0) continue;
        const index = a.index < 0 ? 0 : Number(out[a.index]);
        // A write to the memory is staged as (-1 - address); an index past an array's end writes nothing.
        if (a.slot < 0) stage.push(-1 - (index >>> 0), Number(out[a.value]) & 0xff);
        else if (index < a.count) stage.push(a.slot + index, Number(out[a.value]) | 0);
      }
    });
    const reads = this.busReads(rt, edge.name, fields);
    return { index: this.edges.length - 1, reads: bus >= 0 && port.inputs.includes(edgeInputName) ? [bus, ...reads] : reads };
  }

  /** Stores what the edge ports computed, mirrors first states into part values and reads the flags. */
  commit(m: CustomAccess, stage: number[], flags: Uint8Array): void {
    let bytes: { address: number; value: number }[] | undefined;
    for (let i = 0; i < stage.length; i += 2) {
      if (stage[i] >= 0) m.customState[stage[i]] = stage[i + 1];
      else (bytes ??= []).push({ address: (-1 - stage[i]) >>> 0, value: stage[i + 1] });
    }
    stage.length = 0;
    if (bytes) storeBytes(m, bytes);
    this.refresh(m, flags);
  }

  /** Part values and flags from the current state (after reset and after every commit). */
  refresh(m: CustomAccess, flags: Uint8Array): void {
    for (const rt of this.runtimes) {
      const first = rt.slots.values().next();
      if (!first.done) m.partValue[rt.partNumber] = m.customState[first.value];
      if (rt.flags) {
        const values = rt.flags.run(m);
        rt.flags.flagNumbers.forEach((f, i) => {
          if (f >= 0) flags[f] = values[i] & 1;
        });
      }
    }
  }
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
