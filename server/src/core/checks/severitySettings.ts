// Reads the per-code severity table users write in settings (`phasewright.severity` in the
// editor, the `--config` file of the CLI): `{ "code": "error" | "warning" | "info" | "off" }`.
// Shared so the editor and the command line accept exactly the same tables. It reports every
// entry it cannot use; the caller decides whether one bad entry rejects the table (the CLI) or
// is skipped with a message (the language server).
import type { SeverityConfig } from '../analysis';
import { codeInfo } from './catalogue';

export interface SeverityTableResult {
  /** The entries that are valid. */
  severities: SeverityConfig;
  /** One sentence per entry (or table) that was not, without the source's name. */
  problems: string[];
}

export function readSeverityTable(table: unknown): SeverityTableResult {
  const severities: SeverityConfig = {};
  if (table === undefined || table === null) return { severities, problems: [] };
  if (typeof table !== 'object' || Array.isArray(table)) return { severities, problems: ['"severities" must be an object of code: level'] };
  const problems: string[] = [];
  for (const [code, level] of Object.entries(table as Record<string, unknown>)) {
    if (!codeInfo(code)) {
      problems.push(`unknown diagnostic code '${code}' (run 'phasewright explain' for the list)`);
      continue;
    }
    if (level !== 'error' && level !== 'warning' && level !== 'info' && level !== 'off') {
      problems.push(`'${code}' must be "error", "warning", "info" or "off", not ${JSON.stringify(level)}`);
      continue;
    }
    severities[code] = level;
  }
  return { severities, problems };
}
