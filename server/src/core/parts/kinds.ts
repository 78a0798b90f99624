// Part kinds as data: a `kind` declaration (docs/notation.md, "Part kinds") read into a
// KindDef — its settings, the inputs a part line wires, the controls a field may name, its state,
// the ports strobes use (drive ports for enable and read, edge ports for clock, count and write),
// its flags and what happens at the closing edge. The standard library's kinds and a
// table's own kinds are read by this one function, so both are held to the same rules.
//
// What is checked here is the shape of the definition: names unique within the kind, sizes
// that are numbers or number settings, defaults among the choices, edge targets that are state.
// Expressions stay text with their spans here; `expr/` parses and width-checks them per part,
// where the settings are known.
import type * as A from '../syntax/ast';
import type { Diagnostic } from '../text/diagnostic';
import type { Span } from '../text/span';
import { parseNumber } from '../model/numbers';

/** A width or count: a number, or a number setting of the kind (resolved per part). */
export type Size = { kind: 'number'; value: number; span: Span } | { kind: 'setting'; name: string; span: Span };

export interface KindSetting {
  name: string;
  type: 'number' | 'choice';
  choices: string[];
  /** A number for a number setting, a choice name for a choice; undefined when the part line must give it. */
  default?: number | string;
  description?: string;
  span: Span;
}

/** `field`: keyed (`NAME=FIELD`), wired to a number field of the word: its code in each step. */
export type InputWiring = 'positional' | 'after' | 'instruction' | 'keyed' | 'field';

export interface KindInput {
  name: string;
  width: Size;
  wiring: InputWiring;
  /** For `after WORD`: the word the part line writes before the source. */
  after?: string;
  /**
   * The input reads the instruction: wired to the machine's instruction register (`instruction`),
   * or for `after WORD instruction` to what the part line names, which must be that register,
   * and to it when the line names nothing.
   */
  readsInstruction?: boolean;
  description?: string;
  span: Span;
}

export interface KindControl {
  name: string;
  values: string[];
  /** The value it holds when no field drives it (`= word`); without one, a field must drive it where it is read. */
  default?: string;
  span: Span;
}

/**
 * Roles a kind's state may hold (`holds ROLE STATE`): the RV32I architectural state the
 * simulator loads and compares, `step`, the step counter the address layout's `step` lines
 * read (a sequencer part; without one the machine has today's implicit counter), and `return`,
 * a sequencer's return registers (one state, or a stack of them, top first), which the control-flow
 * walk follows through calls and returns (model/sequencing.ts).
 */
export const HOLDS_ROLES = ['registers', 'instruction', 'pc', 'step', 'return'] as const;
export type HoldsRole = (typeof HOLDS_ROLES)[number];

export interface KindHolds {
  role: HoldsRole;
  state: string;
  /**
   * For `return` (a sequencer's return registers, `holds return r0 r1`): every state of the
   * stack, the top first; its length is how deep calls may nest. `state` is the first.
   */
  stack?: string[];
  span: Span;
}

export interface KindState {
  name: string;
  width: Size;
  /** Number of registers for an array (`x 32`); `memory` for the program's byte memory. */
  count?: Size | 'memory';
  reset?: A.ExprText;
  span: Span;
}

export interface KindDrive {
  name: string;
  /** A numbered port (`drive at[n] ...`): the name its expressions read the strobe's number by. */
  param?: string;
  width: Size;
  expr: A.ExprText;
  description?: string;
  span: Span;
}

export interface KindFlag {
  name: string;
  expr: A.ExprText;
  span: Span;
}

export interface KindAssign {
  target: string;
  targetSpan: Span;
  index?: A.ExprText;
  expr: A.ExprText;
  when?: A.ExprText;
  span: Span;
}

export interface KindEdge {
  name: string;
  /** A numbered port (`on at[n] ...`): the name its expressions read the strobe's number by. */
  param?: string;
  /** Width of the bus value (`in`) the strobe brings; none for a count or a latch. */
  width?: Size;
  /** `on NAME always:` acts at every closing edge, with no strobe (no strobe may name it). */
  always?: boolean;
  assigns: KindAssign[];
  description?: string;
  span: Span;
}

export interface KindDef {
  name: string;
  description?: string;
  /** `library` for the standard library (its spans are offsets in the library text). */
  origin: 'library' | 'table';
  settings: KindSetting[];
  inputs: KindInput[];
  controls: KindControl[];
  states: KindState[];
  drives: KindDrive[];
  flags: KindFlag[];
  edges: KindEdge[];
  /** Architectural roles of its state (`holds registers r`). */
  holds: KindHolds[];
  /**
   * Names of input and state lines left out for a problem already reported: an expression
   * reading one is not checked, so that one mistake is not reported again as an unknown name.
   */
  leftOut: Set<string>;
  /** The name in the declaration. */
  span: Span;
  declSpan: Span;
}

/** Names an expression of a kind may always use besides its own: the bus value of an edge port. */
export const edgeInputName = 'in';

/** Reads one `kind` declaration. Problems are reported; broken lines are left out. */
export function buildKind(decl: A.KindDecl, origin: KindDef['origin'], report: (d: Diagnostic) => void): KindDef | undefined {
  if (!decl.name) return undefined;
  const error = (span: Span, message: string, code = 'kind-definition') => report({ code, severity: 'error', span, message });
  const def: KindDef = {
    name: decl.name.text,
    description: decl.description?.value,
    origin,
    settings: [],
    inputs: [],
    controls: [],
    states: [],
    drives: [],
    flags: [],
    edges: [],
    holds: [],
    leftOut: new Set(),
    span: decl.name.span,
    declSpan: decl.span,
  };
  // One set of names per kind: settings, inputs, controls, state, ports and flags are all named
  // in its expressions or on strobe lines, so two of them sharing a name would be ambiguous.
  const seen = new Map<string, Span>();
  const claim = (name: A.Name | undefined, what: string): name is A.Name => {
    if (!name) return false;
    const earlier = seen.get(name.text);
    if (earlier) {
      report({ code: 'duplicate-name', severity: 'error', span: name.span, message: `\`${name.text}\` is already a name in kind \`${def.name}\`; give this ${what} another name`, related: [{ span: earlier, message: `first use of \`${name.text}\`` }] });
      return false;
    }
    if (name.text === edgeInputName) {
      error(name.span, `\`${edgeInputName}\` is the bus value an edge port brings; choose another name for this ${what}`);
      return false;
    }
    seen.set(name.text, name.span);
    return true;
  };
  const numberSettings = () => new Set(def.settings.filter((s) => s.type === 'number').map((s) => s.name));
  const size = (ref: A.SizeRef | undefined, what: string, max = 64): Size | undefined => {
    if (!ref) return undefined;
    const value = parseNumber(ref.text);
    if (value !== undefined) {
      if (value < 1 || value > max) {
        error(ref.span, `${what} must be between 1 and ${max}; \`${ref.text}\` is out of range`, 'bad-number');
        return undefined;
      }
      return { kind: 'number', value, span: ref.span };
    }
    if (/^[0-9]/.test(ref.text)) {
      error(ref.span, `\`${ref.text}\` is not a number; write ${what} in decimal, or with 0x (hex) or 0b (binary)`, 'bad-number');
      return undefined;
    }
    if (!numberSettings().has(ref.text)) {
      error(ref.span, `${what} must be a number or a number setting declared above this line; kind \`${def.name}\` has no number setting \`${ref.text}\``);
      return undefined;
    }
    return { kind: 'setting', name: ref.text, span: ref.span };
  };

  /** A numbered port's parameter: its own name, one numbered port of each sort per kind (a strobe's `PART[n]` must name one). */
  const portParam = (param: A.Name | undefined, already: boolean, sort: string): string | undefined => {
    if (!param) return undefined;
    if (already) {
      error(param.span, `kind \`${def.name}\` already has a numbered ${sort} port; a strobe's \`PART[n]\` could not tell them apart`);
      return undefined;
    }
    if (seen.has(param.text)) {
      error(param.span, `\`${param.text}\` is already a name in kind \`${def.name}\`; name the port's number differently`);
      return undefined;
    }
    return param.text;
  };
  for (const item of decl.items) {
    switch (item.item) {
      case 'setting': {
        if (!claim(item.name, 'setting') || !item.type) break;
        const type = item.type.text as KindSetting['type'];
        const choices = item.choices.map((c) => c.text);
        let dflt: number | string | undefined;
        if (item.default) {
          if (type === 'number') {
            dflt = parseNumber(item.default.text);
            if (dflt === undefined) error(item.default.span, `the default of a number setting must be a number; \`${item.default.text}\` is not`, 'bad-number');
          } else if (!choices.includes(item.default.text)) {
            error(item.default.span, `the default \`${item.default.text}\` is not one of the choices (${choices.join(', ')})`);
          } else dflt = item.default.text;
        } else if (type === 'choice') dflt = choices[0];
        if (type === 'choice' && choices.length < 2) error(item.type.span, 'a choice setting lists at least two choices, e.g. `setting x0 choice hardwired stored`');
        def.settings.push({ name: item.name.text, type, choices, default: dflt, description: item.description?.value, span: item.name.span });
        break;
      }
      case 'input': {
        if (!claim(item.name, 'input')) break;
        const width = size(item.width, 'an input width');
        if (!width) {
          def.leftOut.add(item.name.text);
          break;
        }
        const wiring: InputWiring = item.after ? 'after' : item.instruction ? 'instruction' : item.keyed ? 'keyed' : item.field ? 'field' : 'positional';
        def.inputs.push({ name: item.name.text, width, wiring, after: item.after?.text, readsInstruction: item.instruction ? true : undefined, description: item.description?.value, span: item.name.span });
        break;
      }
      case 'control': {
        if (!claim(item.name, 'control')) break;
        const values = item.values.map((v) => v.text);
        const dup = item.values.find((v, i) => values.indexOf(v.text) !== i);
        if (dup) error(dup.span, `\`${dup.text}\` is listed twice in control \`${item.name.text}\``, 'duplicate-name');
        if (values.length === 0) error(item.name.span, `control \`${item.name.text}\` lists no values; write the operations a field may choose, e.g. \`control fn: add sub\``);
        let dflt: string | undefined;
        if (item.default && !values.includes(item.default.text)) error(item.default.span, `\`${item.default.text}\` is not one of the values of control \`${item.name.text}\` (${values.join(', ')})`);
        else dflt = item.default?.text;
        def.controls.push({ name: item.name.text, values: [...new Set(values)], default: dflt, span: item.name.span });
        break;
      }
      case 'holds': {
        if (!item.name || !item.state) break;
        const role = item.name.text as HoldsRole;
        if (!HOLDS_ROLES.includes(role)) {
          error(item.name.span, `\`${item.name.text}\` is not a role a state can hold; write one of ${HOLDS_ROLES.map((r) => `\`${r}\``).join(', ')}`);
          break;
        }
        if (def.holds.some((h) => h.role === role)) {
          error(item.name.span, `kind \`${def.name}\` already says which state holds the ${role}`, 'duplicate-name');
          break;
        }
        const state = def.states.find((s) => s.name === item.state!.text);
        if (!state) {
          error(item.state.span, `\`${item.state.text}\` is not state of kind \`${def.name}\` declared above (\`state NAME WIDTH\`)`);
          break;
        }
        if (item.more?.length && role !== 'return') {
          error(item.more[0].span, `the ${role} is one state; only \`holds return\` lists several (a stack of return registers, the top first)`);
          break;
        }
        const stack = [state.name];
        let stackOk = true;
        for (const name of item.more ?? []) {
          const more = def.states.find((s) => s.name === name.text);
          if (!more || more.count !== undefined || stack.includes(more.name)) {
            error(name.span, !more ? `\`${name.text}\` is not state of kind \`${def.name}\` declared above (\`state NAME WIDTH\`)` : stack.includes(more.name) ? `\`${name.text}\` is listed twice` : `a return register is one register, not an array: \`${more.name}\` must be declared without \`x COUNT\``);
            stackOk = false;
            break;
          }
          stack.push(more.name);
        }
        if (!stackOk) break;
        const array = role === 'registers';
        if (array !== (state.count !== undefined && state.count !== 'memory')) {
          error(item.state.span, array ? `the registers x0..x31 are an array of 32: declare \`state ${state.name} 32 x 32\`` : `the ${role} is one register, not an array: \`${state.name}\` must be declared without \`x COUNT\``);
          break;
        }
        if (array && state.count !== undefined && state.count !== 'memory' && state.count.kind === 'number' && state.count.value !== 32) {
          error(item.state.span, `the registers x0..x31 are 32; \`${state.name}\` holds ${state.count.value}`);
          break;
        }
        def.holds.push({ role, state: state.name, ...(role === 'return' && { stack }), span: item.name.span });
        break;
      }
      case 'state': {
        if (!claim(item.name, 'state')) break;
        const width = size(item.width, 'a state width');
        let count: KindState['count'];
        if (item.count?.text === 'memory') count = 'memory';
        else if (item.count) count = size(item.count, 'a register count', 4096);
        if (!width || (item.count && !count)) {
          def.leftOut.add(item.name.text);
          break;
        }
        if (count === 'memory' && item.reset) error(item.reset.span, 'the program memory is loaded from the program, not reset: remove `= ...`');
        def.states.push({ name: item.name.text, width, count, reset: count === 'memory' ? undefined : item.reset, span: item.name.span });
        break;
      }
      case 'drive': {
        if (!claim(item.name, 'drive port')) break;
        const width = size(item.width, 'a port width');
        if (!width || !item.expr) break;
        const param = portParam(item.param, def.drives.some((d) => d.param !== undefined), 'drive');
        def.drives.push({ name: item.name.text, param, width, expr: item.expr, description: item.description?.value, span: item.name.span });
        break;
      }
      case 'flag': {
        if (!claim(item.name, 'flag') || !item.expr) break;
        def.flags.push({ name: item.name.text, expr: item.expr, span: item.name.span });
        break;
      }
      case 'on': {
        if (!claim(item.name, 'edge port')) break;
        const width = item.width ? size(item.width, 'the width of the bus value') : undefined;
        if (item.width && !width) break;
        const assigns: KindAssign[] = [];
        for (const a of item.assigns) {
          const state = def.states.find((s) => s.name === a.target.text);
          if (!state) {
            error(a.target.span, `\`${a.target.text}\` is not state of kind \`${def.name}\`: only state declared above (\`state NAME WIDTH\`) changes at the closing edge`);
            continue;
          }
          if (state.count && !a.index) {
            error(a.target.span, `\`${a.target.text}\` holds several registers: say which, e.g. \`${a.target.text}[ir[11:7]] <= in\``);
            continue;
          }
          if (!state.count && a.index) {
            error(a.index.span, `\`${a.target.text}\` is one register, not several: remove the index`);
            continue;
          }
          if (!a.expr) continue;
          assigns.push({ target: a.target.text, targetSpan: a.target.span, index: a.index, expr: a.expr, when: a.when, span: a.span });
        }
        if (item.always && item.param) {
          error(item.param.span, 'an `always` edge port acts at every closing edge with no strobe, so no strobe gives it a number: remove `[...]`');
          break;
        }
        const param = portParam(item.param, def.edges.some((e) => e.param !== undefined), 'edge');
        def.edges.push({ name: item.name.text, param, width, always: item.always ? true : undefined, assigns, description: item.description?.value, span: item.name.span });
        break;
      }
    }
  }
  // A state an `always` port sets changes at every closing edge: another port setting it too
  // would load it twice at one edge (which wins depends on the chip).
  const alwaysSet = new Map(def.edges.filter((e) => e.always).flatMap((e) => e.assigns.map((a) => [a.target, e.name] as const)));
  for (const edge of def.edges) {
    if (edge.always) continue;
    for (const a of edge.assigns) {
      const by = alwaysSet.get(a.target);
      if (by) error(a.targetSpan, `\`${a.target}\` is set at every closing edge by \`on ${by} always\`; another port setting it would load it twice at one edge: fold this into \`${by}\` (a control choosing what it does)`);
    }
  }
  if (def.drives.length === 0 && def.edges.length === 0 && def.flags.length === 0) {
    error(def.span, `kind \`${def.name}\` has no drive port, edge port or flag, so no strobe or address line could ever use it`);
  }
  return def;
}

/** The port a strobe names when it writes only the part (`enable pc -> left`): the first of its kind. */
export function defaultDrive(kind: KindDef): KindDrive | undefined {
  return kind.drives[0];
}

export function defaultEdge(kind: KindDef): KindEdge | undefined {
  return kind.edges.find((e) => !e.always);
}

/** The kind's declaration as written, for hover (the source text it came from). */
export function kindSource(kind: KindDef, text: string): string {
  return text.slice(kind.declSpan.start, kind.declSpan.end).replace(/\s+$/, '');
}
