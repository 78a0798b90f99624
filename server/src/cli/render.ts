// Renders diagnostics for people (`file:line:col: error: message [code]`, as compilers do so
// editors and problem matchers can read it) and as JSON data for tools.
import type { Analysis } from '../core/analysis';
import type { Diagnostic } from '../core/text/diagnostic';

const words: Record<Diagnostic['severity'], string> = { error: 'error', warning: 'warning', info: 'note' };

export function renderDiagnostic(file: string, analysis: Analysis, d: Diagnostic): string {
  const pos = analysis.lines.position(d.span.start);
  let out = `${file}:${pos.line + 1}:${pos.col + 1}: ${words[d.severity]}: ${d.message} [${d.code}]`;
  for (const r of d.related ?? []) {
    const rp = analysis.lines.position(r.span.start);
    out += `\n${file}:${rp.line + 1}:${rp.col + 1}: note: ${r.message}`;
  }
  return out;
}

export interface JsonDiagnostic {
  file: string;
  code: string;
  severity: Diagnostic['severity'];
  message: string;
  start: { line: number; column: number; offset: number };
  end: { line: number; column: number; offset: number };
  related: { message: string; line: number; column: number }[];
}

export function toJson(file: string, analysis: Analysis, d: Diagnostic): JsonDiagnostic {
  const s = analysis.lines.position(d.span.start);
  const e = analysis.lines.position(d.span.end);
  return {
    file,
    code: d.code,
    severity: d.severity,
    message: d.message,
    start: { line: s.line + 1, column: s.col + 1, offset: d.span.start },
    end: { line: e.line + 1, column: e.col + 1, offset: d.span.end },
    related: (d.related ?? []).map((r) => {
      const p = analysis.lines.position(r.span.start);
      return { message: r.message, line: p.line + 1, column: p.col + 1 };
    }),
  };
}
