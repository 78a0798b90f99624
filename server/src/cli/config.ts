// Reads a severity configuration file for `check --config`: JSON, either
// `{ "severities": { "code": "error|warning|info|off" } }` or the VS Code settings form
// `{ "phasewright.severity": { ... } }`, so one file serves the editor and the CLI.
import { readFileSync } from 'node:fs';
import type { SeverityConfig } from '../core/analysis';
import { codeInfo } from '../core/checks/catalogue';
import { describeFsError } from './readSource';

export type ConfigResult = { ok: true; severities: SeverityConfig | undefined } | { ok: false; reason: string };

export function loadSeverityConfig(path: string): ConfigResult {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    return { ok: false, reason: describeFsError(path, err) };
  }
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (err) {
    return { ok: false, reason: `${path} is not valid JSON: ${(err as Error).message}` };
  }
  return parseSeverityConfig(data, path);
}

export function parseSeverityConfig(data: unknown, source: string): ConfigResult {
  const obj = (data ?? {}) as Record<string, unknown>;
  const table = (obj.severities ?? obj['phasewright.severity'] ?? undefined) as Record<string, unknown> | undefined;
  if (table === undefined) return { ok: false, reason: `${source} has no "severities" (or "phasewright.severity") object` };
  if (typeof table !== 'object' || table === null || Array.isArray(table)) return { ok: false, reason: `${source}: "severities" must be an object of code: level` };
  const severities: SeverityConfig = {};
  for (const [code, level] of Object.entries(table)) {
    if (!codeInfo(code)) return { ok: false, reason: `${source}: unknown diagnostic code '${code}' (run 'phasewright explain' for the list)` };
    if (level !== 'error' && level !== 'warning' && level !== 'info' && level !== 'off') {
      return { ok: false, reason: `${source}: '${code}' must be "error", "warning", "info" or "off", not ${JSON.stringify(level)}` };
    }
    severities[code] = level;
  }
  return { ok: true, severities };
}
