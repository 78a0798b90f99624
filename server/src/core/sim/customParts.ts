// Every part in the simulator runs from its kind's definition: a table's own kinds and the
// standard library's alike (the model builds every part as a part of its kind). Their behaviour is their kind's expressions, compiled to JavaScript per
// part and per control code (parts/behaviour.ts): closures for the interpreter, inlined source
// for the compiled steps (sim/compile.ts), so the simulator runs exactly what the definition says.
//
// Where each state lives follows the kind's `holds` lines and nothing else: the RV32I registers
// (`holds registers r`) are the simulator's register file, which the environment, the lock-step
// comparison and the debugger read; the program memory (`x memory`) is the program's memory; the
// part's value (the state holding the pc or the instruction, else its first single register)
// is its slot in the part values, which traces show and parts wired to it read; every other
// state has a slot in one Int32Array (the checkpoint copies it with the rest of the machine).
//
// Timing (docs/notation.md, "Timing model"): a drive port is combinational for the whole step;
// at the closing edge every edge port of every part computes from the values before the edge,
// then all of them are stored at once, then the latched flags are read from the new state. A
// combinational flag (model/flagFacts.ts: it reads a bus or a control) is computed per
// micro-op after the drivers (`settler`), and the simulator settles the address with it.
import type { Part, Field, Machine, Strobe } from '../model/types';
import type { Memory } from '../isa/memory';
import { compilePort, liveNames, sizeOf, choiceCodes, parsedExpr, portSource, type PortNumber } from '../parts/behaviour';
import { formatExpression, type InlineBinding } from '../parts/expr';
import { edgeInputName, type KindEdge, type KindFlag } from '../parts/kinds';
import { combinationalFlags } from '../model/flagFacts';
import { portBusReads, partSetting } from '../model/buildPart';
import { definedPortOf, strobePortNumber } from '../model/partFacts';
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

/**
 * The combinational flags of one micro-op: computed from its field codes and the buses after
 * its drivers settled (the simulator then settles the address with them).
 */
export interface FlagSettler {
  /** The simulator's flag numbers, in the order `run` writes their values. */
  flags: number[];
  /** Per flag: the buses it reads (one bit each), which must hold defined values for its value to be known. */
  needs: number[];
  /** Per flag: why its value cannot be known whatever the buses hold (a control code that names no value), else ''. */
  problems: string[];
  run: (m: CustomAccess, out: Uint8Array) => void;
}

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
  part: Part;
  partNumber: number;
  /** Where each state is stored. */
  storage: Map<string, Storage>;
  widths: Map<string, number>;
  /** Register arrays: element count; the program memory: `memory`. */
  arrays: Map<string, number | 'memory'>;
  /** Reads an element of one of this part's arrays from where it is stored. */
  element: (array: string, index: number) => number;
  /** Computes every latched flag from the state; indices into the simulator's flags. */
  flags?: { run: (m: CustomAccess) => number[]; flagNumbers: number[]; texts: KindFlag[] };
}

/**
 * Why a port cannot run in this micro-op (a control code that names no value), or the port:
 * the buses it reads (for an edge port that takes its strobe's bus as `in`, that bus first, and
 * `loadsIn` set).
 */
export type CustomOp = { index: number; reads: number[]; loadsIn?: boolean } | { problem: string };

/**
 * What the simulator's compiled steps (sim/compile.ts) give a port inlined into their code: the
 * code of a bus's value in this step (an int32), a word read of the program memory, and a prefix
 * keeping the port's locals apart from the others in the same function.
 */
export interface InlineSite {
  prefix: string;
  bus(index: number): string;
  loadWord(address: string): string;
}

/** An edge port inlined: statements computing from the values before the edge, then statements storing them. */
export interface InlineEdge {
  compute: string[];
  store: string[];
  /** The port changes what the address reads (a flag), so the compiled chain must stop after it. */
  changesInputs: boolean;
  /** Its stores stage bytes of the program memory (`stageByte`): the caller runs `flushBytes()` once every port has stored. */
  writesMemory: boolean;
}

/** A port as the compiled steps inline it: the part, its texts and the codes of its controls in this micro-op. */
interface PortSpec {
  rt: PartRuntime;
  texts: CompileText[];
  edgeWidth?: number;
  fields: ReadonlyMap<string, number>;
  /** The bus an edge port loads (-1: none). */
  bus: number;
  /** A numbered port's number (`x[5]`). */
  param?: PortNumber;
}


export class CustomParts {
  readonly runtimes: PartRuntime[] = [];

  /** Where a part's own state (not its value, not the registers) lives in `customState`, for traces; undefined elsewhere. */
  stateSlot(partName: string, state: string): number | undefined {
    const storage = this.runtimes.find((rt) => rt.part.name === partName)?.storage.get(state);
    return storage?.in === IN_STATE ? storage.base : undefined;
  }
  private readonly byName = new Map<string, PartRuntime>();
  /** Number of scalar state slots of all parts. */
  stateCount = 0;
  readonly resetValues: number[] = [];
  /** Reset values of states stored in part values (part number, value), set by the simulator at reset. */
  readonly partResets: { part: number; value: number }[] = [];
  readonly drivers: Getter[] = [];
  /** Beside `drivers` and `edges`, what inlining each needs (sim/compile.ts). */
  private readonly driverSpecs: PortSpec[] = [];
  private readonly edgeSpecs: (PortSpec & { assigns: { storage: Storage; value: number; when: number; index: number; count: number }[] })[] = [];
  /** Edge ports: each pushes (storage, index, value) triples into `stage`. */
  readonly edges: ((m: CustomAccess, stage: number[]) => void)[] = [];
  /** The combinational flags, by part (their flag numbers in the simulator's flags). */
  readonly combinational: { rt: PartRuntime; flags: KindFlag[]; flagNumbers: number[] }[] = [];
  /** Number of combinational flags (0: every flag is latched, and no micro-op needs a settler). */
  combinationalCount = 0;
  readonly settlers: FlagSettler[] = [];

  constructor(
    private readonly machine: Machine,
    private readonly busIndex: ReadonlyMap<string, number>,
    private readonly partIndex: ReadonlyMap<string, number>,
    flagIndex: ReadonlyMap<string, number>,
    regfileIndex: ReadonlyMap<string, number> = new Map(),
    /** The instruction register's part number: a latched flag reading the instruction reads it after the edge. */
    private readonly irPart = -1,
  ) {
    const combinational = new Set(combinationalFlags(machine).map((f) => `${f.part.name}\u0000${f.flag.name}`));
    for (const original of machine.parts.values()) {
      const part = original;
      const partNumber = partIndex.get(part.name)!;
      const rt: PartRuntime = { part, partNumber, storage: new Map(), widths: new Map(), arrays: new Map(), element: () => 0 };
      const roles = new Map(part.def.holds.map((h) => [h.state, h.role]));
      // The part's value (what traces show, what a part wired to it reads, the program counter and
      // instruction register the simulator reads): the state holding the pc or the instruction,
      // else the first single register.
      const valueState = part.def.holds.find((h) => h.role !== 'registers' && h.role !== 'return')?.state ?? part.def.states.find((st) => !st.count)?.name;
      for (const state of part.def.states) {
        rt.widths.set(state.name, sizeOf(state.width, part.settings));
        if (state.count === 'memory') {
          rt.arrays.set(state.name, 'memory');
          rt.storage.set(state.name, { in: IN_MEMORY, base: 0 });
          continue;
        }
        const count = state.count ? sizeOf(state.count, part.settings) : 1;
        if (state.count) rt.arrays.set(state.name, count);
        if (roles.get(state.name) === 'registers') rt.storage.set(state.name, { in: IN_REGS, base: regfileIndex.get(part.name)! * 32 });
        else if (state.name === valueState) rt.storage.set(state.name, { in: IN_PART, base: partNumber });
        else {
          rt.storage.set(state.name, { in: IN_STATE, base: this.stateCount });
          this.stateCount += count;
        }
      }
      rt.element = elementReader(this, rt);
      this.runtimes.push(rt);
      this.byName.set(part.name, rt);
    }
    // Reset values and flags, once every part has its slots.
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
      const flagNumber = (f: KindFlag) => flagIndex.get(rt.part.flagNames.get(f.name)!) ?? -1;
      const latched = def.flags.filter((f) => !combinational.has(`${rt.part.name}\u0000${f.name}`));
      const combFlags = def.flags.filter((f) => combinational.has(`${rt.part.name}\u0000${f.name}`));
      if (latched.length) {
        const port = compilePort(def, setting, latched.map((f) => ({ text: f.expr, width: 1 })));
        const getters = port.inputs.map((name) => this.getter(rt, name, new Map(), -1));
        const values = new Array<number>(getters.length);
        rt.flags = {
          run: (m) => {
            for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
            return port.run(values).map((v) => Number(v));
          },
          flagNumbers: latched.map(flagNumber),
          texts: latched,
        };
      }
      if (combFlags.length) {
        this.combinational.push({ rt, flags: combFlags, flagNumbers: combFlags.map(flagNumber) });
        this.combinationalCount += combFlags.length;
      }
    }
  }

  private readonly bytes = new ByteStage();

  /**
   * The combinational flags of one micro-op (its field codes): what they read, and one function
   * computing them all into `out` (in `flags` order). Returns its index in `settlers`.
   */
  settler(fields: ReadonlyMap<string, number>): number {
    const flags: number[] = [];
    const needs: number[] = [];
    const problems: string[] = [];
    const runs: ((m: CustomAccess, out: Uint8Array) => void)[] = [];
    for (const { rt, flags: kindFlags, flagNumbers } of this.combinational) {
      const texts = kindFlags.map((f) => ({ text: f.expr, width: 1 }));
      const port = compilePort(rt.part.def, partSetting(this.machine, rt.part), texts, undefined, { element: rt.element });
      const problem = this.unnamedControl(rt, texts, port.inputs, fields) ?? '';
      const codes = this.controlCodes(rt, fields);
      const at = flags.length;
      kindFlags.forEach((f, k) => {
        flags.push(flagNumbers[k]);
        problems.push(problem);
        needs.push(portBusReads(rt.part, f.name, codes).reduce((mask, bus) => mask | (1 << this.busIndex.get(bus)!), 0));
      });
      if (problem) continue;
      const getters = port.inputs.map((name) => this.getter(rt, name, fields, -1));
      const values = new Array<number>(getters.length);
      runs.push((m, out) => {
        for (let i = 0; i < getters.length; i++) values[i] = getters[i](m);
        this.current = m;
        const results = port.run(values);
        for (let k = 0; k < results.length; k++) out[at + k] = Number(results[k]) & 1;
      });
    }
    this.settlers.push({ flags, needs, problems, run: (m, out) => runs.forEach((r) => r(m, out)) });
    return this.settlers.length - 1;
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
    for (const original of machine.parts.values()) {
      const part = original;
      for (const state of part.def.states) {
        if (sizeOf(state.width, part.settings) > 32) out.push(`part \`${part.name}\`: state \`${state.name}\` is wider than 32 bits, which the simulator does not hold yet`);
      }
      for (const drive of part.def.drives) if (sizeOf(drive.width, part.settings) > 32) out.push(`part \`${part.name}\`: port \`${drive.name}\` is wider than 32 bits, which the simulator does not hold yet`);
    }
    return out;
  }


  private controlField(part: Part, control: string): Field | undefined {
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
    if (input?.from === 'field') {
      // A number field of the word: its code in this micro-op, a constant.
      const code = this.fieldCode(input.name, fields);
      return () => code;
    }
    const control = part.def.controls.find((c) => c.name === name);
    if (control) {
      const field = this.controlField(part, name);
      const code = field ? (fields.get(field.name) ?? field.idle) : Math.max(0, control.values.indexOf(control.default ?? ''));
      return () => code;
    }
    const setting = part.def.settings.find((s) => s.name === name);
    if (setting?.type === 'choice') {
      const index = setting.choices.indexOf(String(part.settings.get(name)));
      return () => index;
    }
    throw new Error(`custom part ${part.name}: no value for \`${name}\``);
  }

  /** The code a field holds in a micro-op (its idle code where the word does not set it). */
  private fieldCode(name: string, fields: ReadonlyMap<string, number>): number {
    const field = this.machine.signals.get(name);
    return fields.get(name) ?? (field?.type === 'field' ? field.idle : 0);
  }

  /** Codes of the part's controls in this micro-op (a control no field drives is absent). */
  private controlCodes(rt: PartRuntime, fields: ReadonlyMap<string, number>): Map<string, number> {
    const codes = new Map<string, number>();
    for (const control of rt.part.def.controls) {
      const field = this.controlField(rt.part, control.name);
      if (field) codes.set(control.name, fields.get(field.name) ?? field.idle);
      // No field: the control holds its default (partSetting numbers its values in order).
      else if (control.default !== undefined) codes.set(control.name, control.values.indexOf(control.default));
    }
    return codes;
  }

  /** Buses a port reads with this micro-op's control codes (they must be defined, and settle first). */
  private busReads(rt: PartRuntime, port: string, fields: ReadonlyMap<string, number>): number[] {
    return portBusReads(rt.part, port, this.controlCodes(rt, fields)).map((b) => this.busIndex.get(b)!);
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
      if (!field && control.default !== undefined) continue;
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
    const param = strobePortNumber(drive.param, strobe);
    const port = compilePort(rt.part.def, partSetting(this.machine, rt.part), texts, undefined, { element: rt.element }, param);
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
    this.driverSpecs.push({ rt, texts, fields, bus: -1, param });
    return { index: this.drivers.length - 1, reads: this.busReads(rt, drive.name, fields) };
  }

  /** The closing-edge action of a clock, count or write strobe on an edge port, for one micro-op. */
  edge(strobe: Strobe, fields: ReadonlyMap<string, number>, bus: number): CustomOp {
    const rt = this.byName.get(strobe.part ?? '')!;
    const edge = rt.part.def.edges.find((e) => e.name === definedPortOf(rt.part, strobe))!;
    return this.edgePort(rt, edge, fields, bus, strobe.lines, strobePortNumber(edge.param, strobe));
  }

  /**
   * The edge ports that act at every closing edge with no strobe (`on next always:`, a
   * sequencer's next step), for one micro-op: each with the name traces show (`seq.next`).
   */
  alwaysEdges(fields: ReadonlyMap<string, number>): { name: string; part: string; op: CustomOp }[] {
    const out: { name: string; part: string; op: CustomOp }[] = [];
    for (const rt of this.runtimes) {
      for (const edge of rt.part.def.edges) {
        if (edge.always) out.push({ name: `${rt.part.name}.${edge.name}`, part: rt.part.name, op: this.edgePort(rt, edge, fields, -1, undefined, undefined) });
      }
    }
    return out;
  }

  private edgePort(rt: PartRuntime, edge: KindEdge, fields: ReadonlyMap<string, number>, bus: number, lines: { hi: number; lo: number } | undefined, param: PortNumber | undefined): CustomOp {
    const def = rt.part.def;
    const texts = edge.assigns.flatMap((a) => [{ text: a.expr, width: rt.widths.get(a.target)! }, ...(a.when ? [{ text: a.when, width: 1 }] : []), ...(a.index ? [{ text: a.index }] : [])]);
    const edgeWidth = edge.width ? sizeOf(edge.width, rt.part.settings) : undefined;
    const port = compilePort(def, partSetting(this.machine, rt.part), texts, edgeWidth, { element: rt.element }, param);
    const problem = this.unnamedControl(rt, texts, port.inputs, fields);
    if (problem) return { problem };
    const getters = port.inputs.map((name) => this.getter(rt, name, fields, bus, lines));
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
    this.edgeSpecs.push({ rt, texts, edgeWidth, fields, bus, param, assigns: plan });
    const reads = this.busReads(rt, edge.name, fields);
    const loadsIn = bus >= 0 && port.inputs.includes(edgeInputName);
    return { index: this.edges.length - 1, reads: loadsIn ? [bus, ...reads] : reads, loadsIn };
  }

  /** How the expressions of one port reach their names when inlined at `site`. */
  private binding(spec: PortSpec, site: InlineSite, afterEdge = false): InlineBinding {
    const { rt, fields, bus } = spec;
    const part = rt.part;
    const masked = (code: string, width: number) => (width >= 32 ? `(${code} >>> 0)` : `(${code} & ${2 ** width - 1})`);
    const scopeWidth = (name: string) => {
      const input = part.def.inputs.find((i) => i.name === name);
      if (input) return sizeOf(input.width, part.settings);
      if (name === edgeInputName) return spec.edgeWidth ?? 32;
      return rt.widths.get(name) ?? 32;
    };
    const controls = this.controlCodes(rt, fields);
    const choices = choiceCodes(part.def, part.settings);
    return {
      prefix: site.prefix,
      known: (name) => {
        if (part.def.controls.some((c) => c.name === name)) return controls.get(name) ?? 0;
        return choices.get(name);
      },
      name: (name) => {
        const w = scopeWidth(name);
        if (name === edgeInputName && bus >= 0) return masked(site.bus(bus), w);
        const storage = rt.storage.get(name);
        if (storage?.in === IN_STATE) return masked(`customState[${storage.base}]`, w);
        if (storage?.in === IN_PART) return masked(`partValue[${storage.base}]`, w);
        const input = part.inputs.get(name);
        if (input?.from === 'bus') return masked(site.bus(this.busIndex.get(input.name)!), w);
        if (input?.from === 'part') return masked(`partValue[${this.partIndex.get(input.name)!}]`, w);
        // After the edge (a latched flag read from the new state) the instruction register may have just loaded.
        if (input?.from === 'instruction') return masked(afterEdge && this.irPart >= 0 ? `partValue[${this.irPart}]` : 'ir', w);
        if (input?.from === 'field') return String(this.fieldCode(input.name, fields) & (2 ** w - 1));
        throw new Error(`custom part ${part.name}: no value for \`${name}\``);
      },
      element: (array, index, width) => {
        const storage = rt.storage.get(array)!;
        if (storage.in === IN_MEMORY) return `memory.load8((${index}) >>> 0)`;
        const store = storage.in === IN_REGS ? 'regs' : 'customState';
        return masked(`${store}[${storage.base} + ${index}]`, width);
      },
      memoryRun: (array, address, count) => {
        if (rt.storage.get(array)?.in !== IN_MEMORY) return undefined;
        return count === 4 ? `(${site.loadWord(`(${address}) >>> 0`)} >>> 0)` : `memory.load16((${address}) >>> 0)`;
      },
    };
  }

  /** The code of driver `index` inlined at `site`: statements to run first, then an int32 value. */
  driverSource(index: number, site: InlineSite): { lines: string[]; value: string } {
    const spec = this.driverSpecs[index];
    const src = portSource(spec.rt.part.def, partSetting(this.machine, spec.rt.part), spec.texts, undefined, this.binding(spec, site), spec.param);
    return { lines: src.temps.length ? [`let ${src.temps.join(', ')};`] : [], value: `((${src.codes[0]}) | 0)` };
  }

  /**
   * Edge port `index` inlined at `site`: what it computes from the values before the edge, and
   * how it stores them (run after every other closing-edge action, as commit() does), followed
   * by its flags.
   */
  edgeSource(index: number, site: InlineSite): InlineEdge {
    const spec = this.edgeSpecs[index];
    const { rt } = spec;
    const src = portSource(rt.part.def, partSetting(this.machine, rt.part), spec.texts, spec.edgeWidth, this.binding(spec, site), spec.param);
    const p = site.prefix;
    const compute: string[] = src.temps.length ? [`let ${src.temps.join(', ')};`] : [];
    const store: string[] = [];
    let bytes = 0;
    const lanes = this.laneRun(spec, src.codes);
    if (lanes) {
      // The word, halfword or byte written in one access, as the byte stage would group it; an
      // address run that wraps past 2^32 - 1 goes through the stage, which splits it as the board does.
      const binding = this.binding(spec, site);
      compute.push(`const ${p}a = ${src.codes[spec.assigns[lanes.first].index]};`, `const ${p}d = ${binding.name(edgeInputName)};`);
      const size = lanes.n === 4 ? 2 : lanes.n === 2 ? 1 : 0;
      const value = lanes.n === 4 ? `${p}d | 0` : `${p}d & ${2 ** (8 * lanes.n) - 1}`;
      const staged = Array.from({ length: lanes.n }, (_, k) => `stageByte((${p}a + ${k}) >>> 0, (${p}d >>> ${8 * k}) & 0xff);`).join(' ');
      store.push(`if (${p}a <= ${0xffffffff - (lanes.n - 1)}) state.storeMemory(${size}, ${p}a, ${value}); else { ${staged} }`);
      bytes = lanes.n;
    }
    spec.assigns.forEach((a, k) => {
      const when = a.when >= 0 ? src.codes[a.when] : '1';
      if (when === '0' || (lanes && a.storage.in === IN_MEMORY)) return;
      compute.push(`const ${p}v${k} = ${src.codes[a.value]};`);
      if (when !== '1') compute.push(`const ${p}w${k} = ${when};`);
      if (a.index >= 0) compute.push(`const ${p}i${k} = ${src.codes[a.index]};`);
      const at = a.index >= 0 ? `${p}i${k}` : '0';
      let write: string;
      if (a.storage.in === IN_MEMORY) {
        write = `stageByte(${at} >>> 0, ${p}v${k} & 0xff);`;
        bytes++;
      } else {
        const target = a.storage.in === IN_STATE ? 'customState' : a.storage.in === IN_PART ? 'partValue' : 'regs';
        // An index past an array's end writes nothing.
        write = a.index >= 0 ? `if (${at} < ${a.count}) ${target}[${a.storage.base} + ${at}] = ${p}v${k} | 0;` : `${target}[${a.storage.base}] = ${p}v${k} | 0;`;
      }
      store.push(when === '1' ? write : `if (${p}w${k} !== 0) { ${write} }`);
    });
    let changesInputs = false;
    if (rt.flags) {
      const def = rt.part.def;
      const flagSpec: PortSpec = { rt, texts: rt.flags.texts.map((f) => ({ text: f.expr, width: 1 })), fields: new Map(), bus: -1 };
      const flagSrc = portSource(def, partSetting(this.machine, rt.part), flagSpec.texts, undefined, this.binding(flagSpec, { ...site, prefix: `${p}f` }, true));
      if (flagSrc.temps.length) store.push(`let ${flagSrc.temps.join(', ')};`);
      rt.flags.flagNumbers.forEach((f, i) => {
        if (f >= 0) store.push(`flags[${f}] = (${flagSrc.codes[i]}) & 1;`);
      });
      changesInputs = true;
    }
    return { compute, store, changesInputs, writesMemory: bytes > 0 };
  }

  /**
   * The byte-memory writes of an edge port in one micro-op when they are one little-endian run
   * of 1, 2 or 4 lanes: `m[a] <= in[7:0]`, `m[a + 1] <= in[15:8]`, ... with every condition
   * folded to true by the step's controls and every other memory write folded away. Undefined
   * otherwise (the bytes then go through the stage one by one).
   */
  private laneRun(spec: (typeof this.edgeSpecs)[number], codes: string[]): { first: number; n: number } | undefined {
    const def = spec.rt.part.def;
    const live = spec.assigns.map((a, k) => ({ a, k })).filter(({ a }) => a.storage.in === IN_MEMORY && (a.when < 0 || codes[a.when] !== '0'));
    if (live.length === 0 || ![1, 2, 4].includes(live.length) || live.some(({ a }) => a.when >= 0 && codes[a.when] !== '1')) return undefined;
    let base: string | undefined;
    let first = -1;
    const offsets = new Set<number>();
    for (const { a, k } of live) {
      const index = parsedExpr(def, spec.texts[a.index].text).expr;
      const value = parsedExpr(def, spec.texts[a.value].text).expr;
      if (!index || !value) return undefined;
      const offset = index.kind === 'binary' && index.op === '+' && index.right.kind === 'number' ? Number(index.right.value) : 0;
      const at = offset === 0 ? index : index.kind === 'binary' ? index.left : index;
      const text = formatExpression(at);
      if (base !== undefined && text !== base) return undefined;
      base = text;
      // The lane's byte of the bus value: in[8k+7:8k].
      if (value.kind !== 'slice' || value.operand.kind !== 'name' || value.operand.name !== edgeInputName || value.lo !== 8 * offset || value.hi !== 8 * offset + 7) return undefined;
      offsets.add(offset);
      if (offset === 0) first = k;
    }
    for (let k = 0; k < live.length; k++) if (!offsets.has(k)) return undefined;
    return first < 0 ? undefined : { first, n: live.length };
  }

  /** Stores what the edge ports computed and reads the flags. */
  commit(m: CustomAccess, stage: number[], flags: Uint8Array): void {
    const bytes = this.bytes;
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
          bytes.stage(at, value);
      }
    }
    stage.length = 0;
    bytes.flush(m.store);
    // The latched flags read the new state, and the instruction register as it is after the edge.
    if (this.irPart >= 0) m.ir = m.partValue[this.irPart];
    this.refresh(m, flags);
  }

  /** The latched flags from the current state (after reset and after every commit); combinational flags keep their values. */
  refresh(m: CustomAccess, flags: Uint8Array): void {
    // Only parts with flags have anything to refresh (this runs every step).
    this.refreshed ??= this.runtimes.filter((rt) => rt.flags);
    for (const rt of this.refreshed) {
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
function valuesOfChoice(part: Part, name: string): ReadonlyMap<string, number> | undefined {
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
 * Allocation-free: the compiled steps stage every store instruction's bytes here.
 */
export class ByteStage {
  private readonly addresses: number[] = [];
  private readonly values: number[] = [];
  private n = 0;

  stage(address: number, value: number): void {
    // Insertion in address order (an edge writes a handful of bytes).
    let k = this.n++;
    address >>>= 0;
    while (k > 0 && this.addresses[k - 1] > address) {
      this.addresses[k] = this.addresses[k - 1];
      this.values[k] = this.values[k - 1];
      k--;
    }
    this.addresses[k] = address;
    this.values[k] = value;
  }

  /** Stores the staged bytes (size code: 0 byte, 1 half, 2 word) and empties the stage. */
  flush(store: (size: number, address: number, value: number) => void): void {
    const { addresses, values, n } = this;
    for (let i = 0; i < n; ) {
      let run = 1;
      while (i + run < n && run < 4 && addresses[i + run] === addresses[i] + run) run++;
      const size = run >= 4 ? 4 : run >= 2 ? 2 : 1;
      let value = 0;
      for (let k = size - 1; k >= 0; k--) value = (value << 8) | values[i + k];
      store(size === 4 ? 2 : size === 2 ? 1 : 0, addresses[i], value | 0);
      i += size;
    }
    this.n = 0;
  }
}
