// Reads a severity configuration file for `check --config`: JSON, either
// `{ "severities": { "code": "error|warning|info|off" } }` or the VS Code settings form
// `{ "phasewright.severity": { ... } }`, so one file serves the editor and the CLI.
import type { SeverityConfig } from '../core/analysis';
import { readSeverityTable } from '../core/checks/severitySettings';
import { readJsonFile } from './readSource';

export type ConfigResult = { ok: true; severities: SeverityConfig | undefined } | { ok: false; reason: string };

export function loadSeverityConfig(path: string): ConfigResult {
  const json = readJsonFile(path);
  return json.ok ? parseSeverityConfig(json.data, path) : json;
}

export function parseSeverityConfig(data: unknown, source: string): ConfigResult {
  const obj = (data ?? {}) as Record<string, unknown>;
  const table = (obj.severities ?? obj['phasewright.severity'] ?? undefined) as Record<string, unknown> | undefined;
  if (table === undefined) return { ok: false, reason: `${source} has no "severities" (or "phasewright.severity") object` };
  // The language server reads the same table through the same function (core/checks/severitySettings).
  const read = readSeverityTable(table);
  if (read.problems.length) return { ok: false, reason: `${source}: ${read.problems[0]}` };
  return { ok: true, severities: read.severities };
}
