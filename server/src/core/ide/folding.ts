// Folding ranges: declarations with bodies (word, address, map, phase, class, a field whose
// braces span lines), step lines continued over several lines, and blocks of two or more
// comment lines. Spans only; the adapter turns them into line ranges.
import type { Analysis } from '../analysis';
import { scan } from '../syntax/scanner';
import { T } from '../syntax/tokens';
import type { Span } from '../text/span';
import { contentSpan } from './lookup';

export interface FoldingSpan {
  span: Span;
  kind: 'region' | 'comment';
}

export function foldingRanges(analysis: Analysis): FoldingSpan[] {
  const lines = analysis.lines;
  const spansLines = (span: Span) => lines.position(span.end).line > lines.position(span.start).line;
  const result: FoldingSpan[] = [];
  for (const decl of analysis.parse.tree.decls) {
    const span = contentSpan(analysis, decl.span);
    if (spansLines(span)) result.push({ span, kind: 'region' });
    if (decl.kind === 'class' || decl.kind === 'phase') {
      for (const item of decl.body) if (spansLines(item.span)) result.push({ span: item.span, kind: 'region' });
    }
  }
  // Comment blocks: comments that are alone on consecutive lines.
  let blockStart: Span | undefined;
  let blockEnd: Span | undefined;
  let previousLine = -2;
  let lineHasCode = false;
  const flush = () => {
    if (blockStart && blockEnd && lines.position(blockEnd.start).line > lines.position(blockStart.start).line) result.push({ span: { start: blockStart.start, end: blockEnd.end }, kind: 'comment' });
    blockStart = blockEnd = undefined;
  };
  for (const token of scan(analysis.text)) {
    if (token.kind === T.Newline) {
      lineHasCode = false;
      continue;
    }
    if (token.kind === T.Whitespace) continue;
    if (token.kind !== T.Comment || lineHasCode) {
      lineHasCode = true;
      if (token.kind !== T.Comment) flush();
      continue;
    }
    const line = lines.position(token.start).line;
    if (line !== previousLine + 1) flush();
    blockStart ??= token;
    blockEnd = token;
    previousLine = line;
  }
  flush();
  return result.sort((a, b) => a.span.start - b.span.start);
}
