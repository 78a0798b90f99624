// Every part as its kind's definition says, over terms: the drive ports, the closing-edge ports
// and the flags of the standard library's kinds and of the table's own kinds alike, read through
// model/partFacts.ts (definedPortOf) and parts/behaviour.ts (portExpressions:
// the same expressions in the same scope the simulator compiles), then evaluated symbolically by
// symbolicExpr.ts. Nothing here knows a kind by name: where a state lives follows from the
// definition and the plan (a scalar state is a slot of its own; the register array of the
// plan's register file holds the architectural registers; a state `x memory` is the byte
// memory; any other register array is an array of its own), and the names an expression reads
// are given as the simulator gives them (sim/customParts.ts): inputs from buses, parts and the
// instruction register, states, controls fixed by the step's field codes, choice settings, the
// edge's `in`. What this cannot give is thrown as a ProverLimit, which the executor reports as
// "not proved" with the reason.
import { partSetting } from '../model/buildPart';
import { definedPortOf, strobePortNumber } from '../model/partFacts';
import type { Part, Field, Machine, Strobe } from '../model/types';
import { parsedExpr, portExpressions, sizeOf, type PartSetting } from '../parts/behaviour';
import { bitsFor, resolveExpression, scopeOf, type Expr, type NameInfo, type Resolution } from '../parts/expr';
import { edgeInputName, type KindEdge } from '../parts/kinds';
import type { SimPlan } from '../sim/plan';
import { symbolicResolved } from './symbolicExpr';
import type { Term, Terms } from './term';

/** Something the symbolic executor does not model: the path is reported not proved with this reason. */
export class ProverLimit extends Error {}

/** Where a state of a part lives in the prover's machine state. */
export type StateHome =
  | { readonly in: 'slot'; readonly key: string; readonly width: number }
  | { readonly in: 'registers' }
  | { readonly in: 'memory' }
  | { readonly in: 'array'; readonly key: string; readonly width: number; readonly count: number };

/** One part read as its kind's definition. */
export interface DefinedPart {
  readonly part: Part;
  readonly number: number;
  readonly setting: PartSetting;
  readonly homes: ReadonlyMap<string, StateHome>;
  /** The state whose value is the part's value (what `from part` inputs, the pc and the address lines read), as the simulator keeps it; absent: an unknown that never changes. */
  readonly valueState?: string;
}

/** What the symbolic machine holds now, as the ports read it. */
export interface MachineView {
  /** Bus `b` at its width. */
  bus(b: number): Term;
  /** The value of part `p`, 32 bits (the simulator's part value). */
  partValue(p: number): Term;
  /** A scalar state slot of `width` bits. */
  slot(key: string, width: number): Term;
  /** An element of the register file (5-bit index, 32-bit value). */
  register(index: Term): Term;
  /** A byte of memory (32-bit address). */
  byte(address: Term): Term;
  /** An element of a part's own register array (index of bitsFor(count) bits, `width`-bit elements). */
  element(key: string, index: Term, width: number): Term;
}

/** One assignment of a closing edge, computed from the values before the edge. */
export interface EdgeAssignment {
  readonly home: StateHome;
  /** The element written (registers: 5 bits, memory: 32 bits, arrays: their index width); absent for a slot. */
  readonly index?: Term;
  readonly value: Term;
  /** One bit: the assignment happens only when this holds. */
  readonly when: Term;
}

interface Compiled {
  readonly expr: Expr;
  readonly resolution: Resolution;
}

/** A port of one part in one micro-op: its expressions resolved in its scope, and how each name gets its value. */
interface PortPlan {
  readonly model: DefinedPart;
  readonly scope: Map<string, NameInfo>;
  /** Codes of the part's controls in this micro-op. */
  readonly controls: ReadonlyMap<string, number>;
  /** Codes of the number fields its `field` inputs read in this micro-op (the idle code where the word sets none). */
  readonly fieldInputs: ReadonlyMap<string, number>;
}

/** Fits a term to `w` bits: the low bits, or zero-extended (as the simulator masks an input to its width). */
export function fit(T: Terms, t: Term, w: number): Term {
  if (t.w === w) return t;
  return t.w > w ? T.extract(t, w - 1, 0) : T.extend(false, t, w);
}

export class DefinedParts {
  private readonly models = new Map<string, DefinedPart | { problem: string }>();
  private readonly drives = new Map<string, { plan: PortPlan; compiled: Compiled }>();
  private readonly edges = new Map<string, { plan: PortPlan; assigns: { home: StateHome; target: string; value: Compiled; when?: Compiled; index?: Compiled }[]; edgeWidth?: number }>();
  private flagPlans?: { plan: PortPlan; flags: { flag: number; compiled: Compiled }[] }[];
  /** The part whose register array holds the architectural registers. */
  private readonly regfile: string | undefined;

  constructor(private readonly plan: SimPlan) {
    this.regfile = plan.regfiles[0]?.name;
  }

  private get machine(): Machine {
    return this.plan.machine;
  }

  /** The part `name` as its definition, or why it cannot be read as one. */
  model(name: string): DefinedPart | { problem: string } {
    const cached = this.models.get(name);
    if (cached) return cached;
    const original = this.machine.parts.get(name);
    let result: DefinedPart | { problem: string };
    if (!original) result = { problem: `there is no part \`${name}\`` };
    else {
      const defined = original;
      {
        const homes = new Map<string, StateHome>();
        let arrays = 0;
        for (const state of defined.def.states) {
          const width = sizeOf(state.width, defined.settings);
          if (state.count === 'memory') homes.set(state.name, { in: 'memory' });
          else if (state.count) {
            const count = sizeOf(state.count, defined.settings);
            if (name === this.regfile && arrays++ === 0) homes.set(state.name, { in: 'registers' });
            else homes.set(state.name, { in: 'array', key: `${name}.${state.name}`, width, count });
          } else homes.set(state.name, { in: 'slot', key: `${name}.${state.name}`, width });
        }
        result = {
          part: defined,
          number: this.plan.partIndex.get(name)!,
          setting: partSetting(this.machine, defined),
          homes,
          ...valueStateOf(original.def.origin === 'table', defined),
        };
      }
    }
    this.models.set(name, result);
    return result;
  }

  /** Why the plan's register file, memory or program counter cannot be held by the prover's state, or undefined. */
  problems(): string | undefined {
    const pc = this.plan.parts[this.plan.pcPart].name;
    const ir = this.plan.parts[this.plan.irPart].name;
    for (const name of [pc, ir]) {
      const m = this.model(name);
      if ('problem' in m) return `part \`${name}\`: ${m.problem}`;
      const home = m.valueState ? m.homes.get(m.valueState) : undefined;
      if (home?.in !== 'slot' || home.width !== 32) return `\`${name}\` does not hold its value in one 32-bit state; the prover runs a 32-bit program counter and instruction register`;
    }
    for (const part of this.machine.parts.values()) {
      const m = this.model(part.name);
      if ('problem' in m) continue; // a part on the simulator's built-in path: any step that uses it is reported
      for (const state of m.part.def.states) {
        const home = m.homes.get(state.name)!;
        const width = sizeOf(state.width, m.part.settings);
        if (home.in === 'registers' && (width !== 32 || (state.count !== 'memory' && state.count && sizeOf(state.count, m.part.settings) !== 32))) return `the register file \`${part.name}\` is not 32 registers of 32 bits; the prover holds RV32I's x0..x31`;
        if (home.in === 'memory' && width !== 8) return `\`${part.name}\`'s memory \`${state.name}\` has ${width}-bit elements; the prover holds a byte memory`;
      }
    }
    return undefined;
  }

  /** The part a strobe acts on, and the port of its definition it uses. */
  private portOf(strobe: Strobe): { model: DefinedPart; port: string } {
    const m = this.model(strobe.part ?? '');
    if ('problem' in m) throw new ProverLimit(`\`${strobe.name}\` acts on \`${strobe.part}\`, which the prover cannot read as a definition: ${m.problem}`);
    const port = definedPortOf(m.part, strobe);
    if (port === undefined) throw new ProverLimit(`\`${strobe.name}\` uses no port of \`${m.part.name}\`'s definition (kind \`${m.part.kindName}\`)`);
    return { model: m, port };
  }

  private controlField(part: Part, control: string): Field | undefined {
    const name = part.controlFields.get(control);
    const field = name ? this.machine.signals.get(name) : undefined;
    return field?.type === 'field' ? field : undefined;
  }

  private portPlan(model: DefinedPart, fields: ReadonlyMap<string, number>, scope: Map<string, NameInfo>): PortPlan {
    const controls = new Map<string, number>();
    for (const control of model.part.def.controls) {
      const field = this.controlField(model.part, control.name);
      // A control no field drives holds its default value (the first where it names none), as the simulator gives it.
      controls.set(control.name, field ? (fields.get(field.name) ?? field.idle) : Math.max(0, control.values.indexOf(control.default ?? '')));
    }
    // A `field` input reads the code of a number field of the word, as the simulator gives it (sim/customParts.ts).
    const fieldInputs = new Map<string, number>();
    for (const [name, input] of model.part.inputs) {
      if (input.from !== 'field') continue;
      const field = this.machine.signals.get(input.name);
      fieldInputs.set(name, fields.get(input.name) ?? (field?.type === 'field' ? field.idle : 0));
    }
    return { model, scope, controls, fieldInputs };
  }

  private resolve(expr: Expr, scope: Map<string, NameInfo>, width: number | undefined, what: string): Compiled {
    const resolution = resolveExpression(expr, scopeOf(scope), width);
    if (resolution.diagnostics.length) throw new ProverLimit(`${what} does not check: ${resolution.diagnostics[0].message} [${resolution.diagnostics[0].code}]`);
    return { expr, resolution };
  }

  /** The value a drive port puts on its bus in the micro-op `key` (cached by it), at the port's width. */
  drive(T: Terms, view: MachineView, key: string, strobe: Strobe, fields: ReadonlyMap<string, number>): Term {
    let entry = this.drives.get(key);
    if (!entry) {
      const { model, port } = this.portOf(strobe);
      const drive = model.part.def.drives.find((d) => d.name === port)!;
      const width = sizeOf(drive.width, model.part.settings);
      const placed = portExpressions(model.part.def, model.setting, [{ text: drive.expr, width }], undefined, strobePortNumber(drive.param, strobe));
      entry = { plan: this.portPlan(model, fields, placed.scope), compiled: this.resolve(placed.exprs[0].expr, placed.scope, width, `\`${model.part.name}.${port}\``) };
      this.drives.set(key, entry);
    }
    return this.evaluate(T, view, entry.plan, entry.compiled, undefined);
  }

  /** What an edge port assigns at the closing edge in the micro-op `key`, from the values before it; `bus` is the bus the strobe loads (-1 none). */
  edge(T: Terms, view: MachineView, key: string, strobe: Strobe, fields: ReadonlyMap<string, number>, bus: number): EdgeAssignment[] {
    return this.edgeAssignments(T, view, key, fields, bus, strobe.lines, () => {
      const { model, port } = this.portOf(strobe);
      return { model, port, param: (p) => strobePortNumber(p, strobe) };
    });
  }

  /**
   * What an edge port that acts at every closing edge with no strobe (`on next always:`, a
   * sequencer's next step) assigns in the micro-op `key`: part `part`'s port `port`, with the
   * codes of the word's fields (its controls and its `field` inputs).
   */
  always(T: Terms, view: MachineView, key: string, part: string, port: string, fields: ReadonlyMap<string, number>): EdgeAssignment[] {
    return this.edgeAssignments(T, view, `always:${key}`, fields, -1, undefined, () => {
      const m = this.model(part);
      if ('problem' in m) throw new ProverLimit(`\`${part}.${port}\` acts at every closing edge, and the prover cannot read \`${part}\` as a definition: ${m.problem}`);
      return { model: m, port, param: () => undefined };
    });
  }

  private edgeAssignments(
    T: Terms,
    view: MachineView,
    key: string,
    fields: ReadonlyMap<string, number>,
    bus: number,
    lines: { hi: number; lo: number } | undefined,
    port: () => { model: DefinedPart; port: string; param: (param: KindEdge['param']) => ReturnType<typeof strobePortNumber> },
  ): EdgeAssignment[] {
    let entry = this.edges.get(key);
    if (!entry) {
      const found = port();
      const model = found.model;
      const def = model.part.def;
      const edge = def.edges.find((e) => e.name === found.port);
      if (!edge) throw new ProverLimit(`\`${model.part.name}\` has no closing-edge port \`${found.port}\``);
      const edgeWidth = edge.width ? sizeOf(edge.width, model.part.settings) : undefined;
      const texts = edge.assigns.flatMap((a) => [{ text: a.expr, width: sizeOf(def.states.find((s) => s.name === a.target)!.width, model.part.settings) }, ...(a.when ? [{ text: a.when, width: 1 }] : []), ...(a.index ? [{ text: a.index }] : [])]);
      const placed = portExpressions(def, model.setting, texts, edgeWidth, found.param(edge.param));
      const what = `\`${model.part.name}.${found.port}\``;
      let k = 0;
      const assigns = edge.assigns.map((a) => {
        const value = this.resolve(placed.exprs[k].expr, placed.scope, placed.exprs[k++].width, what);
        const when = a.when ? this.resolve(placed.exprs[k].expr, placed.scope, 1, what) : undefined;
        if (a.when) k++;
        const index = a.index ? this.resolve(placed.exprs[k].expr, placed.scope, placed.exprs[k++].width, what) : undefined;
        return { home: model.homes.get(a.target)!, target: a.target, value, ...(when && { when }), ...(index && { index }) };
      });
      entry = { plan: this.portPlan(model, fields, placed.scope), assigns, ...(edgeWidth !== undefined && { edgeWidth }) };
      this.edges.set(key, entry);
    }
    const { plan, assigns } = entry;
    const edgeBus = bus < 0 ? undefined : { bus, lines };
    return assigns.map((a) => {
      const value = this.evaluate(T, view, plan, a.value, edgeBus);
      let when = a.when ? this.evaluate(T, view, plan, a.when, edgeBus) : T.true;
      let index: Term | undefined;
      if (a.index) {
        const raw = this.evaluate(T, view, plan, a.index, edgeBus);
        const home = a.home;
        if (home.in === 'memory') index = fit(T, raw, 32);
        else if (home.in === 'registers' || home.in === 'array') {
          // An index past an array's end writes nothing (sim/customParts.ts).
          const count = home.in === 'registers' ? 32 : home.count;
          if (2 ** raw.w > count) when = T.and(when, T.compare('bvult', raw, T.const(raw.w, count)));
          index = fit(T, raw, bitsFor(count));
        } else throw new ProverLimit(`\`${plan.model.part.name}\` writes an element of its scalar state \`${a.target}\``);
      } else if (a.home.in !== 'slot') throw new ProverLimit(`\`${plan.model.part.name}\` assigns its whole array \`${a.target}\``);
      return { home: a.home, ...(index && { index }), value, when };
    });
  }

  /** Every flag a part's definition gives, from the state in `view`: the plan's flag number and its one-bit term. */
  flags(T: Terms, view: MachineView): { flag: number; value: Term }[] {
    if (!this.flagPlans) {
      this.flagPlans = [];
      for (const part of this.machine.parts.values()) {
        const m = this.model(part.name);
        if ('problem' in m || m.part.def.flags.length === 0) continue;
        const placed = portExpressions(m.part.def, m.setting, m.part.def.flags.map((f) => ({ text: f.expr, width: 1 })));
        const flags = m.part.def.flags.flatMap((f, i) => {
          const flag = this.plan.flagIndex.get(m.part.flagNames.get(f.name) ?? '');
          return flag === undefined ? [] : [{ flag, compiled: this.resolve(placed.exprs[i].expr, placed.scope, 1, `flag \`${f.name}\` of \`${part.name}\``) }];
        });
        this.flagPlans.push({ plan: this.portPlan(m, new Map(), placed.scope), flags });
      }
    }
    return this.flagPlans.flatMap(({ plan, flags }) => flags.map(({ flag, compiled }) => ({ flag, value: this.evaluate(T, view, plan, compiled, undefined) })));
  }

  /** One resolved expression of a port over the machine's terms. */
  private evaluate(T: Terms, view: MachineView, plan: PortPlan, compiled: Compiled, edgeBus: { bus: number; lines?: { hi: number; lo: number } } | undefined): Term {
    const part = plan.model.part;
    const homes = plan.model.homes;
    const name = (n: string): Term => {
      const w = plan.scope.get(n)?.width;
      if (w === undefined) throw new ProverLimit(`\`${part.name}\` reads \`${n}\`, which is not in its scope`);
      if (n === edgeInputName && edgeBus) {
        // A strobe that names some lines (`clock right[4:0] -> cnt`) brings those lines, from the lowest (sim/customParts.ts).
        const value = view.bus(edgeBus.bus);
        const lines = edgeBus.lines;
        return fit(T, lines ? T.extract(value, Math.min(lines.hi, value.w - 1), lines.lo) : value, w);
      }
      const home = homes.get(n);
      if (home?.in === 'slot') return view.slot(home.key, home.width);
      const input = part.inputs.get(n);
      if (input?.from === 'bus') return fit(T, view.bus(this.plan.busIndex.get(input.name)!), w);
      if (input?.from === 'part') return fit(T, view.partValue(this.plan.partIndex.get(input.name)!), w);
      if (input?.from === 'instruction') return fit(T, view.partValue(this.plan.irPart), w);
      if (input?.from === 'field') return T.const(w, plan.fieldInputs.get(n) ?? 0);
      const control = plan.controls.get(n);
      if (control !== undefined) return T.const(w, control);
      const setting = part.def.settings.find((s) => s.name === n);
      if (setting?.type === 'choice') return T.const(w, setting.choices.indexOf(String(part.settings.get(n))));
      throw new ProverLimit(`\`${part.name}\` reads \`${n}\`, which the prover has no value for`);
    };
    const element = (array: string, index: Term): Term => {
      const home = homes.get(array);
      if (home?.in === 'registers') return view.register(fit(T, index, 5));
      if (home?.in === 'memory') return view.byte(fit(T, index, 32));
      if (home?.in === 'array') return view.element(home.key, fit(T, index, bitsFor(home.count)), home.width);
      throw new ProverLimit(`\`${part.name}\` reads an element of \`${array}\`, which is no array of its kind`);
    };
    return symbolicResolved(T, compiled.expr, compiled.resolution, { name, element });
  }
}

/**
 * Which state the simulator keeps as a part's value (sim/customParts.ts): a part of the table's
 * own kind mirrors its first state that is not the memory; a library part keeps there the
 * scalar state it drives as it is (a register's, counter's or instruction register's `q`), and
 * nothing else (a comparator's latch is not its part value). Where the simulator's value would
 * be a constant of no meaning (no state, an array), the prover leaves it unknown: a proof over
 * every value covers it.
 */
function valueStateOf(own: boolean, part: Part): { valueState?: string } {
  const states = part.def.states;
  if (own) {
    const first = states.find((s) => s.count !== 'memory');
    return first && !first.count ? { valueState: first.name } : {};
  }
  const drivesAsIs = (state: string) =>
    part.def.drives.some((d) => {
      const e = parsedExpr(part.def, d.expr).expr;
      return e?.kind === 'name' && e.name === state;
    });
  const driven = states.find((s) => !s.count && drivesAsIs(s.name));
  return driven ? { valueState: driven.name } : {};
}

const cache = new WeakMap<SimPlan, DefinedParts>();

/** The plan's parts as their definitions (one per plan: the resolved ports are kept). */
export function definedParts(plan: SimPlan): DefinedParts {
  let d = cache.get(plan);
  if (!d) cache.set(plan, (d = new DefinedParts(plan)));
  return d;
}

