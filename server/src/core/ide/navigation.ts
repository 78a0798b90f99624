// Go to definition, find references and rename, over the occurrences the model builder
// recorded. Rename checks the new name before producing any edit: it must be a valid name of
// the notation, not a word the notation reserves where the name would stand, and not already
// used by another declaration in the same namespace (buses, parts and flags share one; strobes
// and fields another; a field's values also must not clash with the maps that set it).
// It resolves nothing itself: every use was recorded by the model builder.
import type { Analysis } from '../analysis';
import { declarationKeywords } from '../syntax/ast';
import type { SymbolInfo, SymbolKind } from '../model/types';
import { controlOfField, kindOf } from '../model/partFacts';
import type { TextEdit } from '../text/diagnostic';
import type { Span } from '../text/span';
import { type Occurrence, occurrenceAt, occurrencesOf } from './lookup';

export interface Definition {
  /** The name where it is declared. */
  span: Span;
  /** The whole declaration. */
  declSpan: Span;
  symbol: SymbolInfo;
}

export function definition(analysis: Analysis, offset: number): Definition | undefined {
  const occurrence = occurrenceAt(analysis, offset);
  if (!occurrence || occurrence.symbol.span.end <= occurrence.symbol.span.start) return undefined;
  return { span: occurrence.symbol.span, declSpan: occurrence.symbol.declSpan, symbol: occurrence.symbol };
}

export function references(analysis: Analysis, offset: number, includeDeclaration: boolean): Span[] {
  const occurrence = occurrenceAt(analysis, offset);
  if (!occurrence) return [];
  return occurrencesOf(analysis, occurrence.symbol)
    .filter((o) => includeDeclaration || !o.declaration)
    .map((o) => o.span);
}

/** Kinds of names rename supports. Ports are not declared names and stores have no uses. */
const renameable = new Set<SymbolKind>(['bus', 'part', 'flag', 'strobe', 'field', 'value', 'map', 'phase', 'class', 'store']);

export type PrepareRenameResult = { span: Span; placeholder: string } | { error: string } | undefined;

export function prepareRename(analysis: Analysis, offset: number): PrepareRenameResult {
  const occurrence = occurrenceAt(analysis, offset);
  if (!occurrence) return undefined;
  if (!renameable.has(occurrence.symbol.kind)) return { error: `a ${occurrence.symbol.kind} cannot be renamed` };
  return { span: occurrence.span, placeholder: occurrence.symbol.name };
}

export type RenameResult = { edits: TextEdit[] } | { error: string };

const namePattern = /^[A-Za-z_][A-Za-z0-9_]*(?:[.\-][A-Za-z_][A-Za-z0-9_]*)*$/;
const simpleNamePattern = /^[A-Za-z_][A-Za-z0-9_]*$/;
/** Words that begin lines or guards, so a name spelled like one would be misread. */
const reserved = new Set<string>([...declarationKeywords, 'use', 'if', 'else', 'isa', 'active', 'keeper', 'at']);
/** Address-input names win over flags in guards, maps and address layouts. */
const inputNames = new Set(['step', 'opcode', 'funct3', 'f7b5', 'funct7', 'ir']);

export function rename(analysis: Analysis, offset: number, newName: string): RenameResult {
  const occurrence = occurrenceAt(analysis, offset);
  if (!occurrence) return { error: 'there is no declared name here to rename' };
  const symbol = occurrence.symbol;
  if (!renameable.has(symbol.kind)) return { error: `a ${symbol.kind} cannot be renamed` };
  const problem = checkNewName(analysis, symbol, newName);
  if (problem) return { error: problem };
  if (newName === symbol.name) return { edits: [] };
  return { edits: occurrencesOf(analysis, symbol).map((o: Occurrence) => ({ span: o.span, newText: newName })) };
}

/** Why `newName` cannot replace the name of `symbol`, or undefined when it can. */
export function checkNewName(analysis: Analysis, symbol: SymbolInfo, newName: string): string | undefined {
  if (!namePattern.test(newName)) {
    return `\`${newName}\` is not a valid name: use letters, digits and _, starting with a letter or _; dots and dashes may join parts when a letter follows (\`x.rs1.oe\`, \`OP-IMM\`)`;
  }
  if (reserved.has(newName)) return `\`${newName}\` is a word of the notation; choose another name`;
  // A part name is followed by `.port` in strobe wiring, so it must not hold a dot itself.
  if ((symbol.kind === 'part' || symbol.kind === 'bus' || symbol.kind === 'flag') && !simpleNamePattern.test(newName.replace(/-/g, '_'))) {
    return `a ${symbol.kind} name cannot contain a dot: \`${newName}\` would read as a part and a port`;
  }
  if (symbol.kind === 'flag' && inputNames.has(newName)) return `\`${newName}\` names an address input; a flag called that could never be tested`;
  if (newName === symbol.name) return undefined;
  const machine = analysis.machine;
  const clash = (kind: string) => `\`${newName}\` is already the name of a ${kind}; names must be unique among ${namespaceText(symbol.kind)}`;
  switch (symbol.kind) {
    case 'bus':
    case 'part':
    case 'flag': {
      const other = machine.symbols.find((s) => (s.kind === 'bus' || s.kind === 'part' || s.kind === 'flag' || s.kind === 'port') && s.name === newName);
      if (other) return clash(other.kind);
      break;
    }
    case 'strobe':
    case 'field': {
      const other = machine.symbols.find((s) => (s.kind === 'strobe' || s.kind === 'field') && s.name === newName);
      if (other) return clash(other.kind);
      break;
    }
    case 'value': {
      const fieldName = symbol.key.slice(0, symbol.key.indexOf('/'));
      if (machine.symbols.some((s) => s.kind === 'value' && s.key === `${fieldName}/${newName}`)) return clash(`value of \`${fieldName}\``);
      // `field=NAME` looks for a value first, then a map: the two must not share a name.
      const control = controlOfField(machine, fieldName);
      if (control && !control.control.values.includes(newName)) return `\`${newName}\` means nothing to control \`${control.control.name}\` of \`${control.part.name}\` (kind \`${kindOf(machine, control.part).name}\`) that \`${fieldName}\` drives; its values are ${control.control.values.join(', ')}`;
      const map = machine.maps.get(newName);
      if (map && map.output === fieldName) return `\`${newName}\` is already the name of a map that sets \`${fieldName}\`; \`${fieldName}=${newName}\` would become ambiguous`;
      break;
    }
    case 'map': {
      if (machine.symbols.some((s) => s.kind === 'map' && s.name === newName)) return clash('map');
      const output = machine.maps.get(symbol.name)?.output;
      const field = output ? machine.signals.get(output) : undefined;
      if (field?.type === 'field' && field.values.has(newName)) return `\`${newName}\` is already a value of \`${field.name}\`, the field this map sets; \`${field.name}=${newName}\` would become ambiguous`;
      break;
    }
    default: {
      if (machine.symbols.some((s) => s.kind === symbol.kind && s.name === newName)) return clash(symbol.kind);
    }
  }
  return undefined;
}

function namespaceText(kind: SymbolKind): string {
  switch (kind) {
    case 'bus':
    case 'part':
    case 'flag':
      return 'buses, parts and flags';
    case 'strobe':
    case 'field':
      return 'strobes and fields';
    case 'value':
      return 'the values of one field';
    case 'class':
      return 'classes';
    default:
      return `${kind}s`;
  }
}
