// Micro-ops: what one control word (one per store, read back from the encoded bits) makes the
// machine do in one step, compiled into one flat Int32Array the stepping loops walk without
// allocating (layout: U_* below), with a MicroOpInfo beside each for reports and traces.
// A micro-op lists
//   - the buses nobody drives that have no keepers (they float: their value becomes undefined),
//   - the drivers, in an order where every driver that reads a bus (an ALU, a memory port
//     addressed by a bus) comes after that bus's own driver,
//   - the closing-edge actions, ordered so everything that reads old state (a memory write's
//     address register, the register file's rd select from the instruction register) happens
//     before anything that changes it: faults, memory writes, register-file writes, flag
//     latches, counts, register clocks,
//   - whether the word ends the instruction or traps.
// Problems a word has whatever the data (two drivers on one bus, a driver reading its own bus
// through other parts, a control field code that names no operation) are found here once; the
// hot loop only checks a flag.
//
// Deliberately not here: values (simulator.ts computes them) and reports (describe.ts).
import { contendedBuses, driverNamed, lineMask, lineRanges, withConnections } from '../model/busDrivers';
import type { Strobe } from '../model/types';
import { GrowableInt32 } from './growable';
import type { SimPlan } from './plan';

// Driver operations. Operands a, b, c as listed. The hot loop in simulator.ts switches on the
// literal numbers (module constants are not folded into switch cases in bundled code): keep
// both in step. Every part runs from its kind's definition (sim/customParts.ts).
export const D_UNDEFINED = 0; // drives a value nobody can know (an unnamed control code); reason in notes
export const D_CUSTOM = 1; // A = driver of a drive port (plan.custom.drivers), B = mask of the buses it reads

// Closing-edge operations, in the order they are applied.
export const E_FAULT = 0; // stop before any update; the message is in MicroOpInfo.edges
// An edge port (plan.custom.edges): A = its index, C = 1 for the instruction register. Every port
// computes from the values before the edge; what they computed is stored once all have run
// (HEADER_CUSTOM).
export const E_CUSTOM = 1;

/** Layout of a compiled micro-op in `MicroOps.code`, from its base offset. */
export const U_HEADER = 0; // bit 0: stops the machine (contention or loop), bit 1: end, bit 2: trap
export const U_INDEX = 1; // micro-op number (for the step log and reports)
export const U_FLOAT_MASK = 2; // buses that float in this step (undriven, no keepers), one bit each
export const U_NEED_MASK = 3; // buses the closing edge loads from: they must hold defined values
export const U_DRIVERS = 4; // number of drivers; then 5 words each: op, bus, a, b, c
export const DRIVER_WORDS = 5;
// After the drivers: the number of edge actions, then 5 words each: op, bus (the flag for a
// compare), a, b, c.
export const EDGE_WORDS = 5;
export const HEADER_STOP = 1;
export const HEADER_END = 2;
export const HEADER_TRAP = 4;
/** Edge ports of parts of the table's own kinds ran: store what they computed. */
export const HEADER_CUSTOM = 8;
/**
 * An edge action loads some lines of its bus (`clock result[7:0] -> acc`): beside `code`, at the
 * action's offset, `lines` holds their mask and lowest line, and those lines (not the whole bus,
 * which is left out of U_NEED_MASK for it) must hold defined values.
 */
export const HEADER_PARTIAL_LOAD = 16;

/** Most buses a machine may have: definedness is one bit per bus in a 32-bit word. */
export const MAX_BUSES = 31;

/** What a micro-op does, by name, for reports and traces. */
export interface MicroOpInfo {
  /** Offset of the micro-op in `code`. */
  base: number;
  /** Distinct-word number of each store (evaluation order). */
  words: number[];
  asserted: string[];
  fields: Map<string, number>;
  /** Drivers in settle order (as in `code`): strobe, bus, part, and why the value is unknown for an unnamed code. */
  drivers: { strobe: string; bus: number; part: string; note?: string }[];
  /** Edge actions in the order applied (as in `code`): strobe, the message of a fault entry, the buses it loads from. */
  edges: { strobe: string; fault?: string; reads: number[] }[];
  contention: { bus: number; strobes: string[] }[];
  /** A combinational loop through buses, described; empty when there is none. */
  loop: string;
  /** Buses driven in this step (1) or not (0). */
  driven: Uint8Array;
  /** The combinational flags of this word (an index into plan.custom.settlers), or -1 when the machine has none. */
  settle: number;
}

interface DriverSpec {
  op: number;
  bus: number;
  a: number;
  b: number;
  c: number;
  strobe: string;
  reads: number[];
  note?: string;
}

interface EdgeSpec {
  op: number;
  bus: number;
  a: number;
  b: number;
  c: number;
  strobe: string;
  /** Buses this action loads from (they must be defined). */
  reads: number[];
  /**
   * The lines of its strobe's bus it loads as its data (a register's load, a memory write's
   * data, an edge port's `in`) when the strobe names some (`result[7:0]`): mask and lowest line.
   */
  load?: { mask: number; lo: number };
  fault?: string;
}

export class MicroOps {
  count = 0;
  /** Every compiled micro-op, back to back (layout: U_* above). */
  readonly code = new GrowableInt32(1024);
  /**
   * Beside `code`, at the offset of each driver: the mask of the bus lines it drives (0: the
   * whole bus), the lowest of them, and 1 when its value's definedness joins that of the bus's
   * other lines (another driver of the same bus in this step, or the keepers) instead of
   * setting it. At the offset of each edge action: the mask of the lines it loads (0: the whole
   * bus) and the lowest of them.
   */
  readonly lines = new GrowableInt32(1024);
  readonly info: MicroOpInfo[] = [];
  /** Multiplier of each store's word number in the combined key. */
  readonly strides: number[] = [];
  /** Combined key -> base offset of the micro-op in `code` (-1 not compiled yet), when the key space fits an array. */
  readonly byKey: Int32Array | null;
  private readonly byKeyMap = new Map<number, number>();
  private readonly fieldNames = new Map<string, Map<number, string>>();

  constructor(private readonly plan: SimPlan) {
    let space = 1;
    for (const s of plan.stores) {
      this.strides.push(space);
      space *= s.words.length;
    }
    this.byKey = space <= 1 << 22 ? new Int32Array(space).fill(-1) : null;
    for (const signal of plan.machine.signals.values()) {
      if (signal.type === 'field') this.fieldNames.set(signal.name, new Map([...signal.values.values()].map((v) => [v.code, v.name])));
    }
    // One store: every word is known now, so the hot loop never has to stop to compile.
    if (plan.stores.length === 1) for (let w = 0; w < plan.stores[0].words.length; w++) this.lookup(w, [w]);
  }

  /** The base offset in `code` of the micro-op for a combined key (sum of word number x stride), compiled on first use. */
  lookup(key: number, words: number[]): number {
    if (this.byKey) {
      const found = this.byKey[key];
      if (found >= 0) return found;
    } else {
      const found = this.byKeyMap.get(key);
      if (found !== undefined) return found;
    }
    const base = this.compile(words);
    if (this.byKey) this.byKey[key] = base;
    else this.byKeyMap.set(key, base);
    return base;
  }

  /** Name of the value a field's code stands for, or undefined when no value has that code. */
  valueName(field: string, code: number): string | undefined {
    return this.fieldNames.get(field)?.get(code);
  }

  private compile(words: number[]): number {
    const plan = this.plan;
    const machine = plan.machine;
    const asserted: string[] = [];
    const fields = new Map<string, number>();
    words.forEach((w, s) => {
      const word = plan.stores[s].words[w];
      asserted.push(...word.asserted);
      for (const [name, code] of word.fields) fields.set(name, code);
    });
    const drivers: DriverSpec[] = [];
    const edges: EdgeSpec[] = [];
    let header = 0;
    // Connections (`connect`) drive in every step, like an enable every word asserts.
    for (const name of withConnections(machine, asserted)) {
      const strobe = driverNamed(machine, name)!;
      if (strobe.kind === 'end') header |= HEADER_END;
      else if (strobe.kind === 'trap') header |= HEADER_TRAP;
      else if (strobe.kind === 'enable' || strobe.kind === 'read') {
        const driver = this.driverOf(strobe, fields);
        if (driver) drivers.push(driver);
      } else {
        const edge = this.edgeOf(strobe, fields);
        if (edge) edges.push(edge);
      }
    }
    // Edge ports that act at every closing edge (a sequencer's next step): no strobe, in every word.
    for (const always of plan.custom.alwaysEdges(fields)) {
      const base = { bus: -1, a: 0, b: 0, c: 0, strobe: always.name, reads: [] as number[] };
      if ('problem' in always.op) edges.push({ ...base, op: E_FAULT, fault: `${always.op.problem}, while \`${always.name}\` acts at the closing edge` });
      else edges.push({ ...base, op: E_CUSTOM, a: always.op.index, reads: always.op.reads });
    }
    const nBuses = plan.busNames.length;
    const driven = new Uint8Array(nBuses);
    for (const d of drivers) driven[d.bus] = 1;
    // Lines each driver drives; lines of a keeper-less bus that some drivers leave undriven float,
    // so a part that computes from that whole bus gets no defined value, and a load of it faults.
    const coverage = new Int32Array(nBuses);
    const strobeLines = (d: { strobe: string }) => {
      const strobe = driverNamed(machine, d.strobe)!;
      return strobe.lines ? { mask: lineMask(strobe.lines.hi, strobe.lines.lo), lo: strobe.lines.lo } : { mask: 0, lo: 0 };
    };
    for (const d of drivers) {
      const { mask } = strobeLines(d);
      coverage[d.bus] |= mask === 0 ? plan.busMask[d.bus] : mask;
    }
    const incomplete = (bus: number) => driven[bus] === 1 && !plan.busKeeper[bus] && (coverage[bus] & plan.busMask[bus]) !== plan.busMask[bus];
    for (const d of drivers) {
      const floating = d.reads.find(incomplete);
      if (floating !== undefined) {
        d.op = D_UNDEFINED;
        d.note = `it computes from bus \`${plan.busNames[floating]}\`, some of whose lines nobody drives in this step`;
        d.reads = [];
      }
    }
    for (const e of edges) {
      // A load of some lines: without keepers every line it takes must be driven in this step
      // (the others may float); with keepers an undriven line holds what it held, defined or not.
      if (e.load && e.op !== E_FAULT && !plan.busKeeper[e.bus] && (coverage[e.bus] & e.load.mask) !== e.load.mask) {
        e.op = E_FAULT;
        e.fault = `\`${e.strobe}\` loads lines ${lineRanges(e.load.mask & ~coverage[e.bus])} of bus \`${plan.busNames[e.bus]}\`, which nobody drives in this step, and the bus has no keepers`;
        e.reads = [];
        continue;
      }
      const floating = e.reads.find(incomplete);
      if (floating !== undefined && e.op !== E_FAULT) {
        e.op = E_FAULT;
        e.fault = `\`${e.strobe}\` loads bus \`${plan.busNames[floating]}\`, some of whose lines nobody drives in this step and which has no keepers`;
        e.reads = [];
      }
    }
    // The one contention rule (model/busDrivers.ts), over the drivers this word really has.
    const contention = contendedBuses(machine, drivers.map((d) => d.strobe)).map(({ bus, strobes }) => ({ bus: plan.busIndex.get(bus)!, strobes }));
    const { ordered, loop } = settleOrder(drivers, plan.busNames);
    if (contention.length > 0 || loop !== '') header |= HEADER_STOP;
    let floatMask = 0;
    for (let bus = 0; bus < nBuses; bus++) if (!driven[bus] && !plan.busKeeper[bus]) floatMask |= 1 << bus;
    let needMask = 0;
    for (const e of edges) for (const bus of e.reads) needMask |= 1 << bus;
    // Faults first: a step that faults changes nothing.
    edges.sort((x, y) => x.op - y.op);
    if (edges.some((e) => e.op === E_CUSTOM)) header |= HEADER_CUSTOM;
    if (edges.some((e) => e.load && e.op !== E_FAULT)) header |= HEADER_PARTIAL_LOAD;
    const index = this.count++;
    const code = this.code;
    const base = code.length;
    code.push(header);
    code.push(index);
    code.push(floatMask);
    code.push(needMask);
    code.push(ordered.length);
    const joined = new Set<number>();
    for (const d of ordered) {
      const at = code.length;
      for (const v of [d.op, d.bus, d.a, d.b, d.c]) code.push(v);
      while (this.lines.length < code.length) this.lines.push(0);
      const { mask, lo } = strobeLines(d);
      this.lines.data[at] = mask;
      this.lines.data[at + 1] = lo;
      // The first driver of a fully covered bus sets its definedness; the others (and every
      // driver of a bus whose other lines are kept) join in.
      const partial = mask !== 0;
      this.lines.data[at + 2] = partial && (joined.has(d.bus) || plan.busKeeper[d.bus] === 1) ? 1 : 0;
      if (partial) joined.add(d.bus);
    }
    code.push(edges.length);
    for (const e of edges) {
      const at = code.length;
      for (const v of [e.op, e.bus, e.a, e.b, e.c]) code.push(v);
      while (this.lines.length < code.length) this.lines.push(0);
      if (e.load && e.op !== E_FAULT) {
        this.lines.data[at] = e.load.mask;
        this.lines.data[at + 1] = e.load.lo;
      }
    }
    while (this.lines.length < code.length) this.lines.push(0);
    this.info.push({
      base,
      words: [...words],
      asserted,
      fields,
      drivers: ordered.map((d) => ({ strobe: d.strobe, bus: d.bus, part: driverNamed(machine, d.strobe)!.part ?? '', note: d.note })),
      edges: edges.map((e) => ({ strobe: e.strobe, fault: e.fault, reads: e.reads })),
      contention,
      loop,
      driven,
      settle: plan.custom.combinationalCount > 0 ? plan.custom.settler(fields) : -1,
    });
    return base;
  }

  private driverOf(strobe: Strobe, fields: Map<string, number>): DriverSpec | undefined {
    const plan = this.plan;
    const bus = plan.busIndex.get(strobe.bus ?? '');
    const part = plan.machine.parts.get(strobe.part ?? '');
    if (bus === undefined || !part) return undefined;
    const base = { bus, a: 0, b: 0, c: 0, strobe: strobe.name, reads: [] as number[] };
    const undefinedDriver = (note: string): DriverSpec => ({ ...base, op: D_UNDEFINED, note });
    if (!plan.custom.runs(strobe)) return undefinedDriver(`\`${part.name}\` has no drive port for \`${strobe.name}\``);
    const op = plan.custom.driver(strobe, fields);
    if ('problem' in op) return undefinedDriver(op.problem);
    return { ...base, op: D_CUSTOM, a: op.index, b: op.reads.reduce((m, b) => m | (1 << b), 0), reads: op.reads };
  }

  private edgeOf(strobe: Strobe, fields: Map<string, number>): EdgeSpec | undefined {
    const plan = this.plan;
    const part = plan.machine.parts.get(strobe.part ?? '');
    if (!part) return undefined;
    const bus = strobe.bus === undefined ? -1 : (plan.busIndex.get(strobe.bus) ?? -1);
    // A load of some lines reads just those (checked apart); the whole bus is not needed for it.
    const load = bus >= 0 && strobe.lines ? { mask: lineMask(strobe.lines.hi, strobe.lines.lo), lo: strobe.lines.lo } : undefined;
    const base = { bus, a: 0, b: 0, c: 0, strobe: strobe.name, reads: bus >= 0 && !load ? [bus] : [], load };
    const fault = (message: string): EdgeSpec => ({ ...base, op: E_FAULT, fault: message, reads: [] });
    if (!plan.custom.runs(strobe)) return fault(`\`${strobe.name}\` acts on \`${part.name}\`, whose kind has no closing-edge port for it`);
    const op = plan.custom.edge(strobe, fields, bus);
    if ('problem' in op) return fault(`${op.problem}, while \`${strobe.name}\` acts at the closing edge`);
    // C = 1 when the port loads the instruction register (the simulator notes the first fetch).
    const loadsBus = bus >= 0 && op.loadsIn === true;
    const reads = load && loadsBus ? op.reads.slice(1) : op.reads;
    return { ...base, op: E_CUSTOM, a: op.index, c: plan.partIndex.get(part.name) === plan.irPart ? 1 : 0, reads, load: loadsBus ? load : undefined };
  }
}

/**
 * Orders drivers so each one that reads a bus comes after the driver of that bus (undriven buses
 * hold their value from the step's start). A cycle is a combinational loop: returned described.
 */
function settleOrder(drivers: DriverSpec[], busNames: string[]): { ordered: DriverSpec[]; loop: string } {
  const pending = [...drivers];
  const ordered: DriverSpec[] = [];
  const settled = new Set<number>();
  for (let bus = 0; bus < busNames.length; bus++) if (!drivers.some((d) => d.bus === bus)) settled.add(bus);
  let progress = true;
  while (pending.length && progress) {
    progress = false;
    for (let i = 0; i < pending.length; i++) {
      const d = pending[i];
      if (!d.reads.every((b) => settled.has(b))) continue;
      ordered.push(d);
      pending.splice(i--, 1);
      // A bus counts as settled once all its drivers are placed (two drivers is contention, reported apart).
      if (!pending.some((p) => p.bus === d.bus)) settled.add(d.bus);
      progress = true;
    }
  }
  if (pending.length === 0) return { ordered, loop: '' };
  const loop = pending.map((d) => `\`${d.strobe}\` drives ${busNames[d.bus]} from ${d.reads.map((b) => busNames[b]).join(' and ')}`).join('; ');
  return { ordered: [...ordered, ...pending], loop: `combinational loop: ${loop}` };
}
