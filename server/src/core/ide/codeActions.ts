// Quick fixes: the edits the checks attached to their diagnostics (`Diagnostic.fixes`), matched
// to the diagnostics an editor asks about. A request names diagnostics as the editor holds them
// (code, span, message); each is matched to the analysis's own by all three, so a fix is never
// offered for a different problem that merely sits at the same place. It invents no fixes:
// the checks that find a problem are the ones that know how to mend it.
import type { Analysis } from '../analysis';
import type { Diagnostic, TextEdit } from '../text/diagnostic';
import type { Span } from '../text/span';

export interface QuickFix {
  title: string;
  edits: TextEdit[];
  preferred: boolean;
  /** The analysis diagnostic the fix belongs to. */
  diagnostic: Diagnostic;
  /** Index in the request's list of the diagnostic it answers, when the request named it. */
  requestIndex?: number;
}

export interface RequestedDiagnostic {
  code?: string;
  span: Span;
  message: string;
}

function overlaps(a: Span, b: Span): boolean {
  return a.start <= b.end && b.start <= a.end;
}

export function quickFixes(analysis: Analysis, range: Span, requested: readonly RequestedDiagnostic[]): QuickFix[] {
  const fixes: QuickFix[] = [];
  const add = (diagnostic: Diagnostic, requestIndex?: number) => {
    for (const fix of diagnostic.fixes ?? []) fixes.push({ title: fix.title, edits: fix.edits, preferred: !!fix.preferred, diagnostic, requestIndex });
  };
  if (requested.length > 0) {
    requested.forEach((wanted, requestIndex) => {
      const match = analysis.diagnostics.find(
        (d) => d.code === wanted.code && d.span.start === wanted.span.start && d.span.end === wanted.span.end && d.message === wanted.message,
      );
      if (match) add(match, requestIndex);
    });
    return fixes;
  }
  for (const diagnostic of analysis.diagnostics) if (overlaps(diagnostic.span, range)) add(diagnostic);
  return fixes;
}

/** Applies edits to a text (for tests and previews); edits must not overlap. */
export function applyEdits(text: string, edits: readonly TextEdit[]): string {
  const sorted = [...edits].sort((a, b) => b.span.start - a.span.start || b.span.end - a.span.end);
  let out = text;
  for (const edit of sorted) out = out.slice(0, edit.span.start) + edit.newText + out.slice(edit.span.end);
  return out;
}
