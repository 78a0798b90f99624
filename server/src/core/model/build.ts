// Builds the semantic model from a syntax tree: declares every name, resolves references,
// interprets part settings, layouts, maps, phases and classes. It reports what it cannot
// understand (undefined and duplicate names, wrong kinds, bad numbers) and leaves those
// pieces out, so later stages always see a consistent model. Hazard checks (contention,
// coverage, layout overlaps...) are not here: they live in checks/, one file per rule.
import type * as A from '../syntax/ast';
import type { Diagnostic, Fix, RelatedInfo } from '../text/diagnostic';
import type { Span } from '../text/span';
import { closest } from '../text/suggest';
import { chipType, knownChipNames } from './chips';
import { parseBits, parseNumber } from './numbers';
import type * as M from './types';
import { instructionFields, partKinds, strobeKinds } from './vocabulary';
import { buildBodies } from './buildSteps';
import { type FigureHost, figureInfo, figureNamesFor, figureRangeProblem, figureTextProblem, parseFigureValue } from '../budget/figures';
import { acceptableCodes, codeInfo } from '../checks/catalogue';
import { buildKind } from '../parts/kinds';
import { checkBehaviour, defaultSetting } from '../parts/behaviour';
import { buildPartOfKind, portFor, partSetting, sizeIn } from './buildPart';
import { liveControls, strobeWiring } from './partFacts';
import { libraryKind, standardLibrary } from '../parts/library';

export interface BuildResult {
  machine: M.Machine;
  diagnostics: Diagnostic[];
}

type Namespace = 'structure' | 'signal' | 'map' | 'phase' | 'class' | 'store' | 'kind';

const namespaceOf: Record<M.SymbolKind, Namespace> = {
  bus: 'structure',
  part: 'structure',
  port: 'structure',
  flag: 'structure',
  strobe: 'signal',
  field: 'signal',
  value: 'signal',
  map: 'map',
  phase: 'phase',
  class: 'class',
  store: 'store',
  kind: 'kind',
};

/** Shared state of one model build; the step builder uses it too. */
export class BuildContext {
  readonly diagnostics: Diagnostic[] = [];
  readonly machine: M.Machine = {
    kinds: new Map(),
    figures: new Map(),
    buses: new Map(),
    parts: new Map(),
    flags: new Map(),
    signals: new Map(),
    connections: [],
    stores: [],
    maps: new Map(),
    phases: new Map(),
    classes: [],
    symbols: [],
    references: [],
  };
  /** Declared names per namespace (first declaration wins). */
  readonly names = new Map<Namespace, Map<string, M.SymbolInfo>>();

  report(code: string, at: Span, message: string, related?: RelatedInfo[], fixes?: Fix[]): void {
    this.diagnostics.push({ code, severity: 'error', span: at, message, related, fixes });
  }

  /** Declares a name; on a duplicate, reports it and returns undefined. */
  declare(kind: M.SymbolKind, name: A.Name, declSpan: Span, key = name.text): M.SymbolInfo | undefined {
    const ns = namespaceOf[kind];
    let table = this.names.get(ns);
    if (!table) this.names.set(ns, (table = new Map()));
    const existing = table.get(key);
    if (existing) {
      this.report(
        'duplicate-name',
        name.span,
        `\`${name.text}\` is already declared as a ${existing.kind}; give this ${kind} another name or remove one of them`,
        [{ span: existing.span, message: `first declaration of \`${name.text}\`` }],
      );
      return undefined;
    }
    const symbol: M.SymbolInfo = { kind, name: name.text, key, span: name.span, declSpan };
    table.set(key, symbol);
    this.machine.symbols.push(symbol);
    return symbol;
  }

  lookup(ns: Namespace, key: string): M.SymbolInfo | undefined {
    return this.names.get(ns)?.get(key);
  }

  reference(span: Span, symbol: M.SymbolInfo): void {
    this.machine.references.push({ span, symbol });
  }

  /** Resolves a name in a namespace, recording the reference or reporting it as undefined. */
  resolve(ns: Namespace, name: A.Name, what: string, accept?: (s: M.SymbolInfo) => boolean): M.SymbolInfo | undefined {
    const symbol = this.lookup(ns, name.text);
    if (symbol && (!accept || accept(symbol))) {
      this.reference(name.span, symbol);
      return symbol;
    }
    if (symbol) return undefined; // Wrong kind: the caller reports it with context.
    this.undefinedName(name, what, [...(this.names.get(ns)?.values() ?? [])].filter((s) => !accept || accept(s)).map((s) => s.name));
    return undefined;
  }

  undefinedName(name: A.Name, what: string, candidates: string[]): void {
    const guess = closest(name.text, candidates);
    const fixes: Fix[] | undefined = guess ? [{ title: `Change to \`${guess}\``, edits: [{ span: name.span, newText: guess }], preferred: true }] : undefined;
    this.report(
      'undefined-name',
      name.span,
      `no ${what} is named \`${name.text}\`` + (guess ? `; did you mean \`${guess}\`?` : `; declare it or check the spelling`),
      undefined,
      fixes,
    );
  }

  /** Reads a non-negative integer literal, reporting malformed or out-of-range text. */
  number(lit: A.Literal | undefined, what: string, min = 0, max = Number.MAX_SAFE_INTEGER): number | undefined {
    if (!lit) return undefined;
    const value = parseNumber(lit.text);
    if (value === undefined) {
      this.report('bad-number', lit.span, `\`${lit.text}\` is not a number; write ${what} in decimal, or with 0x (hex) or 0b (binary)`);
      return undefined;
    }
    if (value < min || value > max) {
      this.report('bad-number', lit.span, `${what} must be between ${min} and ${max}; \`${lit.text}\` is out of range`);
      return undefined;
    }
    return value;
  }

  /**
   * Resolves an address input as written: `step`, an instruction field name, `ir[hi:lo]`,
   * a flag, or (in address layouts only) a field of another store.
   */
  input(ref: A.InputRef, allow: { step?: boolean; field?: boolean }): { input: M.InputVar | { kind: 'field'; name: string }; label: string } | undefined {
    const text = ref.name.text;
    if (ref.bitHi) {
      if (text !== 'ir') {
        this.report('wrong-wiring', ref.name.span, `only the instruction bits \`ir[...]\` can be indexed; \`${text}\` cannot`);
        return undefined;
      }
      const hi = this.number(ref.bitHi, 'an instruction bit number', 0, 31);
      const lo = ref.bitLo ? this.number(ref.bitLo, 'an instruction bit number', 0, 31) : hi;
      if (hi === undefined || lo === undefined) return undefined;
      if (lo > hi) {
        this.report('bad-number', ref.span, `write the high bit first, e.g. \`ir[${lo}:${hi}]\``);
        return undefined;
      }
      return { input: { kind: 'ir', hi, lo }, label: hi === lo ? `ir[${hi}]` : `ir[${hi}:${lo}]` };
    }
    if (text === 'step') {
      if (allow.step) return { input: { kind: 'step' }, label: 'step' };
      this.report('wrong-wiring', ref.name.span, 'the step counter cannot be tested here: steps are selected by their numbers');
      return undefined;
    }
    const field = instructionFields[text];
    if (field) return { input: field, label: text };
    const flag = this.lookup('structure', text);
    if (flag?.kind === 'flag') {
      this.reference(ref.name.span, flag);
      return { input: { kind: 'flag', name: text }, label: text };
    }
    if (allow.field) {
      const signal = this.lookup('signal', text);
      if (signal?.kind === 'field') {
        this.reference(ref.name.span, signal);
        return { input: { kind: 'field', name: text }, label: text };
      }
    }
    const candidates = [...Object.keys(instructionFields), ...[...(this.names.get('structure')?.values() ?? [])].filter((s) => s.kind === 'flag').map((s) => s.name)];
    if (allow.step) candidates.push('step');
    this.undefinedName(ref.name, 'address input (step, opcode, funct3, f7b5, funct7, ir[n] or a flag)', candidates);
    return undefined;
  }
}

/** Builds the model. Never throws on any tree the parser can produce. */
export function buildModel(tree: A.FileNode): BuildResult {
  const ctx = new BuildContext();
  buildKinds(ctx, tree);
  declareAll(ctx, tree);
  for (const decl of tree.decls) {
    if (decl.kind === 'machine') buildMachine(ctx, decl);
    else if (decl.kind === 'bus') buildBus(ctx, decl);
  }
  for (const decl of tree.decls) if (decl.kind === 'part') buildPart(ctx, decl);
  for (const decl of tree.decls) if (decl.kind === 'field') buildField(ctx, decl);
  for (const decl of tree.decls) if (decl.kind === 'strobe') buildStrobe(ctx, decl);
  for (const decl of tree.decls) if (decl.kind === 'connect') buildConnection(ctx, decl);
  finishParts(ctx, tree);
  checkKindBehaviours(ctx);
  buildStores(ctx, tree);
  finishSequencer(ctx, tree);
  buildBodies(ctx, tree);
  checkLedVoltages(ctx);
  return { machine: ctx.machine, diagnostics: ctx.diagnostics };
}

/**
 * An LED whose forward voltage is at or above the supply never lights: the figure is wrong
 * for this machine, so it is reported where it is written and left out (the budget then lists
 * the LED figures as missing instead of adding up a current of zero).
 */
function checkLedVoltages(ctx: BuildContext): void {
  const supply = ctx.machine.figures.get('supply_v');
  if (!supply) return;
  const hosts = [...ctx.machine.buses.values(), ...ctx.machine.parts.values(), ...ctx.machine.signals.values()];
  for (const host of hosts) {
    const figures = 'figures' in host ? host.figures : undefined;
    const vf = figures?.get('led_vf');
    if (!figures || !vf || vf.value < supply.value) continue;
    ctx.report('bad-number', vf.span, `\`led_vf=${vf.value}\` is at or above the ${supply.value} V supply, so these LEDs would never light; check the LED's data sheet and supply_v`, [{ span: supply.span, message: `supply_v=${supply.value}` }]);
    figures.delete('led_vf');
  }
}

/**
 * Part kinds first: the standard library's, then the table's own `kind` declarations. A table's
 * kind may not reuse a library name (a part line would then mean two different things).
 */
function buildKinds(ctx: BuildContext, tree: A.FileNode): void {
  for (const kind of standardLibrary().kinds.values()) {
    const symbol: M.SymbolInfo = { kind: 'kind', name: kind.name, key: kind.name, span: kind.span, declSpan: kind.declSpan, origin: 'library' };
    ctx.names.get('kind')?.set(kind.name, symbol) ?? ctx.names.set('kind', new Map([[kind.name, symbol]]));
    ctx.machine.kinds.set(kind.name, kind);
  }
  for (const decl of tree.decls) {
    if (decl.kind !== 'kind' || !decl.name) continue;
    if (libraryKind(decl.name.text)) {
      ctx.report('duplicate-name', decl.name.span, `\`${decl.name.text}\` is a kind of the standard library; give your kind another name (hover a part's kind to read the library's definition)`);
      continue;
    }
    if (!ctx.declare('kind', decl.name, decl.span)) continue;
    const kind = buildKind(decl, 'table', (d) => ctx.diagnostics.push(d));
    if (kind) ctx.machine.kinds.set(kind.name, kind);
  }
}

/** First pass: every declared name, so references may come before declarations. */
function declareAll(ctx: BuildContext, tree: A.FileNode): void {
  for (const decl of tree.decls) {
    switch (decl.kind) {
      case 'bus':
        if (decl.name) ctx.declare('bus', decl.name, decl.span);
        break;
      case 'part':
        if (decl.name) ctx.declare('part', decl.name, decl.span);
        break;
      case 'strobe':
        if (decl.name) ctx.declare('strobe', decl.name, decl.span);
        break;
      case 'field':
        if (decl.name) ctx.declare('field', decl.name, decl.span);
        break;
      case 'map':
        if (decl.name) ctx.declare('map', decl.name, decl.span);
        break;
      case 'phase':
        if (decl.name) ctx.declare('phase', decl.name, decl.span);
        break;
      case 'class':
        if (decl.name) ctx.declare('class', decl.name, decl.span);
        break;
      case 'store':
        if (decl.name) ctx.declare('store', decl.name, decl.span);
        break;
    }
  }
  // Flags are declared by the parts that produce them (`-> taken`); a flag of the part's kind
  // that the part line does not name is called PART.FLAG (`cnt.zero`).
  for (const decl of tree.decls) {
    if (decl.kind !== 'part' || !decl.name || ctx.lookup('structure', decl.name.text)?.declSpan !== decl.span) continue;
    let arrows = 0;
    for (const arg of decl.args) {
      if (arg.kind === 'arrow') arrows++;
      if (arg.kind === 'arrow' && arg.target) {
        const symbol = ctx.declare('flag', arg.target, decl.span);
        if (symbol) ctx.machine.flags.set(arg.target.text, { name: arg.target.text, part: decl.name.text, symbol });
      }
    }
    const kind = decl.partKind ? ctx.machine.kinds.get(decl.partKind.text) : undefined;
    for (const flag of kind?.flags.slice(arrows) ?? []) {
      const flagName = `${decl.name.text}.${flag.name}`;
      // Not written anywhere: an empty span at the part's name keeps it out of the editor's occurrences.
      const symbol = ctx.declare('flag', { text: flagName, span: { start: decl.name.span.end, end: decl.name.span.end } }, decl.span);
      if (symbol) ctx.machine.flags.set(flagName, { name: flagName, part: decl.name.text, symbol });
    }
  }
}

/** True when this declaration is the one that owns its name (not a reported duplicate). */
function owns(ctx: BuildContext, ns: Namespace, name: A.Name | undefined, span: Span): boolean {
  return !!name && ctx.lookup(ns, name.text)?.declSpan === span;
}

function buildMachine(ctx: BuildContext, decl: A.MachineDecl): void {
  if (ctx.machine.title !== undefined || ctx.machine.isa !== undefined) {
    ctx.report('duplicate-name', decl.keyword, 'a file describes one machine: remove this second `machine` line');
    return;
  }
  ctx.machine.title = decl.title?.value ?? '';
  ctx.machine.figures = readFigures(ctx, decl.options, 'machine');
  if (decl.isa) {
    if (decl.isa.text.toLowerCase() !== 'rv32i') ctx.report('unknown-kind', decl.isa.span, `Phasewright knows the RV32I instruction set only; write \`isa rv32i\``);
    else ctx.machine.isa = 'rv32i';
  }
}

/** Reads `name=number` figures (docs/budget.md) for one kind of declaration. */
function readFigures(ctx: BuildContext, options: A.OptionNode[], host: FigureHost): M.Figures {
  const figures: M.Figures = new Map();
  const allowed = figureNamesFor(host);
  for (const option of options) {
    const info = figureInfo(option.key.text);
    if (!info || !info.hosts.includes(host)) {
      const guess = closest(option.key.text, allowed);
      ctx.report(
        'unknown-kind',
        option.key.span,
        `a ${host === 'word' ? 'word layout' : host} has no setting \`${option.key.text}\`` + (guess ? `; did you mean \`${guess}\`?` : allowed.length ? `; its figures are ${allowed.join(', ')}` : ''),
      );
      continue;
    }
    const written = option.value && 'text' in option.value ? option.value.text : undefined;
    const value = written === undefined ? undefined : parseFigureValue(written);
    if (value === undefined) {
      ctx.report('bad-number', option.value?.span ?? option.span, figureTextProblem(info, written));
      continue;
    }
    const problem = figureRangeProblem(info, value, written);
    if (problem) {
      ctx.report('bad-number', option.value!.span, problem);
      continue;
    }
    figures.set(option.key.text, { value, span: option.span });
  }
  return figures;
}

function buildBus(ctx: BuildContext, decl: A.BusDecl): void {
  if (!owns(ctx, 'structure', decl.name, decl.span)) return;
  const width = ctx.number(decl.width, 'a bus width', 1, 64);
  if (width === undefined) return;
  ctx.machine.buses.set(decl.name!.text, {
    name: decl.name!.text,
    width,
    keeper: !!decl.keeper,
    description: decl.description?.value,
    symbol: ctx.lookup('structure', decl.name!.text)!,
    figures: readFigures(ctx, decl.options, 'bus'),
  });
}

function busArg(ctx: BuildContext, name: A.Name | undefined, role: string, partName: string): string | undefined {
  if (!name) {
    return undefined;
  }
  const symbol = ctx.resolve('structure', name, 'bus', (s) => s.kind === 'bus');
  if (!symbol && ctx.lookup('structure', name.text)) {
    ctx.report('wrong-wiring', name.span, `the ${role} of \`${partName}\` must be a bus; \`${name.text}\` is a ${ctx.lookup('structure', name.text)!.kind}`);
  }
  return symbol ? name.text : undefined;
}

function buildPart(ctx: BuildContext, decl: A.PartDecl): void {
  if (!owns(ctx, 'structure', decl.name, decl.span) || !decl.partKind) return;
  const name = decl.name!.text;
  const kindText = decl.partKind.text;
  const kindSymbol = ctx.lookup('kind', kindText);
  if (kindSymbol) ctx.reference(decl.partKind.span, kindSymbol);
  const def = ctx.machine.kinds.get(kindText);
  if (!def) {
    if (kindSymbol) return; // a table's kind whose definition could not be read; that is reported there
    const guess = closest(decl.partKind.text, [...ctx.machine.kinds.keys()]);
    ctx.report(
      'unknown-kind',
      decl.partKind.span,
      `\`${decl.partKind.text}\` is not a part kind` + (guess ? `; did you mean \`${guess}\`?` : `; use one of ${partKinds.join(', ')} or declare it with \`kind\``),
      undefined,
      guess ? [{ title: `Change to \`${guess}\``, edits: [{ span: decl.partKind.span, newText: guess }], preferred: true }] : undefined,
    );
    return;
  }
  const symbol = ctx.lookup('structure', name)!;
  const part = buildPartOfKind(ctx, decl, def, { name, description: decl.description?.value, symbol }, (options) => readFigures(ctx, options, 'part'));
  if (part) ctx.machine.parts.set(name, part);
}

/**
 * The expressions of the table's own kinds, width-checked where each kind is declared (with its
 * defaults) and in every part whose settings or control fields differ. A problem is reported
 * once, at its place in the kind, with the part that shows it when only a part does.
 */
function checkKindBehaviours(ctx: BuildContext): void {
  const seen = new Set<string>();
  const report = (d: Diagnostic, part?: M.Part) => {
    const key = `${d.code}@${d.span.start}-${d.span.end}`;
    if (seen.has(key)) return;
    seen.add(key);
    ctx.diagnostics.push(part ? { ...d, message: `${d.message} (in part \`${part.name}\`)`, related: [...(d.related ?? []), { span: part.symbol.span, message: `part \`${part.name}\` of kind \`${part.kindName}\`` }] } : d);
  };
  for (const kind of ctx.machine.kinds.values()) {
    if (kind.origin !== 'table') continue;
    const defaults = defaultSetting(kind);
    if (defaults) checkBehaviour(kind, defaults, (d) => report(d));
  }
  // The library's kinds are checked clean with their defaults by a test; their spans are in the library's text.
  for (const part of ctx.machine.parts.values()) {
    if (part.def.origin === 'table') checkBehaviour(part.def, partSetting(ctx.machine, part), (d) => report(d, part));
  }
}

/**
 * What needs every part and field: the instruction register (the part whose kind `holds
 * instruction`), inputs that read the instruction wired to it, and controls the part's settings
 * leave read that no field drives and that have no default.
 */
function finishParts(ctx: BuildContext, tree: A.FileNode): void {
  const irs = [...ctx.machine.parts.values()].filter((p) => p.def.holds.some((h) => h.role === 'instruction'));
  if (irs.length === 1) ctx.machine.instructionRegister = irs[0].name;
  else if (irs.length > 1) {
    for (const extra of irs.slice(1)) {
      ctx.report('wrong-wiring', extra.symbol.span, `only one instruction register may feed the address lines; \`${irs[0].name}\` is already one`, [{ span: irs[0].symbol.span, message: 'the first instruction register' }]);
    }
    ctx.machine.instructionRegister = irs[0].name;
  }
  const ir = ctx.machine.instructionRegister;
  const irKinds = [...ctx.machine.kinds.values()].filter((k) => k.holds.some((h) => h.role === 'instruction')).map((k) => k.name);
  for (const part of ctx.machine.parts.values()) {
    for (const input of part.def.inputs) {
      if (!input.readsInstruction) continue;
      const source = part.inputs.get(input.name);
      if (!ir) {
        ctx.report('wrong-wiring', part.symbol.span, `${partPhrase(part)} reads instruction fields (input \`${input.name}\`): declare an instruction register, e.g. \`part ir ${irKinds[0] ?? 'KIND'} 32\``);
        break;
      }
      if (source?.from === 'part' && source.name !== ir) {
        const other = ctx.machine.parts.get(source.name);
        ctx.report('wrong-wiring', part.symbol.declSpan, `input \`${input.name}\` of \`${part.name}\` reads the instruction: take it from the instruction register \`${ir}\`, not from ${other ? partPhrase(other) : `\`${source.name}\``}`);
      } else if (source?.from === 'bus') {
        ctx.report('wrong-wiring', part.symbol.declSpan, `input \`${input.name}\` of \`${part.name}\` reads the instruction: take it from the instruction register \`${ir}\`, not from the bus \`${source.name}\``);
      }
    }
    // A control with no default that the part's choice settings make it read (a comparator's
    // `cond=field`), where another choice would not, needs the field those settings call for.
    // (A control every setting reads, such as an ALU's function, may be left to its first value.)
    const live = liveControls(ctx.machine, part);
    for (const control of part.def.controls) {
      if (control.default !== undefined || part.controlFields.has(control.name) || !live.includes(control)) continue;
      const unread = settingsLeavingUnread(ctx, part, control.name);
      if (unread.length === 0) continue;
      ctx.report(
        'wrong-wiring',
        part.symbol.span,
        `${partPhrase(part)} reads its control \`${control.name}\` with its settings and no field drives it: set ${unread.map((u) => `\`${u}\``).join(' or ')}, or declare a field \`-> ${part.def.controls.length === 1 ? part.name : `${part.name}.${control.name}`}\` with values ${control.values.join(', ')}`,
      );
    }
  }
  void tree;
}

/**
 * The sequencer (a part whose kind `holds step`): at most one; its step state as wide as the
 * address layout's `step` lines; no `end` strobe beside it (the instruction ends when the
 * sequencer returns to step 0). And every `field` input wired to a number field as wide as it.
 */
function finishSequencer(ctx: BuildContext, tree: A.FileNode): void {
  for (const part of ctx.machine.parts.values()) {
    for (const input of part.def.inputs) {
      const source = part.inputs.get(input.name);
      if (input.wiring !== 'field' || source?.from !== 'field') continue;
      const field = ctx.machine.signals.get(source.name);
      if (field?.type !== 'field') continue; // refused with its own error
      if (!field.numeric) {
        ctx.report('wrong-wiring', source.span, `input \`${input.name}\` of \`${part.name}\` reads a number from the word, but \`${field.name}\` ${field.target ? `controls \`${field.target}\`` : 'has named values'}; declare a number field for it, e.g. \`field ${input.name} ${sizeIn(part, input.width)}\` (no values, no \`->\`)`);
        continue;
      }
      const width = sizeIn(part, input.width);
      if (field.width !== width) ctx.report('wrong-wiring', source.span, `input \`${input.name}\` of \`${part.name}\` is ${width} bit(s) wide, but the field \`${field.name}\` is ${field.width}; make them equal`, [{ span: field.symbol.span, message: `field \`${field.name}\`` }]);
    }
  }
  for (const part of ctx.machine.parts.values()) {
    const ret = part.def.holds.find((h) => h.role === 'return');
    if (ret && !part.def.holds.some((h) => h.role === 'step')) {
      ctx.report('wrong-wiring', part.symbol.span, `${partPhrase(part)} holds return registers but not the step: a return register belongs to the sequencer (the part whose kind \`holds step\`), which calls and returns`);
    }
  }
  const holders = [...ctx.machine.parts.values()].filter((p) => p.def.holds.some((h) => h.role === 'step'));
  if (holders.length === 0) return;
  const seq = holders[0];
  for (const extra of holders.slice(1)) {
    ctx.report('wrong-wiring', extra.symbol.span, `only one part may hold the step counter; \`${seq.name}\` already does`, [{ span: seq.symbol.span, message: 'the first sequencer' }]);
  }
  ctx.machine.sequencer = seq.name;
  const holds = seq.def.holds.find((h) => h.role === 'step')!;
  const state = seq.def.states.find((st) => st.name === holds.state);
  const width = state ? sizeIn(seq, state.width) : 0;
  const stepBits = ctx.machine.stepBits;
  if (stepBits !== undefined && width !== stepBits) {
    ctx.report('wrong-wiring', seq.symbol.span, `${partPhrase(seq)} holds the step in ${width} bit(s), but the address lines read ${stepBits} step bit(s) (\`step 0..${stepBits - 1}\`); make them equal`);
  }
  // A return register holds a step number: as wide as the step.
  for (const name of seq.def.holds.find((h) => h.role === 'return')?.stack ?? []) {
    const ret = seq.def.states.find((st) => st.name === name);
    const retWidth = ret ? sizeIn(seq, ret.width) : width;
    if (retWidth !== width) ctx.report('wrong-wiring', seq.symbol.span, `${partPhrase(seq)} holds the step in ${width} bit(s) but its return register \`${name}\` in ${retWidth}: a return register holds a step, so make them equal`);
  }
  // `end` returns the implicit counter to 0; with a sequencer the table does it.
  const opField = seq.controlFields.size > 0 ? [...seq.controlFields.entries()][0] : undefined;
  const hint = opField ? `\`${opField[1]}=${[...(seq.controlValues.get(opField[0])?.keys() ?? [])].find((v) => v === 'clear') ?? 'VALUE'}\`` : `a field driving \`${seq.name}\` (e.g. \`${seq.name}.op=clear\`)`;
  for (const decl of tree.decls) {
    if (decl.kind !== 'strobe' || decl.strobeKind?.text !== 'end') continue;
    ctx.report('wrong-wiring', decl.strobeKind.span, `this machine's step counter is the sequencer \`${seq.name}\`, which an \`end\` strobe does not drive: end an instruction by returning the sequencer to step 0 with ${hint} (the action \`end\` says it for short), and remove this strobe`);
  }
}

/**
 * The part's choice settings, as written (`cond=funct3`), when with them its expressions do not
 * read the control but with another value of one of them they do: a field driving it would drive nothing.
 */
function unreadBySettings(ctx: BuildContext, part: M.Part, control: string): string | undefined {
  if (liveControls(ctx.machine, part).some((c) => c.name === control)) return undefined;
  const blocking = part.def.settings.filter((setting) => setting.type === 'choice' && setting.choices.some((choice) => {
    const other: M.Part = { ...part, settings: new Map([...part.settings, [setting.name, choice]]) };
    return liveControls(ctx.machine, other).some((c) => c.name === control);
  }));
  return blocking.length ? blocking.map((st) => `\`${st.name}=${part.settings.get(st.name)}\``).join(' and ') : undefined;
}

/** The other values of the part's choice settings with which its expressions no longer read the control. */
function settingsLeavingUnread(ctx: BuildContext, part: M.Part, control: string): string[] {
  const out: string[] = [];
  for (const setting of part.def.settings) {
    if (setting.type !== 'choice') continue;
    for (const choice of setting.choices) {
      if (choice === part.settings.get(setting.name)) continue;
      const other: M.Part = { ...part, settings: new Map([...part.settings, [setting.name, choice]]) };
      if (!liveControls(ctx.machine, other).some((c) => c.name === control)) out.push(`${setting.name}=${choice}`);
    }
  }
  return out;
}

function buildField(ctx: BuildContext, decl: A.FieldDecl): void {
  if (!owns(ctx, 'signal', decl.name, decl.span)) return;
  const name = decl.name!.text;
  const width = ctx.number(decl.width, 'a field width', 1, 32);
  if (width === undefined) return;
  const field: M.Field = { type: 'field', name, width, values: new Map(), idle: 0, description: decl.description?.value, symbol: ctx.lookup('signal', name)! };
  // No value list and no part: a number field (`field next 4`), whose code a step gives as a number.
  if (!decl.open && !decl.target && decl.options.length === 0) field.numeric = true;
  let vocabulary: readonly string[] | undefined;
  const custom = decl.target ? controlTarget(ctx, decl.target) : undefined;
  if (custom) {
    if (custom.control) {
      vocabulary = custom.control.values;
      const other = custom.part.controlFields.get(custom.control.name);
      if (other) ctx.report('wrong-wiring', decl.target!.span, `control \`${custom.control.name}\` of \`${custom.part.name}\` is already driven by the field \`${other}\``, [{ span: ctx.machine.signals.get(other)!.symbol.span, message: 'the other field' }]);
      else if (unreadBySettings(ctx, custom.part, custom.control.name)) ctx.report('wrong-wiring', decl.target!.span, `${partPhrase(custom.part)} does not read its control \`${custom.control.name}\` with ${unreadBySettings(ctx, custom.part, custom.control.name)}; remove that or this field`);
      else {
        custom.part.controlFields.set(custom.control.name, name);
        custom.part.controlValues.set(custom.control.name, new Map()); // filled with the field's values below
        field.target = custom.part.name;
      }
    }
  } else if (decl.target) {
    // Not a part: a bus, a flag, or a name nothing declares.
    const sym = ctx.resolve('structure', decl.target.name, 'part', (s) => s.kind === 'part');
    if (!sym && ctx.lookup('structure', decl.target.name.text)) ctx.report('wrong-wiring', decl.target.span, `a field controls a part, not a ${ctx.lookup('structure', decl.target.name.text)!.kind}`);
  }
  const maxCode = 2 ** width - 1;
  for (const value of decl.values) {
    const symbol = ctx.declare('value', value.name, value.span, `${name}/${value.name.text}`);
    if (!symbol) continue;
    if (vocabulary && !vocabulary.includes(value.name.text)) {
      const guess = closest(value.name.text, vocabulary);
      ctx.report(
        'wrong-wiring',
        value.name.span,
        `\`${value.name.text}\` means nothing to control \`${custom!.control!.name}\` of ${partPhrase(custom!.part)}; its values are ${vocabulary.join(', ')}` + (guess ? ` (did you mean \`${guess}\`?)` : ''),
      );
      continue;
    }
    const code = ctx.number(value.code, 'a field code');
    if (code === undefined) continue;
    if (code > maxCode) {
      ctx.report('value-too-wide', value.code!.span, `code ${code} does not fit in the ${width} bit(s) of \`${name}\` (largest is ${maxCode}); widen the field or choose a smaller code`);
      continue;
    }
    field.values.set(value.name.text, { name: value.name.text, code, symbol });
    if (custom?.control && custom.part.controlFields.get(custom.control.name) === name) (custom.part.controlValues.get(custom.control.name) as Map<string, number>).set(value.name.text, code);
  }
  for (const option of decl.options) {
    if (option.key.text !== 'idle') {
      ctx.report('unknown-kind', option.key.span, `a field has no setting \`${option.key.text}\`; it takes \`idle=VALUE\``);
      continue;
    }
    const idleName = option.value?.text ?? '';
    const idle = field.values.get(idleName);
    if (!idle) {
      if (option.value) ctx.undefinedName(option.value as A.Name, `value of \`${name}\``, [...field.values.keys()]);
      continue;
    }
    ctx.reference(option.value!.span, idle.symbol);
    field.idle = idle.code;
  }
  ctx.machine.signals.set(name, field);
}

/**
 * `-> PART` or `-> PART.CONTROL`: the control of the part the field drives (the kind's only
 * control when none is named). Undefined when the target is not a part.
 */
function controlTarget(ctx: BuildContext, target: A.Ref): { part: M.Part; control?: M.Part['def']['controls'][number] } | undefined {
  const text = target.name.text;
  const dot = text.indexOf('.');
  const partName = ctx.machine.parts.has(text) || dot < 0 ? text : text.slice(0, dot);
  const part = ctx.machine.parts.get(partName);
  if (!part) return undefined;
  const partSpan = { start: target.name.span.start, end: target.name.span.start + partName.length };
  ctx.reference(partSpan, part.symbol);
  const controlName = partName === text ? undefined : text.slice(dot + 1);
  const controls = part.def.controls;
  const control = controlName ? controls.find((c) => c.name === controlName) : controls.length === 1 ? controls[0] : undefined;
  if (!control) {
    const list = controls.map((c) => `\`${part.name}.${c.name}\``).join(', ');
    ctx.report('wrong-wiring', target.span, controls.length === 0 ? `${partPhrase(part)} has no control for a field to drive` : controlName ? `kind \`${part.def.name}\` has no control \`${controlName}\`; its controls are ${list}` : `\`${part.name}\` has several controls: name one, e.g. ${list}`);
  }
  return { part, control };
}

/** `part \`amux\` (kind \`opa_mux\`)`: a part named with its kind. */
function partPhrase(part: M.Part): string {
  return `part \`${part.name}\` (kind \`${part.kindName}\`)`;
}

function buildStrobe(ctx: BuildContext, decl: A.StrobeDecl): void {
  if (!owns(ctx, 'signal', decl.name, decl.span) || !decl.strobeKind) return;
  const name = decl.name!.text;
  const kind = decl.strobeKind.text as M.StrobeKind;
  if (!strobeKinds.includes(kind)) {
    const guess = closest(decl.strobeKind.text, strobeKinds);
    ctx.report(
      'unknown-kind',
      decl.strobeKind.span,
      `\`${decl.strobeKind.text}\` is not a strobe kind` + (guess ? `; did you mean \`${guess}\`?` : `; use one of ${strobeKinds.join(', ')}`),
      undefined,
      guess ? [{ title: `Change to \`${guess}\``, edits: [{ span: decl.strobeKind.span, newText: guess }], preferred: true }] : undefined,
    );
    return;
  }
  const strobe: M.Strobe = {
    type: 'strobe',
    name,
    kind,
    active: decl.level?.text === 'low' ? 'low' : 'high',
    activeWritten: !!decl.level,
    description: decl.description?.value,
    symbol: ctx.lookup('signal', name)!,
    figures: readFigures(ctx, decl.options, 'strobe'),
  };
  const accepted = acceptedCodes(ctx, decl.accept);
  const form = strobeForms[kind];
  const kindSpan = decl.strobeKind.span;
  if (form === 'none') {
    if (decl.source || decl.target) ctx.report('wrong-wiring', (decl.source ?? decl.target)!.span, `an \`${kind}\` strobe is not wired to a part or bus; remove \`${(decl.source ?? decl.target)!.name.text}\``);
    ctx.machine.signals.set(name, strobe);
    return;
  }
  if (form === 'part-to-bus') {
    if (!decl.source || !decl.target) {
      ctx.report('wrong-wiring', decl.target?.span ?? decl.source?.span ?? kindSpan, `write which part drives which bus, e.g. \`${kind} ${kind === 'read' ? 'mem' : 'alu'} -> result\``);
      return;
    }
    if (!wirePart(ctx, strobe, decl.source, kind)) return;
    const bus = busArg(ctx, decl.target.name, 'target', name);
    if (!bus || !busLines(ctx, decl.target, strobe)) return;
    strobe.bus = bus;
  } else if (form === 'bus-to-part') {
    if (kind === 'clock' && decl.source && !decl.target) {
      // `clock cmp`: a part that loads from its own inputs (the comparator's flag).
      if (!wirePart(ctx, strobe, decl.source, 'clock-flag')) return;
    } else {
      if (!decl.source || !decl.target) {
        ctx.report('wrong-wiring', decl.source?.span ?? kindSpan, `write which bus loads which part, e.g. \`${kind} result -> ${kind === 'write' ? 'mem' : 'mar'}\``);
        return;
      }
      const bus = busArg(ctx, decl.source.name, 'source', name);
      // `clock result[7:0] -> acc`: the part loads lines 7..0 of the bus as its value (its width must match).
      if (!bus || !busLines(ctx, decl.source, strobe)) return;
      strobe.bus = bus;
      if (!wirePart(ctx, strobe, decl.target, kind)) return;
    }
  } else if (form === 'part') {
    if (!decl.source || decl.target) {
      ctx.report('wrong-wiring', decl.target?.span ?? kindSpan, `a count strobe names just its counter, e.g. \`count pc\``);
      return;
    }
    if (!wirePart(ctx, strobe, decl.source, kind)) return;
  }
  const bus = strobe.bus ? ctx.machine.buses.get(strobe.bus) : undefined;
  const part = strobe.part ? ctx.machine.parts.get(strobe.part) : undefined;
  // The port's width from the kind's definition (a register file's registers, a memory's data word).
  const partWidth = part ? ((portFor(part, kind, strobe.kindPort) as { width?: number }).width ?? part.width) : undefined;
  const lineCount = strobe.lines ? strobe.lines.hi - strobe.lines.lo + 1 : bus?.width;
  if (bus && part && partWidth !== undefined && lineCount !== partWidth && !accepted.has('width-mismatch')) {
    // The fix accepts the change on this line: before the description, or at the line's end.
    const at = decl.description?.span.start ?? decl.span.end;
    ctx.diagnostics.push({
      code: 'width-mismatch',
      severity: 'warning',
      span: decl.span,
      message: `\`${part.name}.${strobe.kindPort}\` is ${partWidth} bits wide but ${strobe.lines ? `lines ${strobe.lines.hi}..${strobe.lines.lo} of the bus \`${bus.name}\` are ${lineCount}` : `the bus \`${bus.name}\` is ${bus.width}`}; the extra bits ${lineCount! > partWidth ? 'of the bus are undriven or ignored' : 'of the part are lost'}. If that is deliberate, end the line with \`accept width-mismatch\``,
      fixes: [{ title: 'Accept this width change on this line', edits: [{ span: { start: at, end: at }, newText: decl.description ? 'accept width-mismatch ' : ' accept width-mismatch' }] }],
    });
  }
  ctx.machine.signals.set(name, strobe);
}

/**
 * `connect PART[.PORT] -> BUS[hi:lo]`: the part drives the bus in every step, with no strobe
 * (a pull-up buffer, a constant always on some lines). Read as an enable that every step asserts.
 */
function buildConnection(ctx: BuildContext, decl: A.ConnectDecl): void {
  if (!decl.source || !decl.target) {
    if (decl.source) ctx.report('wrong-wiring', decl.source.span, 'write which bus it drives, e.g. `connect four -> right`');
    return;
  }
  const name = `connect ${decl.source.name.text}${decl.source.index ? `[${decl.source.index.text}]` : ''}`;
  const symbol: M.SymbolInfo = { kind: 'strobe', name, key: name, span: decl.source.span, declSpan: decl.span };
  const strobe: M.Strobe = { type: 'strobe', name, kind: 'enable', active: 'high', activeWritten: false, description: decl.description?.value, symbol, figures: new Map(), always: true };
  if (!wirePart(ctx, strobe, decl.source, 'enable')) return;
  const bus = busArg(ctx, decl.target.name, 'target', name);
  if (!bus || !busLines(ctx, decl.target, strobe)) return;
  strobe.bus = bus;
  const part = ctx.machine.parts.get(strobe.part!);
  const busInfo = ctx.machine.buses.get(bus)!;
  const width = part ? (portFor(part, 'enable', strobe.kindPort) as { width?: number }).width : undefined;
  const lines = strobe.lines ? strobe.lines.hi - strobe.lines.lo + 1 : busInfo.width;
  if (width !== undefined && width !== lines) {
    ctx.diagnostics.push({ code: 'width-mismatch', severity: 'warning', span: decl.span, message: `\`${decl.source.name.text}\` is ${width} bits wide but it is connected to ${lines} lines of \`${bus}\`` });
  }
  if (ctx.machine.connections.some((c) => c.name === name && c.bus === bus)) {
    ctx.report('duplicate-name', decl.source.span, `\`${decl.source.name.text}\` is already connected to \`${bus}\``);
    return;
  }
  ctx.machine.connections.push(strobe);
}

/**
 * The codes an `accept` clause names. Only codes the catalogue marks acceptable (design
 * choices, never hazards) may be accepted on a line; anything else is reported.
 */
function acceptedCodes(ctx: BuildContext, clause: A.AcceptClause | undefined): Set<string> {
  const accepted = new Set<string>();
  for (const code of clause?.codes ?? []) {
    if (acceptableCodes.includes(code.text)) accepted.add(code.text);
    else if (codeInfo(code.text)) {
      ctx.report(
        'unknown-kind',
        code.span,
        `\`${code.text}\` cannot be accepted on a line; a line may accept only ${acceptableCodes.map((c) => `\`${c}\``).join(', ')}. Fix the problem, or change the code's severity in the \`phasewright.severity\` setting (\`check --config\`)`,
      );
    } else ctx.undefinedName(code, 'diagnostic code a line may accept', [...acceptableCodes]);
  }
  return accepted;
}

/**
 * The lines of a bus a strobe drives or loads: the whole bus, or `bus[hi:lo]` / `bus[n]`. Lines
 * the bus does not have, or a range written low to high, are errors on the index.
 */
function busLines(ctx: BuildContext, ref: A.Ref, strobe: M.Strobe): boolean {
  if (!ref.index) return true;
  const busName = ref.name.text;
  const width = ctx.machine.buses.get(busName)?.width ?? 0;
  const at = { start: ref.name.span.end, end: ref.span.end };
  const hi = parseNumber(ref.index.text);
  const lo = ref.indexLo ? parseNumber(ref.indexLo.text) : hi;
  if (hi === undefined || lo === undefined) {
    ctx.report('bad-number', at, `write the bus lines as numbers, e.g. \`${busName}[7:0]\``);
    return false;
  }
  if (lo > hi) {
    ctx.report('bad-number', at, `write the high line first, e.g. \`${busName}[${lo}:${hi}]\``);
    return false;
  }
  if (hi >= width) {
    ctx.report('wrong-wiring', at, `\`${busName}[${ref.index.text}${ref.indexLo ? `:${ref.indexLo.text}` : ''}]\` names a line bus \`${busName}\` does not have (its lines are ${width - 1}..0)`);
    return false;
  }
  if (hi - lo + 1 < width && width > 32) {
    ctx.report('wrong-wiring', at, `driving or loading some lines of a bus wider than 32 lines is not supported yet; \`${busName}\` has ${width}`);
    return false;
  }
  if (hi - lo + 1 < width) strobe.lines = { hi, lo };
  return true;
}

const strobeForms: Record<M.StrobeKind, 'none' | 'part-to-bus' | 'bus-to-part' | 'part'> = {
  enable: 'part-to-bus',
  read: 'part-to-bus',
  write: 'bus-to-part',
  clock: 'bus-to-part',
  count: 'part',
  end: 'none',
  trap: 'none',
};

/** Resolves the part (and port) of a strobe and checks the part can do what the strobe asks. */
function wirePart(ctx: BuildContext, strobe: M.Strobe, ref: A.Ref, role: M.StrobeKind | 'clock-flag'): boolean {
  const text = ref.name.text;
  let partName = text;
  let port: string | undefined;
  let partSpan = ref.name.span;
  if (!ctx.lookup('structure', text) && text.includes('.')) {
    const dot = text.indexOf('.');
    partName = text.slice(0, dot);
    port = text.slice(dot + 1);
    partSpan = { start: ref.name.span.start, end: ref.name.span.start + dot };
  }
  const sym = ctx.lookup('structure', partName);
  if (!sym) {
    ctx.undefinedName({ text: partName, span: partSpan }, 'part', [...ctx.machine.parts.keys()]);
    return false;
  }
  if (sym.kind !== 'part') {
    ctx.report('wrong-wiring', ref.span, `\`${partName}\` is a ${sym.kind}; a ${strobe.kind} strobe ${role === 'enable' || role === 'read' ? 'drives a bus from a part' : 'loads a part'} here`);
    return false;
  }
  ctx.reference(partSpan, sym);
  const part = ctx.machine.parts.get(partName);
  if (!part) return false;
  const wiring = strobeWiring(part);
  if (ref.index) {
    if (!wiring.numbered) {
      ctx.report('wrong-wiring', ref.span, `only a part whose kind has numbered ports (a register file's \`x[5]\`) takes a number; \`${partName}\` is ${partPhrase(part)}`);
      return false;
    }
    const register = ctx.number(ref.index, 'a register number', 0, 31);
    if (register === undefined) return false;
    port = `x[${register}]`;
    strobe.register = register;
  }
  strobe.part = partName;
  strobe.port = port;
  const fail = (message: string) => {
    ctx.report('wrong-wiring', ref.span, message);
    return false;
  };
  // A kind with several drive ports (a register file's rs1 and rs2) is always wired by port name.
  if (wiring.ports === 'always' && port === undefined) {
    const names = [...part.def.drives, ...part.def.edges].filter((p) => p.param === undefined).map((p) => `\`${partName}.${p.name}\``);
    if (wiring.numbered) names.push(`\`${partName}[n]\``);
    return fail(`say which port of ${partPhrase(part)}: ${names.slice(0, -1).join(', ')} or ${names[names.length - 1]}`);
  }
  const found = strobe.register !== undefined ? portFor(part, role, undefined, true) : portFor(part, role, port);
  if ('problem' in found) return fail(found.problem);
  strobe.kindPort = found.port;
  return true;
}

function buildStores(ctx: BuildContext, tree: A.FileNode): void {
  let current: M.Store | undefined;
  const implicitStore = (): M.Store => {
    const symbol: M.SymbolInfo = { kind: 'store', name: 'main', key: 'main', span: { start: 0, end: 0 }, declSpan: { start: 0, end: 0 } };
    const store: M.Store = { name: 'main', implicit: true, symbol };
    ctx.machine.stores.push(store);
    return store;
  };
  for (const decl of tree.decls) {
    if (decl.kind === 'store') {
      if (!owns(ctx, 'store', decl.name, decl.span)) {
        current = undefined;
        continue;
      }
      current = { name: decl.name!.text, implicit: false, description: decl.description?.value, symbol: ctx.lookup('store', decl.name!.text)! };
      ctx.machine.stores.push(current);
    } else if (decl.kind === 'word' || decl.kind === 'address') {
      if (!current) {
        if (ctx.machine.stores.some((s) => !s.implicit)) {
          ctx.report('wrong-wiring', decl.keyword, 'this layout comes before any `store`, but the file declares named stores: move it under its `store` line');
          continue;
        }
        current = implicitStore();
      }
      if (decl.kind === 'word') buildWord(ctx, current, decl);
      else buildAddress(ctx, current, decl);
    }
  }
}

function buildWord(ctx: BuildContext, store: M.Store, decl: A.WordDecl): void {
  if (store.word) {
    ctx.report('duplicate-name', decl.keyword, `store \`${store.name}\` already has a word layout; a store has one`, [{ span: store.word.span, message: 'the first word layout' }]);
    return;
  }
  const width = ctx.number(decl.width, 'the word width', 1, 256);
  if (width === undefined) return;
  const chipWidths: number[] = [];
  if (decl.chips) {
    const widths = decl.chips.widths.map((w) => ctx.number(w, 'a chip width', 1, 32));
    const count = decl.chips.count ? ctx.number(decl.chips.count, 'the number of chips', 1, 64) : 1;
    if (widths.some((w) => w === undefined) || count === undefined) return;
    if (decl.chips.count) for (let i = 0; i < count; i++) chipWidths.push(widths[0]!);
    else chipWidths.push(...(widths as number[]));
  } else {
    chipWidths.push(width);
  }
  const word: M.WordLayout = { width, chipWidths, unusedLevel: 0, placements: [], span: decl.span, figures: new Map() };
  for (const option of decl.options) {
    if (option.key.text === 'chip') {
      const chip = option.value ? chipType(option.value.text) : undefined;
      if (!chip) ctx.report('unknown-kind', option.value?.span ?? option.span, `unknown chip \`${option.value?.text ?? ''}\`; name one of ${knownChipNames.join(', ')}, or write its organisation as DEPTHxWIDTH, e.g. \`chip=8192x8\``);
      else word.chip = chip;
    } else if (option.key.text === 'unused') {
      const level = option.value?.text;
      if (level !== '0' && level !== '1') ctx.report('bad-number', option.value?.span ?? option.span, '`unused=` takes 0 or 1: the level of word bits no strobe occupies');
      else word.unusedLevel = level === '1' ? 1 : 0;
    } else if (figureInfo(option.key.text)?.hosts.includes('word')) {
      word.figures = new Map([...word.figures, ...readFigures(ctx, [option], 'word')]);
    } else {
      const guess = closest(option.key.text, ['chip', 'unused', ...figureNamesFor('word')]);
      ctx.report('unknown-kind', option.key.span, `a word layout has no setting \`${option.key.text}\`` + (guess ? `; did you mean \`${guess}\`?` : '; it takes `chip=`, `unused=`, `access_ns=` and `drive_ma=`'));
    }
  }
  for (const placement of decl.placements) {
    const sym = ctx.resolve('signal', placement.target.name, 'strobe or field', (s) => s.kind === 'strobe' || s.kind === 'field');
    if (!sym) continue;
    const lo = ctx.number(placement.lo, 'a bit number', 0, 255);
    const hi = placement.hi ? ctx.number(placement.hi, 'a bit number', 0, 255) : lo;
    if (lo === undefined || hi === undefined) continue;
    if (hi < lo) {
      ctx.report('bad-number', placement.span, `write the low bit first: \`${placement.target.name.text} ${hi}..${lo}\``);
      continue;
    }
    word.placements.push({ signal: sym.name, lo, hi, span: placement.span });
  }
  store.word = word;
}

function buildAddress(ctx: BuildContext, store: M.Store, decl: A.AddressDecl): void {
  if (store.address) {
    ctx.report('duplicate-name', decl.keyword, `store \`${store.name}\` already has an address layout; a store has one`, [{ span: store.address.span, message: 'the first address layout' }]);
    return;
  }
  const width = ctx.number(decl.width, 'the number of address lines', 1, 24);
  if (width === undefined) return;
  const address: M.AddressLayout = { width, sources: [], span: decl.span };
  for (const source of decl.sources) {
    const resolved = ctx.input(source.input, { step: true, field: true });
    if (!resolved) continue;
    const lo = ctx.number(source.lo, 'an address line', 0, 63);
    const hi = source.hi ? ctx.number(source.hi, 'an address line', 0, 63) : lo;
    if (lo === undefined || hi === undefined) continue;
    if (hi < lo) {
      ctx.report('bad-number', source.span, `write the low line first: \`${source.input.name.text} ${hi}..${lo}\``);
      continue;
    }
    address.sources.push({ input: resolved.input, label: resolved.label, lo, hi, span: source.span });
  }
  store.address = address;
  const stepBits = address.sources.filter((s) => s.input.kind === 'step').reduce((n, s) => Math.max(n, s.hi - s.lo + 1), 0);
  if (stepBits > (ctx.machine.stepBits ?? 0)) ctx.machine.stepBits = stepBits;
}

export { parseBits };
