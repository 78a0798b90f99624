// What a table's analysis reports, in the shape the check tests compare: for each diagnostic of
// a code, the text of its range, of the line it stands on and of its related locations.
import { expect } from 'vitest';
import { analyse } from '../../server/src/core/analysis';

/** Replaces `from` (which must occur exactly once) by `to`. */
export function edit(text: string, from: string, to: string): string {
  expect(text.split(from).length - 1, `"${from}" occurs once`).toBe(1);
  return text.replace(from, to);
}

/** The diagnostics of `code` with the text of their range, their line, their message and their related ranges. */
export function found(text: string, code: string) {
  const a = analyse(text);
  return a.diagnostics
    .filter((d) => d.code === code)
    .map((d) => ({ range: a.text.slice(d.span.start, d.span.end), line: a.text.split('\n')[a.lines.position(d.span.start).line], message: d.message, related: d.related?.map((r) => a.text.slice(r.span.start, r.span.end)) }));
}

/** Every code the analysis reports, in order. */
export const codes = (text: string) => analyse(text).diagnostics.map((d) => d.code);
