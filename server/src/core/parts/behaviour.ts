// The behaviour of a kind, in one part: every expression of the kind parsed once, then checked
// and compiled in the scope of one part, where its settings are known. Number settings stand
// for their values (a decimal literal, so `q + inc` takes q's width); choice settings and
// controls are names whose values are their choices or the driving field's codes. Register
// arrays (`state r 32 x 32`) and the memory (`x memory`) are arrays of the scope, read `r[i]`.
//
// One scope serves every reader: the checker (diagnostics), the simulator (compiled functions)
// and, later, the prover. A kind is checked with its defaults where it is declared, and again
// in each part whose settings differ, so a width that only breaks for one part is still found.
import type { ExprText } from '../syntax/ast';
import type { Diagnostic } from '../text/diagnostic';
import { type Expr, type InlineBinding, type NameInfo, type RunOptions, bitsFor, checkElementIndex, checkExpression, children, compileExpressions, expressionSource, namesUsed, parseExpression, scopeOf } from './expr';
import { type KindDef, type Size, edgeInputName } from './kinds';

/** A part's settings and the codes of the fields driving its controls. */
export interface PartSetting {
  settings: ReadonlyMap<string, number | string>;
  /** Control name -> the driving field's width and value codes; a control no field drives is absent. */
  controls: ReadonlyMap<string, { width: number; values: ReadonlyMap<string, number> }>;
}

const parsedKinds = new WeakMap<KindDef, Map<ExprText, { expr?: Expr; diagnostics: Diagnostic[] }>>();

/** The parse of one expression of a kind (cached per kind). */
export function parsedExpr(def: KindDef, text: ExprText): { expr?: Expr; diagnostics: Diagnostic[] } {
  let cache = parsedKinds.get(def);
  if (!cache) parsedKinds.set(def, (cache = new Map()));
  let parsed = cache.get(text);
  if (!parsed) cache.set(text, (parsed = parseExpression(text.text, text.span.start)));
  return parsed;
}

export function sizeOf(size: Size, settings: ReadonlyMap<string, number | string>): number {
  if (size.kind === 'number') return size.value;
  const v = settings.get(size.name);
  return typeof v === 'number' ? v : 0;
}

/** The defaults of a kind as a part would have them, with each control numbered in order. */
export function defaultSetting(def: KindDef): PartSetting | undefined {
  const settings = new Map<string, number | string>();
  for (const s of def.settings) {
    if (s.default === undefined) return undefined;
    settings.set(s.name, s.default);
  }
  const controls = new Map(def.controls.map((c) => [c.name, { width: bitsFor(c.values.length), values: new Map(c.values.map((v, i) => [v, i])) }]));
  return { settings, controls };
}

/** Replaces number settings by their values (decimal literals take their context's width). */
function substitute(expr: Expr, numbers: ReadonlyMap<string, number>): Expr {
  if (expr.kind === 'name') {
    const value = numbers.get(expr.name);
    return value === undefined ? expr : { kind: 'number', value: BigInt(value), radix: 10, span: expr.span };
  }
  if (children(expr).length === 0) return expr;
  const copy = { ...expr } as Record<string, unknown>;
  for (const [key, value] of Object.entries(expr)) {
    if (value && typeof value === 'object' && 'kind' in value && key !== 'key') copy[key] = substitute(value as Expr, numbers);
    else if (Array.isArray(value)) {
      copy[key] = value.map((item) => {
        if (item && typeof item === 'object' && 'kind' in item) return substitute(item as Expr, numbers);
        if (item && typeof item === 'object' && 'value' in item && 'key' in item) return { ...item, value: substitute(item.value as Expr, numbers) };
        return item;
      });
    }
  }
  return copy as unknown as Expr;
}

/** The names an expression of this kind may read, with their widths, in one part. */
function scopeEntries(def: KindDef, setting: PartSetting, edgeWidth?: number): Map<string, NameInfo> {
  const entries = new Map<string, NameInfo>();
  for (const input of def.inputs) entries.set(input.name, { width: sizeOf(input.width, setting.settings) });
  for (const state of def.states) {
    const width = sizeOf(state.width, setting.settings);
    if (!state.count) entries.set(state.name, { width });
    else entries.set(state.name, { width, elements: state.count === 'memory' ? 'memory' : sizeOf(state.count, setting.settings) });
  }
  for (const s of def.settings) if (s.type === 'choice') entries.set(s.name, { width: bitsFor(s.choices.length), values: new Map(s.choices.map((c, i) => [c, i])) });
  for (const [name, control] of setting.controls) entries.set(name, control);
  if (edgeWidth !== undefined) entries.set(edgeInputName, { width: edgeWidth });
  return entries;
}

function numberSettings(setting: PartSetting): Map<string, number> {
  return new Map([...setting.settings].filter((e): e is [string, number] => typeof e[1] === 'number'));
}

/** One expression of the kind, ready to check or compile in a part: a value of `width` bits, or an index into `array`. */
export interface PlacedExpr {
  expr: Expr;
  place: { width: number } | { array: string };
  scope: Map<string, NameInfo>;
}

/** Every expression of the kind with the width its place needs, in one part (unparsable ones left out). */
function placedExpressions(def: KindDef, setting: PartSetting, report: (d: Diagnostic) => void): Map<ExprText, PlacedExpr> {
  const numbers = numberSettings(setting);
  const placed = new Map<ExprText, PlacedExpr>();
  const place = (text: ExprText, where: PlacedExpr['place'], scope: Map<string, NameInfo>) => {
    const parsed = parsedExpr(def, text);
    parsed.diagnostics.forEach(report);
    // An expression reading a line left out for its own problem would only repeat that problem.
    if (parsed.expr && !namesUsed(parsed.expr).some((n) => def.leftOut.has(n))) placed.set(text, { expr: substitute(parsed.expr, numbers), place: where, scope });
  };
  const bits = (size: Size) => ({ width: sizeOf(size, setting.settings) });
  const base = scopeEntries(def, setting);
  for (const state of def.states) if (state.reset) place(state.reset, bits(state.width), base);
  // A numbered port's number is checked as register 0 (a decimal takes its context's width).
  const withParam = (param: string | undefined, run: () => void) => {
    if (param) numbers.set(param, 0);
    run();
    if (param) numbers.delete(param);
  };
  for (const drive of def.drives) withParam(drive.param, () => place(drive.expr, bits(drive.width), base));
  for (const flag of def.flags) place(flag.expr, { width: 1 }, base);
  for (const edge of def.edges) {
    const scope = scopeEntries(def, setting, edge.width ? sizeOf(edge.width, setting.settings) : undefined);
    withParam(edge.param, () => {
      for (const assign of edge.assigns) {
        const state = def.states.find((s) => s.name === assign.target)!;
        place(assign.expr, bits(state.width), scope);
        if (assign.when) place(assign.when, { width: 1 }, scope);
        if (assign.index) place(assign.index, { array: state.name }, scope);
      }
    });
  }
  return placed;
}

/**
 * Checks every expression of the kind in one part's scope. A table's kind holding a register
 * array (`x COUNT`) or the program memory is checked like any other but reported: the simulator
 * holds arrays only for the standard library's kinds so far.
 */
export function checkBehaviour(def: KindDef, setting: PartSetting, report: (d: Diagnostic) => void): void {
  const placed = placedExpressions(def, setting, report);
  for (const p of placed.values()) {
    const scope = scopeOf(p.scope);
    const result = 'array' in p.place ? checkElementIndex(p.expr, scope, p.place.array) : checkExpression(p.expr, scope, p.place.width);
    result.diagnostics.forEach(report);
  }
  if (def.origin === 'table') {
    for (const state of def.states) {
      const width = sizeOf(state.width, setting.settings);
      if (width > 32) report({ code: 'kind-not-wired', severity: 'error', span: state.span, message: `\`${state.name}\` is ${width} bits wide: its expressions are checked, but in this version the simulator holds a state of at most 32 bits; split it into narrower states` });
    }
    for (const drive of def.drives) {
      const width = sizeOf(drive.width, setting.settings);
      if (width > 32) report({ code: 'kind-not-wired', severity: 'error', span: drive.span, message: `port \`${drive.name}\` is ${width} bits wide: in this version the simulator drives buses of at most 32 lines; split it into narrower ports` });
    }
  }
}

/** The number a strobe gives a numbered port (`x[5]` on `drive at[n] ...`): the port's parameter name and the number. */
export interface PortNumber {
  name: string;
  value: number;
}

/** A compiled port of one part: values in the part's input order, results in the port's order. */
export interface CompiledPort {
  /** The names the function reads, in the order its input array holds them. */
  inputs: string[];
  run: (values: ArrayLike<number | bigint>) => (number | bigint)[];
}

/**
 * The expressions of one port of a part as its runners see them (number settings replaced by
 * their values), with the scope they are read in: what compilePort compiles, and what the prover
 * evaluates over terms (prove/definedParts.ts), so both run the same text in the same scope.
 */
export function portExpressions(def: KindDef, setting: PartSetting, texts: { text: ExprText; width?: number }[], edgeWidth?: number, param?: PortNumber): { scope: Map<string, NameInfo>; exprs: { expr: Expr; width?: number }[] } {
  const numbers = numberSettings(setting);
  if (param) numbers.set(param.name, param.value);
  const scope = scopeEntries(def, setting, edgeWidth);
  return {
    scope,
    exprs: texts.map((t) => {
      const expr = substitute(parsedExpr(def, t.text).expr!, numbers);
      // A numbered port's index alone (`r[n] <= in`) is a decimal with nothing around it: its own bits.
      const width = t.width ?? (expr.kind === 'number' ? Math.max(1, expr.value.toString(2).length) : undefined);
      return { expr, width };
    }),
  };
}

/**
 * Compiles the expressions of one port of a part: a drive port (one value), a flag (one bit), a
 * state's reset value, or an edge port (per assignment its value and, with `when`, its condition,
 * in that order). The part must have checked clean. Arrays are not inputs: `arrays.element`
 * reads their elements from the caller's storage.
 */
export function compilePort(
  def: KindDef,
  setting: PartSetting,
  texts: { text: ExprText; width?: number }[],
  edgeWidth?: number,
  arrays: Pick<RunOptions, 'element' | 'onOutOfRange'> = {},
  param?: PortNumber,
): CompiledPort {
  const { scope, exprs: placed } = portExpressions(def, setting, texts, edgeWidth, param);
  // The results' names must not be names of the kind (a state `r0` is one): no notation name has a NUL.
  const exprs = placed.map((e, k) => ({ name: `\u0000result${k}`, ...e }));
  const inputs = [...new Set(exprs.flatMap((e) => namesUsed(e.expr)))].filter((name) => scope.get(name)?.elements === undefined);
  const run = compileExpressions(exprs, inputs, (name) => scope.get(name)!.width, { ...arrays, values: (name) => scope.get(name)?.values, elements: (name) => scope.get(name)?.elements });
  return { inputs, run };
}

/**
 * The same port as compilePort, as JavaScript source for inlining into the simulator's compiled
 * steps (expr/compile.ts, expressionSource): `bind` says where each name's value is and which
 * names (controls in this step, choice settings) are fixed. Also returns the names the
 * expressions read (arrays included), as compilePort's `inputs` but with arrays.
 */
export function portSource(def: KindDef, setting: PartSetting, texts: { text: ExprText; width?: number }[], edgeWidth: number | undefined, bind: InlineBinding, param?: PortNumber): { temps: string[]; codes: string[]; reads: string[] } {
  const { scope, exprs } = portExpressions(def, setting, texts, edgeWidth, param);
  const reads = [...new Set(exprs.flatMap((e) => namesUsed(e.expr)))];
  return { ...expressionSource(exprs, (name) => scope.get(name), bind), reads };
}

/**
 * The names an expression really reads when some names hold known codes (the controls of one
 * step, the part's choice settings): a `select` on a known name reads only the arm it takes.
 * A multiplexer whose field picks input a does not read input b, so b may float in that step.
 */
export function liveNames(expr: Expr, known: ReadonlyMap<string, number>, values: (name: string) => ReadonlyMap<string, number> | undefined): Set<string> {
  const out = new Set<string>();
  const visit = (e: Expr): void => {
    if (e.kind === 'name') {
      out.add(e.name);
      return;
    }
    if (e.kind === 'select' && e.selector.kind === 'name' && known.has(e.selector.name)) {
      const code = known.get(e.selector.name)!;
      const names = values(e.selector.name);
      const arm = e.arms.find((a) => (a.key.kind === 'number' ? Number(a.key.value) === code : names?.get(a.key.name) === code));
      if (arm) visit(arm.value);
      else if (e.otherwise) visit(e.otherwise);
      return;
    }
    for (const c of children(e)) visit(c);
  };
  visit(expr);
  return out;
}

/** The codes a part's choice settings stand for (their index among the choices). */
export function choiceCodes(def: KindDef, settings: ReadonlyMap<string, number | string>): Map<string, number> {
  const out = new Map<string, number>();
  for (const s of def.settings) if (s.type === 'choice') out.set(s.name, s.choices.indexOf(String(settings.get(s.name))));
  return out;
}
