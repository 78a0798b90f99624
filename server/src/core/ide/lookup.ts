// Finds what stands at an offset: every declared name and every use of one, sorted by
// position, built once per analysis and kept beside it. Hover, go to definition, references,
// rename and semantic tokens all start here. It resolves nothing itself: the model builder
// already recorded each use with the symbol it names.
import type { Analysis } from '../analysis';
import type { SymbolInfo } from '../model/types';
import type { Span } from '../text/span';
import { scan } from '../syntax/scanner';
import { T, type Token } from '../syntax/tokens';

/** A declaration or a use of a declared name, at `span` (the name's text only). */
export interface Occurrence {
  span: Span;
  symbol: SymbolInfo;
  declaration: boolean;
}

interface Index {
  sorted: Occurrence[];
  bySymbol: Map<string, Occurrence[]>;
}

const indexes = new WeakMap<Analysis, Index>();

/** A key naming a symbol uniquely across namespaces. */
export function symbolId(symbol: SymbolInfo): string {
  return `${symbol.kind}:${symbol.key}`;
}

function indexOf(analysis: Analysis): Index {
  let index = indexes.get(analysis);
  if (index) return index;
  const sorted: Occurrence[] = [];
  for (const symbol of analysis.machine.symbols) {
    // The implicit store has no text of its own.
    if (symbol.span.end > symbol.span.start) sorted.push({ span: symbol.span, symbol, declaration: true });
  }
  for (const ref of analysis.machine.references) sorted.push({ span: ref.span, symbol: ref.symbol, declaration: false });
  sorted.sort((a, b) => a.span.start - b.span.start || a.span.end - b.span.end);
  const bySymbol = new Map<string, Occurrence[]>();
  for (const occurrence of sorted) {
    const id = symbolId(occurrence.symbol);
    const list = bySymbol.get(id);
    if (list) list.push(occurrence);
    else bySymbol.set(id, [occurrence]);
  }
  index = { sorted, bySymbol };
  indexes.set(analysis, index);
  return index;
}

/** Every occurrence, sorted by start offset. */
export function allOccurrences(analysis: Analysis): readonly Occurrence[] {
  return indexOf(analysis).sorted;
}

/**
 * The occurrence under the cursor. A cursor just after a name still counts (editors place
 * it there after typing), but a name starting at the cursor wins over one ending there.
 */
export function occurrenceAt(analysis: Analysis, offset: number): Occurrence | undefined {
  const sorted = indexOf(analysis).sorted;
  // The last occurrence starting at or before the offset, then its neighbours.
  let lo = 0;
  let hi = sorted.length - 1;
  let found = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid].span.start <= offset) {
      found = mid;
      lo = mid + 1;
    } else {
      hi = mid - 1;
    }
  }
  let touching: Occurrence | undefined;
  for (let i = found; i >= 0 && i >= found - 2; i--) {
    const occurrence = sorted[i];
    if (offset < occurrence.span.end) return occurrence;
    if (offset === occurrence.span.end) touching ??= occurrence;
  }
  return touching;
}

/** The declaration and every use of a symbol, in file order. */
export function occurrencesOf(analysis: Analysis, symbol: SymbolInfo): readonly Occurrence[] {
  return indexOf(analysis).bySymbol.get(symbolId(symbol)) ?? [];
}

/**
 * The token under the cursor (trivia included); a cursor just after a name or number still
 * counts. Tokens never cross a line break, so only the cursor's line is scanned.
 */
export function tokenAt(analysis: Analysis, offset: number): Token | undefined {
  const { line } = analysis.lines.position(offset);
  const lineStart = analysis.lines.lineStarts[line];
  const tokens = scan(analysis.lines.lineText(line)).map((t) => ({ ...t, start: t.start + lineStart, end: t.end + lineStart }));
  let lo = 0;
  let hi = tokens.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (tokens[mid].start <= offset) lo = mid;
    else hi = mid - 1;
  }
  const token = tokens[lo];
  if (!token || token.kind === T.Eof) return undefined;
  if (offset < token.end) {
    // At the first character after a word, prefer the word just left of the cursor.
    const before = tokens[lo - 1];
    if (offset === token.start && before && before.end === offset && isWordToken(before) && !isWordToken(token)) return before;
    return token;
  }
  if (token.end === offset) return token;
  // The cursor sits at the end of the line, right after its last token.
  const last = tokens[lo - 1];
  return last && last.end === offset ? last : undefined;
}

function isWordToken(token: Token): boolean {
  return token.kind === T.Ident || token.kind === T.Number || token.kind === T.Pattern;
}

/**
 * A declaration's span without the line breaks, blank lines and comments the parser consumed
 * after its last token (the parser's spans run up to the next declaration).
 */
export function contentSpan(analysis: Analysis, span: Span): Span {
  const lines = analysis.lines;
  const first = lines.position(span.start).line;
  for (let line = lines.position(span.end).line; line >= first; line--) {
    const lineStart = lines.lineStarts[line];
    const text = analysis.text.slice(lineStart, Math.min(lines.lineEnd(line), span.end));
    const significant = scan(text, { trivia: false }).filter((t) => t.kind !== T.Newline && t.kind !== T.Eof);
    const last = significant[significant.length - 1];
    if (last && lineStart + last.end > span.start) return { start: span.start, end: lineStart + last.end };
  }
  return span;
}
