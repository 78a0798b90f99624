// Conversions between the core's offsets and the protocol's line/character positions. Both
// count UTF-16 code units, and the core's line index ends lines at LF, CRLF or a lone CR, as
// the protocol does, so a position means the same character on both sides.
import type { Position, Range } from 'vscode-languageserver';
import type { LineIndex } from '../core/text/lineIndex';
import type { Span } from '../core/text/span';

export function toPosition(lines: LineIndex, offset: number): Position {
  const { line, col } = lines.position(offset);
  return { line, character: col };
}

export function toRange(lines: LineIndex, span: Span): Range {
  return { start: toPosition(lines, span.start), end: toPosition(lines, span.end) };
}

export function toOffset(lines: LineIndex, position: Position): number {
  return lines.offset({ line: position.line, col: position.character });
}

export function toSpan(lines: LineIndex, range: Range): Span {
  return { start: toOffset(lines, range.start), end: toOffset(lines, range.end) };
}
