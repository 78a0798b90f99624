// Source ranges as UTF-16 offsets (the way JavaScript strings index text). Only the adapters
// turn offsets into line/column positions; the core never does.

/** A half-open range [start, end) of UTF-16 code units in the source text. */
export interface Span {
  start: number;
  end: number;
}

export function span(start: number, end: number): Span {
  return { start, end };
}

/** The smallest span covering both arguments. */
export function cover(a: Span, b: Span): Span {
  return { start: Math.min(a.start, b.start), end: Math.max(a.end, b.end) };
}

export function contains(outer: Span, offset: number): boolean {
  return offset >= outer.start && offset <= outer.end;
}

export const emptySpan: Span = { start: 0, end: 0 };
