// Completion that knows where the cursor stands in the line-oriented notation: declaration
// keywords and missing RV32I classes at the start of a line; part and strobe kinds after a
// new name; parts, ports and buses in strobe wiring; strobes and fields in step lines and
// word layouts; a field's values and maps after `field=`; phases after `use`; address inputs
// in guards, maps and address layouts; settings and their values. Every item carries the
// declaration's description or the vocabulary's explanation as its documentation. It reads
// the line before the cursor and the last analysis; it does not parse or guess beyond them.
import type { Analysis } from '../analysis';
import { MAJOR_OPCODES, RV32I_INSTRUCTIONS } from '../isa/rv32i';
import { knownChipNames } from '../model/chips';
import type { Decl } from '../syntax/ast';
import { declarationKeywords } from '../syntax/ast';
import type { Field, Machine, Part, Strobe, StrobeKind } from '../model/types';
import { strobeKinds } from '../model/vocabulary';
import { controlOfTarget, fieldValueMeaning, heldValue, strobeTargets, valueMeaning } from '../model/partFacts';
import { standardLibrary } from '../parts/library';
import type { KindDef } from '../parts/kinds';
import { scan } from '../syntax/scanner';
import { T, type Token } from '../syntax/tokens';
import type { Span } from '../text/span';
import { addressInputTexts, binaryDigits, keywordTexts, partKindText, strobeKindText } from './describe';

export type CompletionKind = 'keyword' | 'class' | 'kind' | 'strobe' | 'field' | 'value' | 'map' | 'bus' | 'part' | 'port' | 'phase' | 'input' | 'flag' | 'setting' | 'chip';

export interface CompletionEntry {
  label: string;
  kind: CompletionKind;
  detail?: string;
  /** Markdown: the declaration's description or the vocabulary's explanation. */
  documentation?: string;
  /** Text to insert when it differs from the label. */
  insertText?: string;
}

export interface CompletionResult {
  items: CompletionEntry[];
  /** The partial word before the cursor that an item replaces. */
  replace: Span;
}

const nameTail = /[A-Za-z_][A-Za-z0-9_]*(?:[.\-][A-Za-z_][A-Za-z0-9_]*)*[.\-]?$/;
const bodyKinds = new Set(['word', 'address', 'map', 'phase', 'class']);

export function complete(analysis: Analysis, offset: number): CompletionResult {
  const text = analysis.text;
  const position = analysis.lines.position(offset);
  const lineStart = analysis.lines.lineStarts[position.line];
  const before = text.slice(lineStart, offset);
  const prefix = before.endsWith('->') ? '' : (nameTail.exec(before)?.[0] ?? '');
  const replace = { start: offset - prefix.length, end: offset };
  const result = (items: CompletionEntry[]): CompletionResult => ({ items: dedupe(items), replace });
  // Inside a comment or a quoted description nothing is completed.
  const lineTokens = scan(before.slice(0, before.length - prefix.length)).filter((t) => t.kind !== T.Whitespace && t.kind !== T.Eof);
  if (lineTokens.some((t) => t.kind === T.Comment) || lineTokens.some((t) => t.kind === T.String && t.unterminated)) return result([]);
  const tokens = lineTokens.filter((t) => t.kind !== T.Newline);
  const machine = analysis.machine;
  const first = tokens[0];
  const indented = /^[ \t]/.test(before);

  if (first && first.kind === T.Ident && (declarationKeywords as readonly string[]).includes(first.text) && !indented) {
    return result(inDeclarationLine(analysis, first.text, tokens, offset));
  }
  const decl = enclosingDecl(analysis, lineStart);
  if (decl?.kind === 'field' && decl.open && decl.open.end <= replace.start && (!decl.close || decl.close.start >= offset)) {
    return result(fieldValueNames(analysis, decl, tokens));
  }
  if (tokens.length === 0) {
    const items: CompletionEntry[] = [];
    if (!indented || !decl || !bodyKinds.has(decl.kind)) items.push(...keywordItems(), ...missingClassItems(machine));
    if (decl && bodyKinds.has(decl.kind)) items.push(...bodyLineStart(analysis, decl, lineStart));
    return result(items);
  }
  if (decl && bodyKinds.has(decl.kind)) return result(inBodyLine(analysis, decl, tokens, lineStart));
  return result([]);
}

function dedupe(items: CompletionEntry[]): CompletionEntry[] {
  const seen = new Set<string>();
  return items.filter((item) => {
    const key = `${item.kind}:${item.label}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
}

/** The declaration a line belongs to: the last one starting before the line. */
function enclosingDecl(analysis: Analysis, lineStart: number): Decl | undefined {
  const decls = analysis.parse.tree.decls;
  let lo = 0;
  let hi = decls.length - 1;
  let found: Decl | undefined;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (decls[mid].span.start < lineStart) {
      found = decls[mid];
      lo = mid + 1;
    } else {
      hi = mid - 1;
    }
  }
  return found;
}

function keywordItems(): CompletionEntry[] {
  return declarationKeywords.map((k) => ({ label: k, kind: 'keyword', detail: 'declaration', documentation: keywordTexts[k], insertText: `${k} ` }));
}

/** `class NAME opcode=BITS` for every RV32I major opcode no class handles yet. */
function missingClassItems(machine: Machine): CompletionEntry[] {
  return MAJOR_OPCODES.filter((m) => !machine.classes.some((c) => c.opcode === m.opcode)).map((m) => {
    const bits = binaryDigits(m.opcode, 7);
    const instructions = RV32I_INSTRUCTIONS.filter((s) => s.opcode === m.opcode).map((s) => s.mnemonic);
    return {
      label: `class ${m.name}`,
      kind: 'class',
      detail: `opcode=${bits} (${m.format} format)`,
      documentation: `The steps of RV32I ${m.name}: ${instructions.join(', ')}.`,
      insertText: `class ${m.name} opcode=${bits}`,
    };
  });
}

function strobeItem(strobe: Strobe): CompletionEntry {
  const wiring = strobe.kind === 'end' || strobe.kind === 'trap' ? strobe.kind : `${strobe.kind} ${strobe.part ?? '?'}${strobe.port ? `.${strobe.port}` : ''}${strobe.bus ? ` ${strobe.kind === 'clock' || strobe.kind === 'write' ? '←' : '→'} ${strobe.bus}` : ''}`;
  return { label: strobe.name, kind: 'strobe', detail: `strobe · ${wiring} · active ${strobe.active}`, documentation: strobe.description };
}

function fieldItem(field: Field, insertEquals: boolean): CompletionEntry {
  return {
    label: field.name,
    kind: 'field',
    detail: `field · ${field.width} bits${field.target ? ` → ${field.target}` : ''}`,
    documentation: field.description,
    insertText: insertEquals ? `${field.name}=` : undefined,
  };
}

function signalItems(machine: Machine, insertEquals: boolean): CompletionEntry[] {
  const items: CompletionEntry[] = [];
  for (const signal of machine.signals.values()) items.push(signal.type === 'strobe' ? strobeItem(signal) : fieldItem(signal, insertEquals));
  return items;
}

/** The values of a field and the maps that set it: what may follow `field=`. */
function fieldValueItems(machine: Machine, fieldName: string): CompletionEntry[] {
  const field = machine.signals.get(fieldName);
  if (field?.type !== 'field') return [];
  const items: CompletionEntry[] = [...field.values.values()].map((v) => ({
    label: v.name,
    kind: 'value',
    detail: `code ${v.code} = ${binaryDigits(v.code, field.width)}`,
    documentation: fieldValueMeaning(machine, field.name, v.name),
  }));
  for (const map of machine.maps.values()) {
    if (map.output !== field.name) continue;
    items.push({ label: map.name, kind: 'map', detail: `map (${map.inputs.map((i) => i.label).join(', ')}) -> ${field.name}`, documentation: map.description });
  }
  return items;
}

function inputItems(machine: Machine, options: { step?: boolean; fields?: boolean }): CompletionEntry[] {
  const items: CompletionEntry[] = [];
  for (const [name, text] of Object.entries(addressInputTexts)) {
    if (name === 'step' && !options.step) continue;
    if (name === 'ir') items.push({ label: 'ir[n]', kind: 'input', detail: 'instruction bits', documentation: text, insertText: 'ir[' });
    else items.push({ label: name, kind: 'input', detail: 'address input', documentation: text });
  }
  for (const flag of machine.flags.values()) items.push({ label: flag.name, kind: 'flag', detail: `flag of ${flag.part}`, documentation: `One bit from part \`${flag.part}\`.` });
  if (options.fields) for (const signal of machine.signals.values()) if (signal.type === 'field') items.push({ label: signal.name, kind: 'field', detail: 'field of another store (entry-point decoder)', documentation: signal.description });
  return items;
}

function busItems(machine: Machine): CompletionEntry[] {
  return [...machine.buses.values()].map((b) => ({ label: b.name, kind: 'bus', detail: `bus · ${b.width} lines${b.keeper ? ' · keeper' : ''}`, documentation: b.description }));
}

function partItem(machine: Machine, part: Part): CompletionEntry {
  const kind = part.def;
  return { label: part.name, kind: 'part', detail: `part · ${kind.name}`, documentation: [part.description, partKindText(machine, kind.name)].filter(Boolean).join('\n\n') };
}

/** Parts and ports a strobe of this kind can act on, on the side given, from each part's definition. */
function wiringParts(machine: Machine, kind: StrobeKind, side: 'drive' | 'load'): CompletionEntry[] {
  const items: CompletionEntry[] = [];
  for (const part of machine.parts.values()) {
    for (const { label, port } of strobeTargets(machine, part, kind, side)) {
      if (label === part.name) items.push(partItem(machine, part));
      else items.push({ label, kind: 'port', detail: `port of ${part.name}`, documentation: port.description ? `${port.description}.` : undefined });
    }
  }
  return items;
}

/** The kind a part line names, from the table's kinds or the library. */
function kindNamed(machine: Machine, name: string): KindDef | undefined {
  return machine.kinds.get(name) ?? standardLibrary().kinds.get(name);
}

/** Parts that hold a value a bus can read (registers), for an input such as a memory's address. */
function valueParts(machine: Machine): CompletionEntry[] {
  return [...machine.parts.values()].filter((p) => heldValue(machine, p)).map((p) => partItem(machine, p));
}

function settingItem(label: string, documentation: string): CompletionEntry {
  return { label, kind: 'setting', documentation, insertText: label.endsWith('=') ? label : undefined };
}

function words(values: readonly string[], kind: CompletionKind, detail: string, docs?: (v: string) => string | undefined): CompletionEntry[] {
  return values.map((v) => ({ label: v, kind, detail, documentation: docs?.(v) }));
}

/** Completions inside a declaration line, after its keyword. */
function inDeclarationLine(analysis: Analysis, keyword: string, tokens: Token[], offset: number): CompletionEntry[] {
  const machine = analysis.machine;
  const last = tokens[tokens.length - 1];
  const afterEquals = last.kind === T.Equals ? tokens[tokens.length - 2]?.text : undefined;
  const hasArrow = tokens.some((t) => t.kind === T.Arrow);
  switch (keyword) {
    case 'machine':
      if (last.text === 'isa') return [{ label: 'rv32i', kind: 'keyword', documentation: keywordTexts.isa }];
      return tokens.some((t) => t.text === 'isa') ? [] : [{ label: 'isa', kind: 'keyword', documentation: keywordTexts.isa, insertText: 'isa rv32i' }];
    case 'bus':
      return tokens.length >= 3 && !tokens.some((t) => t.text === 'keeper') && last.kind !== T.Equals ? [{ label: 'keeper', kind: 'keyword', documentation: keywordTexts.keeper }] : [];
    case 'part': {
      if (tokens.length === 2) {
        // The standard library's kinds, then the table's own (`kind` declarations).
        const kinds = [...standardLibrary().kinds.values(), ...[...machine.kinds.values()].filter((k) => k.origin === 'table')];
        return kinds.map((k) => ({ label: k.name, kind: 'kind' as const, detail: k.origin === 'table' ? 'part kind of this table' : 'part kind', documentation: k.description }));
      }
      if (tokens.length < 3) return [];
      const def = kindNamed(machine, tokens[2].text);
      if (!def) return [];
      // After `NAME=`: a choice setting's choices; a keyed input's sources.
      const setting = afterEquals ? def.settings.find((s) => s.name === afterEquals) : undefined;
      if (setting) return setting.type === 'choice' ? words(setting.choices, 'setting', setting.name, (v) => keywordTexts[v] ?? setting.description) : [];
      const keyed = afterEquals ? def.inputs.find((i) => i.name === afterEquals && i.wiring === 'keyed') : undefined;
      if (keyed) return [...valueParts(machine), ...busItems(machine)];
      if (afterEquals) return [];
      const after = def.inputs.find((i) => i.wiring === 'after' && i.after === last.text);
      if (after) return [...machine.parts.values()].filter((p) => p.name === machine.instructionRegister || heldValue(machine, p)).map((p) => partItem(machine, p));
      if (last.kind === T.Arrow) return [];
      // Inputs written in order first (buses), then what may follow them.
      const positional = def.inputs.filter((i) => i.wiring === 'positional');
      let written = 0;
      for (let i = 3; i < tokens.length; i++) {
        const t = tokens[i];
        if (t.kind !== T.Ident || tokens[i + 1]?.kind === T.Equals || tokens[i - 1]?.kind === T.Equals || tokens[i - 1]?.kind === T.Arrow) continue;
        if (def.inputs.some((input) => input.wiring === 'after' && (input.after === t.text || tokens[i - 1]?.text === input.after))) continue;
        written++;
      }
      if (written < positional.length) return busItems(machine);
      const given = new Set(tokens.filter((t, i) => tokens[i + 1]?.kind === T.Equals).map((t) => t.text));
      const items: CompletionEntry[] = [];
      for (const s of def.settings) if (s.name !== 'width' && !given.has(s.name)) items.push(settingItem(`${s.name}=`, s.description ?? `setting \`${s.name}\``));
      for (const i of def.inputs) {
        if (i.wiring === 'keyed' && !given.has(i.name)) items.push(settingItem(`${i.name}=`, i.description ?? `input \`${i.name}\``));
        if (i.wiring === 'after' && !tokens.some((t) => t.text === i.after)) items.push({ label: i.after!, kind: 'keyword', documentation: i.description ?? `input \`${i.name}\`` });
      }
      if (def.flags.length && !hasArrow) items.push({ label: '->', kind: 'keyword', documentation: `names the flag${def.flags.length > 1 ? 's' : ''} the part produces (${def.flags.map((f) => f.name).join(', ')})`, insertText: '-> ' });
      return items;
    }
    case 'strobe': {
      if (tokens.length === 2) return words(strobeKinds, 'kind', 'strobe kind', (k) => strobeKindText(k as StrobeKind));
      if (tokens.length < 3) return [];
      const kind = tokens[2].text as StrobeKind;
      if (last.text === 'active') return words(['high', 'low'], 'keyword', 'active level', (v) => keywordTexts[v]);
      if (tokens.some((t) => t.text === 'active')) return [];
      const activeItem: CompletionEntry = { label: 'active', kind: 'keyword', documentation: keywordTexts.active };
      if (kind === 'end' || kind === 'trap') return tokens.length === 3 ? [activeItem] : [];
      if (last.kind === T.Arrow) {
        if (kind === 'enable' || kind === 'read') return busItems(machine);
        if (kind === 'clock') return wiringParts(machine, 'clock', 'load');
        if (kind === 'write') return wiringParts(machine, 'write', 'load');
        return [];
      }
      if (tokens.length === 3) {
        if (kind === 'clock') return [...busItems(machine), ...wiringParts(machine, 'clock', 'drive')];
        if (kind === 'write') return busItems(machine);
        return wiringParts(machine, kind, 'drive');
      }
      if (!hasArrow && (kind === 'enable' || kind === 'read' || kind === 'clock' || kind === 'write')) {
        return [{ label: '->', kind: 'keyword', documentation: 'what the strobe drives or loads', insertText: '-> ' }, ...(kind === 'clock' ? [activeItem] : [])];
      }
      return [activeItem];
    }
    case 'field': {
      if (afterEquals === 'idle') {
        const decl = enclosingDeclAt(analysis, offset);
        return decl?.kind === 'field' ? decl.values.map((v) => ({ label: v.name.text, kind: 'value' as const, detail: v.code ? `code ${v.code.text}` : undefined })) : [];
      }
      if (last.kind === T.Arrow) return [...machine.parts.values()].filter((p) => p.def.controls.length > 0).map((p) => partItem(machine, p));
      const decl = enclosingDeclAt(analysis, offset);
      if (decl?.kind === 'field' && decl.open && decl.open.end <= offset && (!decl.close || decl.close.start >= offset)) return fieldValueNames(analysis, decl, tokens);
      if (tokens.length >= 3 && !tokens.some((t) => t.kind === T.LBrace)) {
        return [settingItem('idle=', 'the value the field holds where no step sets it'), ...(hasArrow ? [] : [{ label: '->', kind: 'keyword' as const, documentation: 'the part this field controls', insertText: '-> ' }])];
      }
      return [];
    }
    case 'word':
      if (afterEquals === 'chip') return words(knownChipNames, 'chip', 'control-store chip');
      if (afterEquals === 'unused') return words(['0', '1'], 'setting', 'level of unused word bits');
      if (tokens.some((t) => t.text === 'as') && last.kind === T.Number) return [settingItem('chip=', 'the chip type, so capacity is checked'), settingItem('unused=', 'the level of word bits no signal occupies')];
      return [];
    case 'map': {
      const open = tokens.some((t) => t.kind === T.LParen);
      const closed = tokens.some((t) => t.kind === T.RParen);
      if (open && !closed && (last.kind === T.LParen || last.kind === T.Comma)) return inputItems(machine, {});
      if (last.kind === T.Arrow) return [...machine.signals.values()].filter((s): s is Field => s.type === 'field').map((f) => fieldItem(f, false));
      return [];
    }
    case 'class':
      if (afterEquals === 'opcode') {
        return MAJOR_OPCODES.map((m) => ({ label: binaryDigits(m.opcode, 7), kind: 'value', detail: m.name, documentation: `RV32I ${m.name}: ${RV32I_INSTRUCTIONS.filter((s) => s.opcode === m.opcode).map((s) => s.mnemonic).join(', ')}` }));
      }
      if (tokens.length === 2) return [settingItem('opcode=', 'the seven opcode bits, instruction bits 6..0')];
      return [];
  }
  return [];
}

function enclosingDeclAt(analysis: Analysis, offset: number): Decl | undefined {
  return enclosingDecl(analysis, offset);
}

/** Inside a field's braces: the value names its part understands, minus those already listed. */
function fieldValueNames(analysis: Analysis, decl: Decl & { kind: 'field' }, tokens: Token[]): CompletionEntry[] {
  const last = tokens[tokens.length - 1];
  if (last && last.kind === T.Equals) return [];
  const machine = analysis.machine;
  const target = decl.target ? controlOfTarget(machine, decl.target.name.text) : undefined;
  if (!target) return [];
  const listed = new Set(decl.values.map((v) => v.name.text));
  return target.control.values
    .filter((v) => !listed.has(v))
    .map((v) => ({ label: v, kind: 'value', detail: `value of ${target.part.name}.${target.control.name}`, documentation: valueMeaning(machine, target.part, target.control.name, v), insertText: `${v}=` }));
}

/** At the start of a body line: what such a line may begin with. */
function bodyLineStart(analysis: Analysis, decl: Decl, lineStart: number): CompletionEntry[] {
  const machine = analysis.machine;
  switch (decl.kind) {
    case 'word': {
      const placed = new Set(machine.stores.flatMap((s) => s.word?.placements.map((p) => p.signal) ?? []));
      return signalItems(machine, false).filter((i) => !placed.has(i.label));
    }
    case 'address':
      return inputItems(machine, { step: true, fields: true });
    case 'class':
    case 'phase': {
      if (continuesStep(analysis, lineStart)) return signalItems(machine, true);
      return decl.kind === 'class' ? [{ label: 'use', kind: 'keyword', documentation: keywordTexts.use, insertText: 'use ' }] : [];
    }
  }
  return [];
}

/** True when the line before continues a step (it ends with a comma). */
function continuesStep(analysis: Analysis, lineStart: number): boolean {
  const lines = analysis.lines;
  let line = lines.position(lineStart).line - 1;
  while (line >= 0) {
    const text = lines.lineText(line).replace(/#.*$/, '').trimEnd();
    if (text !== '') return text.endsWith(',');
    line--;
  }
  return false;
}

/** Within a body line, after its first word. */
function inBodyLine(analysis: Analysis, decl: Decl, tokens: Token[], lineStart: number): CompletionEntry[] {
  const machine = analysis.machine;
  const last = tokens[tokens.length - 1];
  switch (decl.kind) {
    case 'word': {
      if (last.kind === T.Number || last.kind === T.Comma) {
        const placed = new Set(machine.stores.flatMap((s) => s.word?.placements.map((p) => p.signal) ?? []));
        return signalItems(machine, false).filter((i) => !placed.has(i.label));
      }
      return [];
    }
    case 'address':
      return last.kind === T.Number || last.kind === T.Comma ? inputItems(machine, { step: true, fields: true }) : [];
    case 'map': {
      const map = [...machine.maps.values()].find((m) => m.symbol.declSpan.start === decl.span.start);
      const width = Math.max(1, decl.kind === 'map' ? decl.inputs.length : 1);
      // Patterns since the last value name: a value name follows the row's last pattern.
      let patterns = 0;
      for (const t of tokens) patterns = t.kind === T.Number || t.kind === T.Pattern ? patterns + 1 : 0;
      if (map?.output && patterns === width) return fieldValueItems(machine, map.output).filter((i) => i.kind === 'value');
      return [];
    }
    case 'class':
    case 'phase': {
      if (tokens[0].text === 'use' && tokens[0].kind === T.Ident) {
        if (tokens.length === 1) return [...machine.phases.values()].map((p) => ({ label: p.name, kind: 'phase', detail: `phase · ${new Set(p.steps.map((s) => s.step)).size} steps`, documentation: p.description }));
        if (tokens.length === 2) return [{ label: 'at', kind: 'keyword', documentation: 'the step number where the phase starts', insertText: 'at ' }];
        return [];
      }
      const colon = tokens.findIndex((t) => t.kind === T.Colon);
      const isStep = tokens[0].kind === T.Number;
      if (isStep && colon < 0) {
        if (tokens.length === 1) return [{ label: 'if', kind: 'keyword', documentation: keywordTexts.if, insertText: 'if ' }, { label: 'else', kind: 'keyword', documentation: keywordTexts.else, insertText: 'else: ' }];
        if (last.text === 'if' || last.kind === T.Amp || last.kind === T.Bang) return inputItems(machine, {});
        return [];
      }
      if (!isStep && !continuesStep(analysis, lineStart)) return [];
      if (last.kind === T.Equals) {
        const target = tokens[tokens.length - 2];
        return target ? fieldValueItems(machine, target.text) : [];
      }
      if (last.kind === T.Colon || last.kind === T.Comma) return signalItems(machine, true);
      return [];
    }
  }
  return [];
}
