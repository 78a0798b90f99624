// What the editor, the budget, the checks and the debugger need to know about a part, read from
// its kind's definition (the standard library's or the table's own, alike): the ports strobes use and what each does, where its inputs come from, what a
// control value makes it compute, whether it holds a value a bus can read, and the facts about
// element 0 of a register array (RV32I x0) found by running the definition's own expressions.
// Nothing here names a part kind; a kind added to the library or declared in a table gets the
// same answers. It is not the simulator (sim/ runs the definitions) and checks nothing itself.
import { type Expr, children, formatExpression, namesUsed } from '../parts/expr';
import { choiceCodes, compilePort, parsedExpr } from '../parts/behaviour';
import type { KindAssign, KindDef, KindDrive, KindEdge } from '../parts/kinds';
import type { PortNumber } from '../parts/behaviour';
import { partSetting, portFor, sizeIn } from './buildPart';
import type { Machine, Part, Strobe, StrobeKind } from './types';

/**
 * What a port does for a strobe: `enable` drives a bus, `read` drives a bus from the memory,
 * `clock` loads a bus, `write` stores a bus into the memory, `latch` sets state a flag reads
 * (a clock strobe with no bus), `count` acts on its own state (a count strobe).
 */
export type PortRole = 'enable' | 'read' | 'clock' | 'write' | 'latch' | 'count';

export interface PortFact {
  name: string;
  role: PortRole;
  /** Bits it drives (a drive port) or takes from the bus (an edge port that loads one). */
  width?: number;
  description?: string;
  drive?: KindDrive;
  edge?: KindEdge;
}

/** The part's kind: its name and definition. */
export function kindOf(machine: Machine, part: Part): KindDef {
  return part.def;
}

/** The names of states of `def` that are the program memory (`x memory`). */
function memoryStates(def: KindDef): Set<string> {
  return new Set(def.states.filter((s) => s.count === 'memory').map((s) => s.name));
}

function exprOf(def: KindDef, text: { text: string; span: { start: number; end: number } }): Expr | undefined {
  return parsedExpr(def, text).expr;
}

/** Every name the texts read. */
function reads(def: KindDef, texts: ({ text: string; span: { start: number; end: number } } | undefined)[]): Set<string> {
  const out = new Set<string>();
  for (const t of texts) {
    const e = t ? exprOf(def, t) : undefined;
    if (e) for (const n of namesUsed(e)) out.add(n);
  }
  return out;
}

const assignTexts = (a: KindAssign) => [a.expr, a.when, a.index];

/** The ports of the part with what each does, drive ports first, in the kind's order. */
export function portsOf(machine: Machine, part: Part): PortFact[] {
  const def = part.def;
  const memory = memoryStates(def);
  const flagStates = reads(def, def.flags.map((f) => f.expr));
  const out: PortFact[] = [];
  for (const drive of def.drives) {
    const fromMemory = [...reads(def, [drive.expr])].some((n) => memory.has(n));
    out.push({ name: drive.name, role: fromMemory ? 'read' : 'enable', width: sizeIn(part, drive.width), description: drive.description, drive });
  }
  for (const edge of def.edges) {
    const targets = edge.assigns.map((a) => a.target);
    const role: PortRole = edge.width ? (targets.some((t) => memory.has(t)) ? 'write' : 'clock') : targets.some((t) => flagStates.has(t)) ? 'latch' : 'count';
    out.push({ name: edge.name, role, width: edge.width ? sizeIn(part, edge.width) : undefined, description: edge.description, edge });
  }
  return out;
}

/** The port a strobe uses on its part, when the definition describes it. */
export function portOfStrobe(machine: Machine, part: Part, strobe: Strobe): PortFact | undefined {
  const ports = portsOf(machine, part);
  // `x[5]`: the kind's numbered port of the strobe's side.
  if (strobe.register !== undefined) return ports.find((p) => (strobe.kind === 'enable' || strobe.kind === 'read' ? p.drive?.param : p.edge?.param) !== undefined);
  if (strobe.kindPort !== undefined) return ports.find((p) => p.name === strobe.kindPort);
  if (strobe.port !== undefined) return ports.find((p) => p.name === strobe.port);
  const roles: Partial<Record<StrobeKind, PortRole[]>> = { enable: ['enable', 'read'], read: ['enable', 'read'], clock: strobe.bus ? ['clock', 'write'] : ['latch', 'count'], write: ['clock', 'write'], count: ['latch', 'count'] };
  return ports.find((p) => roles[strobe.kind]?.includes(p.role));
}

/** The strobe kinds that use a port of this role, and on which side of the strobe line the part stands. */
export function strobeKindsFor(role: PortRole): { kind: StrobeKind; side: 'drive' | 'load' } {
  switch (role) {
    case 'enable':
      return { kind: 'enable', side: 'drive' };
    case 'read':
      return { kind: 'read', side: 'drive' };
    case 'clock':
      return { kind: 'clock', side: 'load' };
    case 'write':
      return { kind: 'write', side: 'load' };
    case 'latch':
      return { kind: 'clock', side: 'drive' };
    case 'count':
      return { kind: 'count', side: 'drive' };
  }
}

/**
 * What a strobe line may write to reach each port of this role: `part` (its first port of the
 * role) or `part.port`, as the part's line is read (`strobeWiring`).
 */
export function strobeTargets(machine: Machine, part: Part, kind: StrobeKind, side: 'drive' | 'load'): { label: string; port: PortFact }[] {
  // A numbered port is written `x[5]`, not by its name: it is not offered as `part.port`.
  const fitting = portsOf(machine, part).filter((p) => {
    if ((p.drive ?? p.edge)?.param !== undefined) return false;
    const use = strobeKindsFor(p.role);
    return use.kind === kind && use.side === side;
  });
  if (fitting.length === 0) return [];
  const naming = strobeWiring(part).ports;
  if (naming === 'always') return fitting.map((p) => ({ label: `${part.name}.${p.name}`, port: p }));
  if (fitting.length === 1) return [{ label: part.name, port: fitting[0] }];
  return fitting.map((p, i) => ({ label: i === 0 ? part.name : `${part.name}.${p.name}`, port: p }));
}

/** Where each input of the part comes from, with the input's description. */
export function inputsOf(machine: Machine, part: Part): { name: string; source: Part['inputs'] extends Map<string, infer S> ? S : never; description?: string }[] {
  return part.def.inputs.flatMap((input) => {
    const source = part.inputs.get(input.name);
    return source ? [{ name: input.name, source, description: input.description }] : [];
  });
}

/** The buses and parts the part's inputs are wired to. */
export function inputWiring(machine: Machine, part: Part): { buses: string[]; parts: string[] } {
  const buses: string[] = [];
  const parts: string[] = [];
  for (const { source } of inputsOf(machine, part)) {
    if (source.from === 'bus') buses.push(source.name);
    else if (source.from === 'part' && source.name) parts.push(source.name);
  }
  return { buses, parts };
}

/** Known codes of the part's choice settings (their index among the choices) and their value lists. */
function settingCodes(part: Part): { known: Map<string, number>; values: (name: string) => ReadonlyMap<string, number> | undefined } {
  const def = part.def;
  const known = choiceCodes(def, part.settings);
  const values = (name: string) => {
    const setting = def.settings.find((s) => s.name === name);
    if (setting?.type === 'choice') return new Map(setting.choices.map((c, i) => [c, i]));
    const control = def.controls.find((c) => c.name === name);
    return control ? new Map(control.values.map((v, i) => [v, i])) : undefined;
  };
  return { known, values };
}

/**
 * The expression with every `select` on a name of known code replaced by the arm it takes (the
 * part's choice settings, a control's value): what the part computes there, for showing.
 */
export function specialise(expr: Expr, known: ReadonlyMap<string, number>, values: (name: string) => ReadonlyMap<string, number> | undefined): Expr {
  if (expr.kind === 'select' && expr.selector.kind === 'name' && known.has(expr.selector.name)) {
    const code = known.get(expr.selector.name)!;
    const names = values(expr.selector.name);
    const arm = expr.arms.find((a) => (a.key.kind === 'number' ? Number(a.key.value) === code : names?.get(a.key.name) === code));
    const taken = arm?.value ?? expr.otherwise;
    if (taken) return specialise(taken, known, values);
  }
  if (children(expr).length === 0) return expr;
  const copy: Record<string, unknown> = { ...expr };
  for (const [key, value] of Object.entries(expr)) {
    if (value && typeof value === 'object' && 'kind' in value) copy[key] = specialise(value as Expr, known, values);
    else if (Array.isArray(value)) {
      copy[key] = value.map((item) => {
        if (item && typeof item === 'object' && 'kind' in item) return specialise(item as Expr, known, values);
        if (item && typeof item === 'object' && 'key' in item && 'value' in item) return { ...item, value: specialise(item.value as Expr, known, values) };
        return item;
      });
    }
  }
  return copy as unknown as Expr;
}

function selectsOn(expr: Expr, name: string): boolean {
  if (expr.kind === 'select' && expr.selector.kind === 'name' && expr.selector.name === name) return true;
  return children(expr).some((c) => selectsOn(c, name)) || (expr.kind === 'select' && expr.arms.some((a) => selectsOn(a.value, name)));
}

/** What a port computes with the part's settings (choices resolved), as text: `r[ir[19:15]]`, `q <= q + inc`. */
export function portText(machine: Machine, part: Part, port: PortFact, extra: ReadonlyMap<string, number> = new Map()): string {
  const def = part.def;
  const { known, values } = settingCodes(part);
  for (const [k, v] of extra) known.set(k, v);
  const show = (text: { text: string; span: { start: number; end: number } }) => {
    const e = exprOf(def, text);
    return e ? formatExpression(specialise(e, known, values)) : text.text;
  };
  if (port.drive) return show(port.drive.expr);
  return (port.edge?.assigns ?? []).map((a) => `${a.target}${a.index ? `[${show(a.index)}]` : ''} <= ${show(a.expr)}${a.when ? ` when ${show(a.when)}` : ''}`).join(', ');
}

/** The number settings a port's expressions read, with the part's values: `inc=4`. */
export function settingsReadBy(machine: Machine, part: Part, port: PortFact): string[] {
  const def = part.def;
  const texts = port.drive ? [port.drive.expr] : (port.edge?.assigns ?? []).flatMap(assignTexts);
  const used = reads(def, texts);
  return def.settings.filter((s) => s.type === 'number' && s.name !== 'width' && used.has(s.name)).map((s) => `${s.name}=${part.settings.get(s.name)}`);
}

/** The inputs a port reads, with where they come from: `a from \`left\``. */
export function inputsReadBy(machine: Machine, part: Part, port: PortFact): string[] {
  const def = part.def;
  const texts = port.drive ? [port.drive.expr] : (port.edge?.assigns ?? []).flatMap(assignTexts);
  const used = reads(def, texts);
  return inputsOf(machine, part)
    .filter((i) => used.has(i.name))
    .map((i) => `${i.name} from ${i.source.from === 'instruction' ? 'the instruction register' : `\`${i.source.name}\``}`);
}

/** The control of its part a field drives, if any. */
export function controlOfField(machine: Machine, fieldName: string): { part: Part; control: KindDef['controls'][number] } | undefined {
  const field = machine.signals.get(fieldName);
  const part = field?.type === 'field' && field.target ? machine.parts.get(field.target) : undefined;
  if (!part) return undefined;
  const control = part.def.controls.find((c) => part.controlFields.get(c.name) === fieldName);
  return control ? { part, control } : undefined;
}

/**
 * The control a field line `-> TARGET` names: `part.control`, or the part's only control. For
 * completing a field's values before the field is read.
 */
export function controlOfTarget(machine: Machine, target: string): { part: Part; control: KindDef['controls'][number] } | undefined {
  const whole = machine.parts.get(target);
  const dot = target.indexOf('.');
  const part = whole ?? (dot > 0 ? machine.parts.get(target.slice(0, dot)) : undefined);
  if (!part) return undefined;
  const controls = part.def.controls;
  const control = whole ? (controls.length === 1 ? controls[0] : undefined) : controls.find((c) => c.name === target.slice(dot + 1));
  return control ? { part, control } : undefined;
}

/**
 * The meaning of a control value for a part: what each port that selects on the control
 * computes with it (the part's settings resolved), e.g. `y` = `a + b`. Undefined when the value
 * is not one of the control's.
 */
export function valueMeaning(machine: Machine, part: Part, controlName: string, value: string): string | undefined {
  const def = part.def;
  const control = def.controls.find((c) => c.name === controlName);
  if (!control || !control.values.includes(value)) return undefined;
  const { known, values } = settingCodes(part);
  known.set(control.name, control.values.indexOf(value));
  const shown: string[] = [];
  for (const drive of def.drives) {
    const e = exprOf(def, drive.expr);
    if (e && selectsOn(e, control.name)) shown.push(`\`${drive.name}\` = \`${formatExpression(specialise(e, known, values))}\``);
  }
  if (shown.length === 0) {
    for (const edge of def.edges) {
      for (const a of edge.assigns) {
        const e = exprOf(def, a.expr);
        if (e && selectsOn(e, control.name)) shown.push(`at \`${edge.name}\`: \`${a.target} <= ${formatExpression(specialise(e, known, values))}\``);
      }
    }
  }
  return shown.length ? shown.join('; ') : undefined;
}

/** The meaning of a value of a field, for the control of the part it drives. */
export function fieldValueMeaning(machine: Machine, fieldName: string, value: string): string | undefined {
  const found = controlOfField(machine, fieldName);
  return found ? valueMeaning(machine, found.part, found.control.name, value) : undefined;
}

/** The controls of the part its expressions really read with its settings (a choice setting may leave one unused). */
export function liveControls(machine: Machine, part: Part): KindDef['controls'] {
  const def = part.def;
  const { known, values } = settingCodes(part);
  const texts = [...def.drives.map((d) => d.expr), ...def.flags.map((f) => f.expr), ...def.edges.flatMap((e) => e.assigns.flatMap(assignTexts))];
  const used = new Set<string>();
  for (const t of texts) {
    const e = t ? exprOf(def, t) : undefined;
    if (e) for (const n of namesUsed(specialise(e, known, values))) used.add(n);
  }
  return def.controls.filter((c) => used.has(c.name));
}

/**
 * The value the part holds that a bus can read: its first state when it is one register (not an
 * array) and a drive port reads it. The simulator keeps that value as the part's value.
 */
export function heldValue(machine: Machine, part: Part): { state: string; width: number } | undefined {
  const def = part.def;
  const first = def.states[0];
  if (!first || first.count) return undefined;
  if (!def.drives.some((d) => reads(def, [d.expr]).has(first.name))) return undefined;
  return { state: first.name, width: sizeIn(part, first.width) };
}

/**
 * Whether a port's value changes within the step with the control word: it reads a control or
 * a bus (through an input), so the path goes through the part's propagation delay. A port that
 * reads only its state, settings and registers loaded at an earlier edge is valid from the start.
 */
export function isCombinationalPort(machine: Machine, part: Part, port: PortFact): boolean {
  const def = part.def;
  const texts = port.drive ? [port.drive.expr] : (port.edge?.assigns ?? []).flatMap(assignTexts);
  const { known, values } = settingCodes(part);
  // Names a choice setting leaves unread do not count.
  const live = new Set<string>();
  for (const t of texts) {
    const e = t ? exprOf(def, t) : undefined;
    if (e) for (const n of namesUsed(specialise(e, known, values))) live.add(n);
  }
  if (def.controls.some((c) => live.has(c.name))) return true;
  return def.inputs.some((i) => live.has(i.name) && part.inputs.get(i.name)?.from === 'bus');
}

/** Seeded values for probing a definition: zero first, then a fixed pseudo-random run (xorshift32). */
function probes(count: number): number[] {
  const out = [0];
  let x = 0x9e3779b9;
  for (let i = 1; i < count; i++) {
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    out.push(x >>> 0);
  }
  return out;
}

export interface ArrayWrite {
  /** The edge port that writes the array. */
  port: string;
  /** The instruction-register bits that choose the element, when the index is such a slice (`ir[11:7]`). */
  indexBits?: { hi: number; lo: number };
  /** True when the port can store into element 0 (its `when` holds with the index 0, for some value of the rest). */
  writesElementZero: boolean;
}

export interface RegisterArrayFacts {
  part: string;
  array: string;
  /** True when a drive port reading element 0 reads what is stored there (not a constant in its place). */
  elementZeroStored: boolean;
  writes: ArrayWrite[];
}

/**
 * Element 0 of each register array of the part (state `r W x N`), by running the definition: with
 * every input 0 (so instruction-bit indices pick element 0) and then seeded inputs, does a drive
 * reading the array change when element 0 changes; and for each edge port storing into the
 * array, can its `when` hold with the index at 0. The part's settings are its own. An expression
 * that cannot be run (the part did not check clean) counts as neither, so nothing is claimed.
 */
export function registerArrayFacts(machine: Machine, part: Part, settingsOverride?: ReadonlyMap<string, number | string>): RegisterArrayFacts[] {
  const defined: Part = settingsOverride ? { ...part, settings: new Map([...part.settings, ...settingsOverride]) } : part;
  const def = defined.def;
  const setting = partSetting(machine, defined);
  const codes = choiceCodes(def, defined.settings);
  const instructionInputs = new Set(def.inputs.filter((i) => defined.inputs.get(i.name)?.from === 'instruction' || (defined.inputs.get(i.name)?.from === 'part' && (defined.inputs.get(i.name) as { name: string }).name === machine.instructionRegister)).map((i) => i.name));
  const out: RegisterArrayFacts[] = [];
  for (const state of def.states) {
    if (!state.count || state.count === 'memory') continue;
    const array = state.name;
    const valueOf = (inputs: string[], vector: number, fixed: Map<string, number>) => inputs.map((n) => (fixed.has(n) ? fixed.get(n)! : codes.has(n) ? codes.get(n)! : setting.controls.has(n) ? 0 : vector));
    let elementZeroStored = false;
    // Numbered ports (`x[5]`) are left out: a strobe names their register itself (the x0 checks read its number).
    for (const drive of def.drives) {
      if (drive.param !== undefined || !reads(def, [drive.expr]).has(array)) continue;
      try {
        let zero = 0;
        const port = compilePort(def, setting, [{ text: drive.expr, width: sizeIn(defined, drive.width) }], undefined, { element: (a, i) => (a === array && i === 0 ? zero : 0x12345678) });
        for (const vector of probes(33)) {
          const inputs = valueOf(port.inputs, vector, new Map());
          zero = 0x5a5a5a5a;
          const first = port.run(inputs)[0];
          zero = 0x0f0f0f0f;
          const second = port.run(inputs)[0];
          if (first !== second) {
            elementZeroStored = true;
            break;
          }
        }
      } catch {
        // Not runnable: claim nothing.
      }
      if (elementZeroStored) break;
    }
    const writes: ArrayWrite[] = [];
    for (const edge of def.edges) {
      if (edge.param !== undefined) continue;
      for (const assign of edge.assigns) {
        if (assign.target !== array || !assign.index) continue;
        const index = exprOf(def, assign.index);
        const indexBits = index?.kind === 'slice' && index.operand.kind === 'name' && instructionInputs.has(index.operand.name) ? { hi: index.hi, lo: index.lo, input: index.operand.name } : undefined;
        let writesElementZero = false;
        try {
          const texts = [{ text: assign.index }, ...(assign.when ? [{ text: assign.when, width: 1 }] : [])];
          const port = compilePort(def, setting, texts, edge.width ? sizeIn(defined, edge.width) : undefined, { element: () => 0 });
          for (const vector of probes(65)) {
            const fixed = new Map<string, number>();
            // With the index a slice of the instruction, those bits are 0 and the rest vary.
            if (indexBits) fixed.set(indexBits.input, (vector & ~(((2 ** (indexBits.hi - indexBits.lo + 1) - 1) * 2 ** indexBits.lo) >>> 0)) >>> 0);
            const results = port.run(valueOf(port.inputs, vector, fixed));
            if (Number(results[0]) === 0 && (!assign.when || Number(results[1]) === 1)) {
              writesElementZero = true;
              break;
            }
          }
        } catch {
          // Not runnable: claim nothing.
        }
        writes.push({ port: edge.name, indexBits: indexBits && { hi: indexBits.hi, lo: indexBits.lo }, writesElementZero });
      }
    }
    out.push({ part: part.name, array, elementZeroStored, writes });
  }
  return out;
}

/**
 * The other values of the part's choice settings that would keep every edge port from storing
 * into element 0 of `array` (`x0=hardwired`, `x0=guarded`): what a fix may suggest.
 */
export function settingsKeepingElementZero(machine: Machine, part: Part, array: string): string[] {
  const out: string[] = [];
  for (const setting of part.def.settings) {
    if (setting.type !== 'choice') continue;
    for (const choice of setting.choices) {
      if (choice === part.settings.get(setting.name)) continue;
      const facts = registerArrayFacts(machine, part, new Map([[setting.name, choice]])).find((f) => f.array === array);
      if (facts && facts.writes.length > 0 && facts.writes.every((w) => !w.writesElementZero)) out.push(`${setting.name}=${choice}`);
    }
  }
  return out;
}

/**
 * How strobe lines name the part's ports: a kind with several drive ports that read elements of
 * a register array (a register file's rs1 and rs2) is always wired by port (`x.rs1`, `x.rd`):
 * which port says which register, so none is taken by default; any other takes `part.port` or,
 * for the first port that fits, just `part`. `numbered`: its kind has numbered ports, written `part[5]`.
 */
export function strobeWiring(part: Part): { ports: 'always' | 'optional'; numbered: boolean } {
  const def = part.def;
  const arrays = new Set(def.states.filter((st) => st.count !== undefined && st.count !== 'memory').map((st) => st.name));
  const arrayReaders = def.drives.filter((d) => d.param === undefined && [...reads(def, [d.expr])].some((n) => arrays.has(n))).length;
  return { ports: arrayReaders > 1 ? 'always' : 'optional', numbered: [...def.drives, ...def.edges].some((p) => p.param !== undefined) };
}

/**
 * The port of the part's definition a strobe uses: the one the model resolved, else the one the
 * strobe's kind and written port name. Undefined when the definition has no such port.
 */
export function definedPortOf(part: Part, strobe: Strobe): string | undefined {
  if (strobe.kindPort !== undefined) return strobe.kindPort;
  if (strobe.kind === 'end' || strobe.kind === 'trap') return undefined;
  const role = strobe.kind === 'clock' && strobe.bus === undefined ? 'clock-flag' : strobe.kind;
  const found = portFor(part, role, strobe.register !== undefined ? undefined : strobe.port, strobe.register !== undefined);
  return 'port' in found ? found.port : undefined;
}

/** The number a strobe gives a numbered port (`x[5]` on `drive xout[n] ...`), for the port's expressions. */
export function strobePortNumber(param: string | undefined, strobe: Strobe): PortNumber | undefined {
  return param !== undefined && strobe.register !== undefined ? { name: param, value: strobe.register } : undefined;
}

/** True when a write through the part's ports can change element 0 of a register array (a stored x0, which a debugger may set). */
export function elementZeroWritable(machine: Machine, part: Part): boolean {
  return registerArrayFacts(machine, part).some((f) => f.writes.some((w) => w.writesElementZero));
}

/** True when the part's read ports give what element 0 of a register array holds (no constant in its place: x0 has a register). */
export function elementZeroStored(machine: Machine, part: Part): boolean {
  return registerArrayFacts(machine, part).some((f) => f.elementZeroStored);
}
