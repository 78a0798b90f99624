// A part: its part line read against its kind's definition, for the standard library's kinds
// and the table's own alike (one path; the library's part lines are written in this grammar).
//   part NAME KIND [WIDTH] {SOURCE | WORD SOURCE} {SETTING=VALUE | INPUT=SOURCE | FIGURE=N} {-> FLAG}
// A bare number sets the kind's `width` setting; names wire the kind's positional inputs in the
// order the kind declares them (an `after WORD` input is written `WORD SOURCE`); `key=value`
// sets a setting, wires a keyed input or gives an electrical figure; each `-> NAME` names the
// kind's flags in order (a flag not named is `PART.FLAG`). An `instruction` input is wired to the
// instruction register. A number setting that sizes an input (`input a width`), when the line does
// not give it, is the width of what that input is wired to. What is missing or left over is
// reported where it stands.
import type * as A from '../syntax/ast';
import { closest } from '../text/suggest';
import { figureInfo, figureNamesFor } from '../budget/figures';
import type { KindDef, Size } from '../parts/kinds';
import { type PartSetting, choiceCodes, liveNames, parsedExpr } from '../parts/behaviour';
import { bitsFor } from '../parts/expr';
import type { BuildContext } from './build';
import { parseNumber } from './numbers';
import type * as M from './types';

export function buildPartOfKind(ctx: BuildContext, decl: A.PartDecl, def: KindDef, base: { name: string; description?: string; symbol: M.SymbolInfo }, readFigures: (options: A.OptionNode[]) => M.Figures): M.Part | undefined {
  const name = base.name;
  const settings = new Map<string, number | string>();
  const inputs = new Map<string, M.InputSource>();
  const flagNames = new Map<string, string>();
  const figureOptions: A.OptionNode[] = [];
  const positional = def.inputs.filter((i) => i.wiring === 'positional');
  const afterWords = new Map(def.inputs.filter((i) => i.wiring === 'after').map((i) => [i.after!, i]));
  let nextPositional = 0;
  let nextFlag = 0;
  let ok = true;
  const wrong = (span: A.Name['span'], message: string) => {
    ctx.report('wrong-wiring', span, message);
    ok = false;
  };
  const setSetting = (setting: KindDef['settings'][number], value: A.Name | A.Literal) => {
    if (setting.type === 'number') {
      const n = parseNumber(value.text);
      if (n === undefined) return wrong(value.span, `\`${setting.name}=\` takes a number; \`${value.text}\` is not one`);
      // A width is a part's lines, as a bus's; every other number setting is a value of up to 32 bits.
      const [max, what] = setting.name === 'width' ? [64, 'a part width'] : [0xffffffff, `\`${setting.name}=\``];
      if ((setting.name === 'width' && n < 1) || n > max) {
        ctx.report('bad-number', value.span, `${what} must be between ${setting.name === 'width' ? 1 : 0} and ${setting.name === 'width' ? max : '0xFFFFFFFF'}; \`${value.text}\` is out of range`);
        ok = false;
        return;
      }
      settings.set(setting.name, n);
    } else {
      if (!setting.choices.includes(value.text)) return wrong(value.span, `\`${setting.name}=\` takes ${setting.choices.map((c) => `\`${c}\``).join(', ')}; not \`${value.text}\``);
      settings.set(setting.name, value.text);
    }
  };
  const wireInput = (input: KindDef['inputs'][number], source: A.Name) => {
    const symbol = ctx.lookup('structure', source.text);
    if (!symbol) return ctx.undefinedName(source, 'bus or part', [...ctx.machine.buses.keys(), ...ctx.machine.parts.keys()]);
    if (symbol.kind !== 'bus' && symbol.kind !== 'part') return wrong(source.span, `input \`${input.name}\` of \`${name}\` comes from a bus or a part; \`${source.text}\` is a ${symbol.kind}`);
    ctx.reference(source.span, symbol);
    inputs.set(input.name, { from: symbol.kind, name: source.text });
  };
  // A `field` input reads a field of the word (a number field, checked once fields are built: model/build.ts).
  const refused = new Set<string>();
  const wireField = (input: KindDef['inputs'][number], source: A.Name) => {
    const symbol = ctx.lookup('signal', source.text);
    const other = symbol ? undefined : ctx.lookup('structure', source.text);
    if (other) {
      refused.add(input.name);
      return wrong(source.span, `input \`${input.name}\` of \`${name}\` takes a number field of the word (\`field NAME WIDTH\`); \`${source.text}\` is a ${other.kind}`);
    }
    if (!symbol) {
      refused.add(input.name);
      ok = false;
      return ctx.undefinedName(source, 'field', [...(ctx.names.get('signal')?.values() ?? [])].filter((s) => s.kind === 'field').map((s) => s.name));
    }
    if (symbol.kind !== 'field') {
      refused.add(input.name); // reported here, not again as unwired
      return wrong(source.span, `input \`${input.name}\` of \`${name}\` takes a number field of the word (\`field ${source.text} WIDTH\`); \`${source.text}\` is a ${symbol.kind}`);
    }
    ctx.reference(source.span, symbol);
    inputs.set(input.name, { from: 'field', name: source.text, span: source.span });
  };
  const args = decl.args;
  for (let i = 0; i < args.length; i++) {
    const arg = args[i];
    if (arg.kind === 'number') {
      const width = def.settings.find((s) => s.name === 'width' && s.type === 'number');
      if (!width) wrong(arg.span, `kind \`${def.name}\` has no \`width\` setting, so a bare number means nothing here; remove \`${arg.value.text}\``);
      else if (settings.has('width')) wrong(arg.span, `the width is already given; remove \`${arg.value.text}\``);
      else setSetting(width, arg.value);
    } else if (arg.kind === 'word') {
      const after = afterWords.get(arg.name.text);
      if (after && args[i + 1]?.kind === 'word') {
        wireInput(after, (args[++i] as { name: A.Name }).name);
      } else if (nextPositional < positional.length) {
        wireInput(positional[nextPositional++], arg.name);
      } else {
        wrong(arg.span, `kind \`${def.name}\` takes ${positional.length === 0 ? 'no inputs written in order' : `${positional.length} input(s) in order (${positional.map((p) => p.name).join(', ')})`}; \`${arg.name.text}\` is one too many`);
      }
    } else if (arg.kind === 'option') {
      const key = arg.option.key.text;
      const setting = def.settings.find((s) => s.name === key);
      const keyed = def.inputs.find((p) => p.name === key && p.wiring === 'keyed');
      const fieldInput = def.inputs.find((p) => p.name === key && p.wiring === 'field');
      if (fieldInput && arg.option.value && 'text' in arg.option.value && /^[A-Za-z_]/.test(arg.option.value.text)) wireField(fieldInput, arg.option.value as A.Name);
      else if (setting && arg.option.value) setSetting(setting, arg.option.value);
      else if (keyed && arg.option.value && 'text' in arg.option.value && /^[A-Za-z_]/.test(arg.option.value.text)) wireInput(keyed, arg.option.value as A.Name);
      else if (figureInfo(key)?.hosts.includes('part')) figureOptions.push(arg.option);
      else {
        const known = [...def.settings.map((s) => s.name), ...def.inputs.filter((p) => p.wiring === 'keyed' || p.wiring === 'field').map((p) => p.name)];
        const guess = closest(key, [...known, ...figureNamesFor('part')]);
        ctx.report('unknown-kind', arg.option.key.span, `kind \`${def.name}\` has no setting \`${key}\`` + (guess ? `; did you mean \`${guess}\`?` : known.length ? `; it takes ${known.map((k) => `\`${k}=\``).join(', ')}` : ''));
        ok = false;
      }
    } else if (arg.kind === 'arrow') {
      const flag = def.flags[nextFlag++];
      if (!flag) wrong(arg.span, `kind \`${def.name}\` has ${def.flags.length === 0 ? 'no flags' : `${def.flags.length} flag(s) (${def.flags.map((f) => f.name).join(', ')})`}; remove this \`->\``);
      else if (arg.target) flagNames.set(flag.name, arg.target.text);
    }
  }
  // A number setting an input's width names (`input a width`), not written, is the width of what
  // the first such input is wired to: an ALU on 8-bit buses is 8 bits wide.
  for (const input of def.inputs) {
    const source = inputs.get(input.name);
    if (input.width.kind !== 'setting' || settings.has(input.width.name) || !source || source.from === 'instruction' || source.from === 'field') continue;
    const setting = def.settings.find((st) => st.type === 'number' && st.name === (input.width as { name: string }).name);
    const sourceWidth = source.from === 'bus' ? ctx.machine.buses.get(source.name)?.width : ctx.machine.parts.get(source.name)?.width;
    if (setting && sourceWidth !== undefined) settings.set(setting.name, sourceWidth);
  }
  for (const setting of def.settings) {
    if (settings.has(setting.name)) continue;
    if (setting.default === undefined) wrong(decl.partKind!.span, `kind \`${def.name}\` needs \`${setting.name}=\` on the part line${setting.description ? ` (${setting.description})` : ''}`);
    else settings.set(setting.name, setting.default);
  }
  for (const input of def.inputs) {
    // `instruction`, or `after WORD instruction` left off the line: the instruction register.
    if (input.wiring === 'instruction' || (input.readsInstruction && !inputs.has(input.name))) {
      inputs.set(input.name, { from: 'instruction' });
      continue;
    }
    if (inputs.has(input.name) || refused.has(input.name)) continue;
    const how = input.wiring === 'keyed' ? `\`${input.name}=SOURCE\`` : input.wiring === 'field' ? `\`${input.name}=FIELD\` (a number field of the word)` : input.wiring === 'after' ? `\`${input.after} SOURCE\`` : 'a bus or part name in order';
    wrong(decl.partKind!.span, `input \`${input.name}\` of \`${name}\` is not wired: write ${how} on the part line`);
  }
  // Flags the part line did not name keep the kind's names, prefixed by the part (`cnt.zero`).
  for (const flag of def.flags) if (!flagNames.has(flag.name)) flagNames.set(flag.name, `${name}.${flag.name}`);
  if (!ok) return undefined;
  const width = settings.get('width');
  return {
    ...base,
    kindName: def.name,
    def,
    width: typeof width === 'number' ? width : (def.drives[0] && def.drives[0].width.kind === 'number' ? def.drives[0].width.value : 32),
    settings,
    inputs,
    flagNames,
    controlFields: new Map(),
    controlValues: new Map(),
    figures: readFigures(figureOptions),
  };
}

/** The width a size stands for in this part (a number, or a number setting's value). */
export function sizeIn(part: M.Part, size: Size): number {
  if (size.kind === 'number') return size.value;
  const value = part.settings.get(size.name);
  return typeof value === 'number' ? value : 0;
}

/**
 * The port of a part's kind that a strobe of kind `role` uses: `enable`/`read` drive ports;
 * `clock`/`write` with a bus, edge ports that take a bus value; `count` and a `clock` without a
 * bus, edge ports that take none. `port` is the written `.port`, if any. Returns the port's
 * name, or the reason it does not fit.
 */
export function portFor(part: M.Part, role: M.StrobeKind | 'clock-flag', port: string | undefined, numbered = false): { port: string; width?: number } | { problem: string } {
  const def = part.def;
  const names = (ports: { name: string; param?: string }[]) => ports.map((p) => (p.param === undefined ? `\`${part.name}.${p.name}\`` : `\`${part.name}[n]\``));
  const list = (ports: { name: string; param?: string }[], conjunction = 'and') => {
    const all = names(ports);
    return all.length === 0 ? 'none' : all.length === 1 ? all[0] : `${all.slice(0, -1).join(', ')} ${conjunction} ${all[all.length - 1]}`;
  };
  const drives = role === 'enable' || role === 'read';
  // `PART[n]` names the kind's numbered port (`drive at[n] ...`); a numbered port needs its number.
  if (numbered) {
    const found = drives ? def.drives.find((d) => d.param !== undefined) : def.edges.find((e) => e.param !== undefined && (e.width !== undefined) === (role === 'clock' || role === 'write'));
    if (!found) return { problem: `kind \`${def.name}\` has no numbered ${drives ? 'drive' : 'closing-edge'} port, so \`${part.name}[n]\` names nothing; its ports are ${list([...def.drives, ...def.edges])}` };
    return { port: found.name, width: 'expr' in found ? sizeIn(part, found.width) : found.width ? sizeIn(part, found.width) : undefined };
  }
  const numberedPort = [...def.drives, ...def.edges].find((p) => p.name === port && p.param !== undefined);
  if (numberedPort) return { problem: `\`${part.name}.${port}\` is a numbered port: write \`${part.name}[N]\` with the number` };
  if (drives) {
    const drive = port ? def.drives.find((d) => d.name === port) : def.drives.find((d) => d.param === undefined);
    if (!drive) {
      if (port && def.edges.some((e) => e.name === port)) return { problem: `\`${part.name}.${port}\` is an input: it loads at the closing edge; drive the bus from ${list(def.drives.filter((d) => d.param === undefined), 'or')}` };
      return { problem: port ? `kind \`${def.name}\` has no drive port \`${port}\`; its drive ports are ${list(def.drives)}` : `kind \`${def.name}\` has no drive port, so \`${part.name}\` cannot put anything on a bus` };
    }
    return { port: drive.name, width: sizeIn(part, drive.width) };
  }
  if (role === 'end' || role === 'trap') return { problem: `an ${role} strobe acts on the sequencer, not on a part` };
  const takesBus = role === 'clock' || role === 'write';
  // An `always` edge port acts at every closing edge by itself: no strobe names it.
  const always = port ? def.edges.find((e) => e.name === port && e.always) : undefined;
  if (always) return { problem: `\`${part.name}.${port}\` acts at every closing edge by itself (\`on ${port} always\`); no strobe drives it` };
  const fits = (e: KindDef['edges'][number]) => !e.always && (takesBus ? e.width !== undefined : e.width === undefined);
  const edge = port ? def.edges.find((e) => e.name === port) : def.edges.find((e) => fits(e) && e.param === undefined);
  if (!edge) {
    const fitting = def.edges.filter((e) => fits(e) && e.param === undefined);
    const others = def.edges.filter((e) => !fits(e) && e.param === undefined);
    if (port && def.drives.some((d) => d.name === port)) return { problem: `\`${part.name}.${port}\` is an output: ${fitting.length ? `load \`${part.name}\` through ${list(fitting, 'or')}` : `\`${part.name}\` has no closing-edge port that ${takesBus ? 'loads a bus' : 'takes no bus'}`}` };
    if (port) return { problem: `kind \`${def.name}\` has no closing-edge port \`${port}\`; ${takesBus ? 'those that load a bus' : 'those that take no bus'} are ${list(fitting)}` };
    const cannot = role === 'count' ? 'count' : takesBus ? (role === 'write' ? 'be written' : 'load a bus') : 'be clocked without a bus';
    const hint = others.length === 0 ? '' : takesBus ? `; it is clocked with no bus: \`clock ${part.name}\`` : `; it loads a bus: \`clock BUS -> ${part.name}\``;
    return { problem: `kind \`${def.name}\` has no closing-edge port that ${takesBus ? 'loads a bus' : 'takes no bus'}, so \`${part.name}\` cannot ${cannot}${hint}` };
  }
  if (!fits(edge)) return { problem: takesBus ? `\`${part.name}.${edge.name}\` takes no bus value: write \`${role === 'write' ? 'clock' : role} ${part.name}.${edge.name}\` without a bus` : `\`${part.name}.${edge.name}\` loads a bus value: write \`clock BUS -> ${part.name}.${edge.name}\`` };
  return { port: edge.name, width: edge.width ? sizeIn(part, edge.width) : undefined };
}

/**
 * The buses a port (or a flag) of the part reads when its controls hold `controlCodes` (a control not listed
 * is unknown: every arm it selects counts). `edge`: the port is an edge port, whose `in` is the
 * bus its strobe loads (listed by the caller, not here). The simulator requires these buses to
 * be defined; the latch checks require them to be driven.
 */
export function portBusReads(part: M.Part, port: string, controlCodes: ReadonlyMap<string, number>): string[] {
  const def = part.def;
  const known = new Map([...choiceCodes(def, part.settings), ...controlCodes]);
  const values = (name: string): ReadonlyMap<string, number> | undefined => {
    const setting = def.settings.find((s) => s.name === name);
    if (setting?.type === 'choice') return new Map(setting.choices.map((c, i) => [c, i]));
    return part.controlValues.get(name);
  };
  const texts = [...def.drives.filter((d) => d.name === port).map((d) => d.expr), ...def.flags.filter((f) => f.name === port).map((f) => f.expr), ...def.edges.filter((e) => e.name === port).flatMap((e) => e.assigns.flatMap((a) => [a.expr, ...(a.when ? [a.when] : []), ...(a.index ? [a.index] : [])]))];
  const buses = new Set<string>();
  for (const text of texts) {
    const expr = parsedExpr(def, text).expr;
    if (!expr) continue;
    for (const name of liveNames(expr, known, values)) {
      const input = part.inputs.get(name);
      if (input?.from === 'bus') buses.add(input.name);
    }
  }
  return [...buses];
}

/**
 * A part's settings and its controls' codes as the fields driving them number them; a control no
 * field drives (or whose field's values were all refused, with their own errors) keeps the
 * kind's own numbering. The checks and the simulator read the part through this one setting.
 */
export function partSetting(machine: M.Machine, part: M.Part): PartSetting {
  const controls = new Map<string, { width: number; values: ReadonlyMap<string, number> }>();
  for (const control of part.def.controls) {
    const fieldName = part.controlFields.get(control.name);
    const field = fieldName ? machine.signals.get(fieldName) : undefined;
    if (field?.type === 'field' && field.values.size > 0) {
      // A field may name only some of the control's values (an ALU field with add and passa):
      // the others get codes past the field's, which it never gives, so their arms check but never run.
      const values = new Map([...field.values.values()].map((v) => [v.name, v.code]));
      let next = 2 ** field.width;
      for (const v of control.values) if (!values.has(v)) values.set(v, next++);
      controls.set(control.name, { width: bitsFor(next), values });
    }
    else controls.set(control.name, { width: bitsFor(control.values.length), values: new Map(control.values.map((v, i) => [v, i])) });
  }
  return { settings: part.settings, controls };
}
