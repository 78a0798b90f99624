// Fixtures with expected diagnostics written in the notation itself: a comment line under a
// source line marks a range with carets and names the code (and optionally part of the
// message), so every fixture stays a valid table:
//
//     0: a.oe, b.oe, b.ck, done
//   #          ^^^^ bus-contention: keep one driver
//
// The caret column is the column in the line above. `expectDiagnostics` analyses the text and
// compares the exact ranges and codes (ignoring codes the test does not list in `only`).
import { expect } from 'vitest';
import { analyse, type AnalyseOptions } from '../../server/src/core/analysis';

export interface Expected {
  code: string;
  line: number;
  startCol: number;
  endCol: number;
  message?: string;
}

const annotation = /^(\s*)#(\s*)(\^+)\s+([a-z0-9-]+)(?::\s*(.*))?$/;

/** Removes common indentation so fixtures can be indented in the test source. */
export function dedent(text: string): string {
  const lines = text.replace(/^\n/, '').replace(/\n\s*$/, '\n').split('\n');
  const indent = Math.min(...lines.filter((l) => l.trim()).map((l) => l.match(/^ */)![0].length));
  return lines.map((l) => l.slice(indent)).join('\n');
}

export function parseAnnotations(text: string): Expected[] {
  const lines = text.split('\n');
  const expected: Expected[] = [];
  let target = -1;
  lines.forEach((line, i) => {
    const m = annotation.exec(line);
    if (!m || target < 0) {
      if (!m) target = i;
      return;
    }
    const startCol = line.indexOf('^');
    expected.push({ code: m[4], line: target, startCol, endCol: startCol + m[3].length, message: m[5] });
  });
  return expected;
}

/**
 * Analyses `text` and checks that the diagnostics with the listed codes (all codes when
 * `only` is empty) are exactly the annotated ones.
 */
export function expectDiagnostics(text: string, only: string[] = [], options: AnalyseOptions = {}) {
  const analysis = analyse(text, options);
  const expected = parseAnnotations(text);
  const relevant = analysis.diagnostics.filter((d) => only.length === 0 || only.includes(d.code));
  const actual = relevant.map((d) => {
    const s = analysis.lines.position(d.span.start);
    const e = analysis.lines.position(d.span.end);
    return { code: d.code, line: s.line, startCol: s.col, endCol: e.line === s.line ? e.col : s.col + (d.span.end - d.span.start), message: d.message };
  });
  const render = (list: { code: string; line: number; startCol: number; endCol: number }[]) =>
    list.map((d) => `${d.line + 1}:${d.startCol + 1}-${d.endCol + 1} ${d.code}`).sort();
  expect(render(actual)).toEqual(render(expected));
  for (const e of expected) {
    if (!e.message) continue;
    const match = actual.find((a) => a.code === e.code && a.line === e.line && a.startCol === e.startCol);
    expect(match?.message).toContain(e.message);
  }
  return analysis;
}
