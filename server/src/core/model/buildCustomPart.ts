// A part of a kind the table declares itself: the part line read against the kind's definition.
//   part NAME KIND [WIDTH] {SOURCE | WORD SOURCE} {SETTING=VALUE | INPUT=SOURCE | FIGURE=N} {-> FLAG}
// A bare number sets the kind's `width` setting; names wire the kind's positional inputs in the
// order the kind declares them (an `after WORD` input is written `WORD SOURCE`); `key=value`
// sets a setting, wires a keyed input or gives an electrical figure; each `-> NAME` names the
// kind's flags in order. What is missing or left over is reported where it stands.
import type * as A from '../syntax/ast';
import { closest } from '../text/suggest';
import { figureInfo, figureNamesFor } from '../budget/figures';
import type { KindDef, Size } from '../parts/kinds';
import { type PartSetting, choiceCodes, liveNames, parsedExpr } from '../parts/behaviour';
import { bitsFor } from '../parts/expr';
import type { BuildContext } from './build';
import { parseNumber } from './numbers';
import type * as M from './types';

export function buildCustomPart(ctx: BuildContext, decl: A.PartDecl, def: KindDef, base: { name: string; description?: string; symbol: M.SymbolInfo }, readFigures: (options: A.OptionNode[]) => M.Figures): M.CustomPart | undefined {
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
      if (setting && arg.option.value) setSetting(setting, arg.option.value);
      else if (keyed && arg.option.value && 'text' in arg.option.value && /^[A-Za-z_]/.test(arg.option.value.text)) wireInput(keyed, arg.option.value as A.Name);
      else if (figureInfo(key)?.hosts.includes('part')) figureOptions.push(arg.option);
      else {
        const known = [...def.settings.map((s) => s.name), ...def.inputs.filter((p) => p.wiring === 'keyed').map((p) => p.name)];
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
  for (const setting of def.settings) {
    if (settings.has(setting.name)) continue;
    if (setting.default === undefined) wrong(decl.partKind!.span, `kind \`${def.name}\` needs \`${setting.name}=\` on the part line${setting.description ? ` (${setting.description})` : ''}`);
    else settings.set(setting.name, setting.default);
  }
  for (const input of def.inputs) {
    if (input.wiring === 'instruction') {
      inputs.set(input.name, { from: 'instruction' });
      continue;
    }
    if (inputs.has(input.name)) continue;
    const how = input.wiring === 'keyed' ? `\`${input.name}=SOURCE\`` : input.wiring === 'after' ? `\`${input.after} SOURCE\`` : 'a bus or part name in order';
    wrong(decl.partKind!.span, `input \`${input.name}\` of \`${name}\` is not wired: write ${how} on the part line`);
  }
  // Flags the part line did not name keep the kind's names, prefixed by the part (`cnt.zero`).
  for (const flag of def.flags) if (!flagNames.has(flag.name)) flagNames.set(flag.name, `${name}.${flag.name}`);
  if (!ok) return undefined;
  const width = settings.get('width');
  return {
    ...base,
    kind: 'custom',
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
export function sizeIn(part: M.CustomPart, size: Size): number {
  if (size.kind === 'number') return size.value;
  const value = part.settings.get(size.name);
  return typeof value === 'number' ? value : 0;
}

/**
 * The port of a part of a table's own kind that a strobe of kind `role` uses: `enable`/`read`
 * drive ports; `clock`/`write` with a bus, edge ports that take a bus value; `count` and a
 * `clock` without a bus, edge ports that take none. `port` is the written `.port`, if any.
 * Returns the port's name, or the reason it does not fit.
 */
export function customPortFor(part: M.CustomPart, role: M.StrobeKind | 'clock-flag', port: string | undefined, numbered = false): { port: string; width?: number } | { problem: string } {
  const def = part.def;
  const list = (names: string[]) => (names.length ? names.map((n) => `\`${part.name}.${n}\``).join(', ') : 'none');
  // `PART[n]` names the kind's numbered port (`drive at[n] ...`); a numbered port needs its number.
  if (numbered) {
    const found = role === 'enable' || role === 'read' ? def.drives.find((d) => d.param !== undefined) : def.edges.find((e) => e.param !== undefined && (e.width !== undefined) === (role === 'clock' || role === 'write'));
    if (!found) return { problem: `kind \`${def.name}\` has no numbered ${role === 'enable' || role === 'read' ? 'drive' : 'closing-edge'} port, so \`${part.name}[n]\` names nothing; its ports are ${list([...def.drives, ...def.edges].map((p) => p.name))}` };
    return { port: found.name, width: 'expr' in found ? sizeIn(part, found.width) : found.width ? sizeIn(part, found.width) : undefined };
  }
  const numberedPort = [...def.drives, ...def.edges].find((p) => p.name === port && p.param !== undefined);
  if (numberedPort) return { problem: `\`${part.name}.${port}\` is a numbered port: write \`${part.name}[N]\` with the number` };
  if (role === 'enable' || role === 'read') {
    const drive = port ? def.drives.find((d) => d.name === port) : def.drives[0];
    if (!drive) return { problem: port ? `kind \`${def.name}\` has no drive port \`${port}\`; its drive ports are ${list(def.drives.map((d) => d.name))}` : `kind \`${def.name}\` has no drive port, so \`${part.name}\` cannot put anything on a bus` };
    return { port: drive.name, width: sizeIn(part, drive.width) };
  }
  if (role === 'end' || role === 'trap') return { problem: `an ${role} strobe acts on the sequencer, not on a part` };
  const takesBus = role === 'clock' || role === 'write';
  const fits = (e: KindDef['edges'][number]) => (takesBus ? e.width !== undefined : e.width === undefined);
  const edge = port ? def.edges.find((e) => e.name === port) : def.edges.find(fits);
  if (!edge) {
    const names = def.edges.filter(fits).map((e) => e.name);
    return { problem: port ? `kind \`${def.name}\` has no closing-edge port \`${port}\`; ${takesBus ? 'those that load a bus' : 'those that take no bus'} are ${list(names)}` : `kind \`${def.name}\` has no closing-edge port that ${takesBus ? 'loads a bus' : 'takes no bus'}` };
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
export function customPortBusReads(part: M.CustomPart, port: string, controlCodes: ReadonlyMap<string, number>): string[] {
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
export function partSetting(machine: M.Machine, part: M.CustomPart): PartSetting {
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
