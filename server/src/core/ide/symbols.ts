// The outline of a file, by section (machine, buses, parts, strobes, fields, stores, maps,
// phases, classes), classes and phases with their step lines as children; and the flat list
// of declared names workspace symbol search filters. Built from the syntax tree, so a
// declaration appears even while it has errors. It says nothing about meaning (no resolved
// names, no checks).
import type { Analysis } from '../analysis';
import type * as A from '../syntax/ast';
import type { Span } from '../text/span';
import { contentSpan } from './lookup';

export type OutlineKind = 'section' | 'machine' | 'bus' | 'part' | 'strobe' | 'field' | 'value' | 'store' | 'word' | 'address' | 'map' | 'phase' | 'class' | 'step' | 'use' | 'kind' | 'port';

export interface OutlineSymbol {
  name: string;
  detail?: string;
  kind: OutlineKind;
  /** The whole declaration or line. */
  span: Span;
  /** The name (or the keyword where there is no name). */
  selection: Span;
  children: OutlineSymbol[];
}

const sectionOrder: { title: string; kinds: A.Decl['kind'][] }[] = [
  { title: 'kinds', kinds: ['kind'] },
  { title: 'buses', kinds: ['bus'] },
  { title: 'parts', kinds: ['part'] },
  { title: 'strobes', kinds: ['strobe', 'connect'] },
  { title: 'fields', kinds: ['field'] },
  { title: 'stores', kinds: ['store', 'word', 'address'] },
  { title: 'maps', kinds: ['map'] },
  { title: 'phases', kinds: ['phase'] },
  { title: 'classes', kinds: ['class'] },
];

function cover(spans: Span[]): Span {
  return { start: Math.min(...spans.map((s) => s.start)), end: Math.max(...spans.map((s) => s.end)) };
}

function text(analysis: Analysis, span: Span): string {
  return analysis.text.slice(span.start, span.end);
}

function shorten(value: string, max = 60): string {
  const flat = value.replace(/\s+/g, ' ').trim();
  return flat.length > max ? flat.slice(0, max - 1) + '…' : flat;
}

function bodyItems(analysis: Analysis, body: A.BodyItem[]): OutlineSymbol[] {
  return body.map((item) => {
    if (item.kind === 'use') {
      return { name: `use ${item.phase?.text ?? ''}`.trim(), kind: 'use', span: item.span, selection: item.keyword, children: [] };
    }
    const guard = item.guard ? ` ${text(analysis, item.guard.span)}` : '';
    return {
      name: `${item.number.text}${guard}`,
      detail: shorten(item.actions.map((a) => text(analysis, a.span)).join(', ')),
      kind: 'step',
      span: item.span,
      selection: item.number.span,
      children: [],
    };
  });
}

function declSymbol(analysis: Analysis, decl: A.Decl): OutlineSymbol | undefined {
  const named = (name: A.Name | undefined, kind: OutlineKind, detail?: string, children: OutlineSymbol[] = []): OutlineSymbol => ({
    name: name?.text ?? `(unnamed ${kind})`,
    detail,
    kind,
    span,
    selection: name?.span ?? decl.keyword,
    children,
  });
  const span = contentSpan(analysis, decl.span);
  switch (decl.kind) {
    case 'machine':
      return { name: decl.title?.value || 'machine', detail: decl.isa?.text, kind: 'machine', span, selection: decl.title?.span ?? decl.keyword, children: [] };
    case 'bus':
      return named(decl.name, 'bus', [decl.width?.text && `${decl.width.text} bits`, decl.keeper && 'keeper'].filter(Boolean).join(', ') || undefined);
    case 'part':
      return named(decl.name, 'part', decl.partKind?.text);
    case 'strobe':
      return named(decl.name, 'strobe', shorten(text(analysis, { start: decl.strobeKind?.span.start ?? decl.keyword.end, end: (decl.target ?? decl.source ?? decl.strobeKind)?.span.end ?? decl.keyword.end })));
    case 'field':
      return named(
        decl.name,
        'field',
        decl.width ? `${decl.width.text} bits` : undefined,
        decl.values.map((v) => ({ name: v.name.text, detail: v.code?.text, kind: 'value', span: v.span, selection: v.name.span, children: [] })),
      );
    case 'store':
      return named(decl.name, 'store');
    case 'word':
      return { name: 'word', detail: shorten(text(analysis, { start: decl.keyword.end, end: (decl.options[decl.options.length - 1] ?? decl.chips ?? decl.width ?? { span: decl.keyword }).span.end })), kind: 'word', span, selection: decl.keyword, children: [] };
    case 'address':
      return { name: 'address', detail: decl.width ? `${decl.width.text} lines` : undefined, kind: 'address', span, selection: decl.keyword, children: [] };
    case 'map':
      return named(decl.name, 'map', decl.output ? `-> ${decl.output.name.text}` : undefined);
    case 'phase':
      return named(decl.name, 'phase', decl.description?.value, bodyItems(analysis, decl.body));
    case 'connect':
      return { name: `connect ${decl.source?.name.text ?? ''}`.trim(), detail: decl.target ? `-> ${text(analysis, decl.target.span)}` : undefined, kind: 'strobe', span, selection: decl.source?.span ?? decl.keyword, children: [] };
    case 'kind':
      return named(
        decl.name,
        'kind',
        decl.description?.value,
        decl.items.map((item) => ({ name: `${item.item} ${item.name?.text ?? ''}`.trim(), detail: shorten(text(analysis, item.span)), kind: 'port', span: item.span, selection: item.name?.span ?? item.keyword, children: [] })),
      );
    case 'class': {
      const opcode = decl.options.find((o) => o.key.text === 'opcode')?.value?.text;
      return named(decl.name, 'class', opcode ? `opcode=${opcode}` : undefined, bodyItems(analysis, decl.body));
    }
  }
}

export function documentSymbols(analysis: Analysis): OutlineSymbol[] {
  const decls = analysis.parse.tree.decls;
  const result: OutlineSymbol[] = [];
  for (const decl of decls) {
    if (decl.kind === 'machine') result.push(declSymbol(analysis, decl)!);
  }
  for (const section of sectionOrder) {
    const members: OutlineSymbol[] = [];
    let store: OutlineSymbol | undefined;
    for (const decl of decls) {
      if (!section.kinds.includes(decl.kind)) continue;
      const symbol = declSymbol(analysis, decl);
      if (!symbol) continue;
      // Word and address layouts sit under the store they follow.
      if (decl.kind === 'store') {
        store = symbol;
        members.push(symbol);
      } else if ((decl.kind === 'word' || decl.kind === 'address') && store) {
        store.children.push(symbol);
        store.span = cover([store.span, symbol.span]);
      } else {
        members.push(symbol);
      }
    }
    if (members.length === 0) continue;
    const span = cover(members.map((m) => m.span));
    result.push({ name: section.title, kind: 'section', span, selection: members[0].selection, children: members });
  }
  return result;
}

export interface FlatSymbol {
  name: string;
  kind: OutlineKind;
  span: Span;
  container?: string;
}

/** Every declared name of the file, for workspace symbol search. */
export function flatSymbols(analysis: Analysis): FlatSymbol[] {
  const out: FlatSymbol[] = [];
  const walk = (symbols: OutlineSymbol[], container?: string) => {
    for (const s of symbols) {
      if (s.kind === 'section') walk(s.children);
      else {
        if (s.kind !== 'step' && s.kind !== 'use') out.push({ name: s.name, kind: s.kind, span: s.selection, container });
        if (s.kind === 'field' || s.kind === 'store') walk(s.children, s.name);
      }
    }
  };
  walk(documentSymbols(analysis));
  return out;
}

/** Case-insensitive subsequence match, as editors filter symbol names. */
export function matchesQuery(name: string, query: string): boolean {
  if (!query) return true;
  const lower = name.toLowerCase();
  let at = 0;
  for (const ch of query.toLowerCase()) {
    at = lower.indexOf(ch, at);
    if (at < 0) return false;
    at++;
  }
  return true;
}
