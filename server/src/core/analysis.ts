// The whole analysis of one file: parse, build the model, run every check, apply the user's
// severity settings, sort and cap the diagnostics. This is what the CLI, the language server
// and the encoder all start from. Pure and synchronous; re-analysing a whole file is fast
// enough for tables of this size (see bench/).
import { CheckContext } from './checks/context';
import { checks } from './checks/registry';
import { buildModel } from './model/build';
import type { Machine } from './model/types';
import { type ParseResult, parse } from './syntax/parser';
import type { Diagnostic, Severity } from './text/diagnostic';
import { LineIndex } from './text/lineIndex';

/** Per-code severity overrides from settings; `off` drops the code. */
export type SeverityConfig = Record<string, Severity | 'off'>;

export interface AnalyseOptions {
  severities?: SeverityConfig;
  /** At most this many diagnostics are kept (errors first); a broken file cannot flood the editor. */
  maxDiagnostics?: number;
}

export interface Analysis {
  text: string;
  parse: ParseResult;
  machine: Machine;
  diagnostics: Diagnostic[];
  lines: LineIndex;
  /** Diagnostics dropped by the cap. */
  truncated: number;
  /** How many diagnostics of each severity there are, counting those the cap dropped. */
  counts: Record<Severity, number>;
}

const severityRank: Record<Severity, number> = { error: 0, warning: 1, info: 2 };

export function analyse(text: string, options: AnalyseOptions = {}): Analysis {
  const parsed = parse(text);
  const built = buildModel(parsed.tree);
  const ctx = new CheckContext(built.machine, text);
  for (const check of checks) {
    try {
      check.run(ctx);
    } catch (err) {
      // A check that throws is a bug; keep the others' results and say which one failed.
      ctx.diagnostics.push({
        code: check.codes[0],
        severity: 'info',
        span: { start: 0, end: 0 },
        message: `internal error in the ${check.codes.join('/')} check (please report it): ${(err as Error).message}`,
      });
    }
  }
  let diagnostics = dedupe([...parsed.errors, ...built.diagnostics, ...ctx.diagnostics]);
  diagnostics = applySeverities(diagnostics, options.severities);
  diagnostics.sort((a, b) => a.span.start - b.span.start || severityRank[a.severity] - severityRank[b.severity]);
  const counts: Record<Severity, number> = { error: 0, warning: 0, info: 0 };
  for (const d of diagnostics) counts[d.severity]++;
  const max = options.maxDiagnostics ?? 1000;
  let truncated = 0;
  if (diagnostics.length > max) {
    const kept = [...diagnostics].sort((a, b) => severityRank[a.severity] - severityRank[b.severity]).slice(0, max);
    const keep = new Set(kept);
    truncated = diagnostics.length - max;
    diagnostics = diagnostics.filter((d) => keep.has(d));
  }
  return { text, parse: parsed, machine: built.machine, diagnostics, lines: new LineIndex(text), truncated, counts };
}

function dedupe(list: Diagnostic[]): Diagnostic[] {
  const seen = new Set<string>();
  return list.filter((d) => {
    const key = `${d.code}:${d.span.start}:${d.span.end}:${d.message}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
}

export function applySeverities(list: Diagnostic[], config: SeverityConfig | undefined): Diagnostic[] {
  if (!config) return list;
  const out: Diagnostic[] = [];
  for (const d of list) {
    const setting = config[d.code];
    if (setting === 'off') continue;
    out.push(setting ? { ...d, severity: setting } : d);
  }
  return out;
}

export function errorCount(diagnostics: Diagnostic[]): number {
  return diagnostics.filter((d) => d.severity === 'error').length;
}
