// The server's settings: `phasewright.severity` (diagnostic code -> error | warning | info |
// off), `phasewright.maxFileSizeKB` and `phasewright.proofs.enabled` (prove each version without
// errors in the background; on by default). Read through the same severity-table reader as the
// CLI's --config file; entries that cannot be used are skipped and reported in the log rather
// than rejecting the whole table, so a typo in one code does not switch all settings off.
import type { SeverityConfig } from '../core/analysis';
import { readSeverityTable } from '../core/checks/severitySettings';

export interface ServerSettings {
  severities: SeverityConfig;
  /** Files larger than this many kilobytes (UTF-8) are not analysed. */
  maxFileSizeKB: number;
  /** Prove each document version without errors in the background (lsp/proofs.ts). */
  proofs: boolean;
}

export const defaultMaxFileSizeKB = 5120;

export function defaultSettings(): ServerSettings {
  return { severities: {}, maxFileSizeKB: defaultMaxFileSizeKB, proofs: true };
}

/** Reads the `phasewright` settings section as a client sends it; returns the problems found too. */
export function readSettings(section: unknown): { settings: ServerSettings; problems: string[] } {
  const settings = defaultSettings();
  const problems: string[] = [];
  if (section === undefined || section === null) return { settings, problems };
  if (typeof section !== 'object' || Array.isArray(section)) return { settings, problems: ['the "phasewright" settings must be an object'] };
  const values = section as Record<string, unknown>;
  const severity = readSeverityTable(values.severity);
  settings.severities = severity.severities;
  problems.push(...severity.problems.map((p) => (p.startsWith('"severities"') ? `phasewright.severity${p.slice('"severities"'.length)}` : `phasewright.severity: ${p}`)));
  const size = values.maxFileSizeKB;
  if (size !== undefined && size !== null) {
    if (typeof size === 'number' && Number.isFinite(size) && size > 0) settings.maxFileSizeKB = size;
    else problems.push(`phasewright.maxFileSizeKB must be a positive number of kilobytes, not ${JSON.stringify(size)}; using ${defaultMaxFileSizeKB}`);
  }
  // VS Code hands dotted settings over as nested objects (`proofs: { enabled }`); other clients may send the dotted key.
  const proofs = values.proofs as Record<string, unknown> | undefined;
  const enabled = proofs && typeof proofs === 'object' ? proofs.enabled : values['proofs.enabled'];
  if (enabled !== undefined && enabled !== null) {
    if (typeof enabled === 'boolean') settings.proofs = enabled;
    else problems.push(`phasewright.proofs.enabled must be true or false, not ${JSON.stringify(enabled)}; proofs stay on`);
  }
  return { settings, problems };
}
