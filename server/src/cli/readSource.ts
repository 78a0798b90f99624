// Reads a control-table file and the small JSON settings files for the CLI (and the language
// server), through the common reader (inputFile.ts: regular files only, size-limited). A
// table is refused with a one-line reason when it cannot be one: a binary file (NUL bytes or
// bytes that are not UTF-8). Never throws; the caller prints the reason and exits 2.
import { describeFsError, inputLimits, readInputFile } from './inputFile';

export const maxSourceBytes = inputLimits.table.maxBytes;

export type SourceResult = { ok: true; text: string } | { ok: false; reason: string };

export function readSource(path: string, limitBytes = maxSourceBytes, shown: string = path): SourceResult {
  const read = readInputFile(path, { ...inputLimits.table, maxBytes: limitBytes }, shown);
  if (!read.ok) return read;
  return tableText(read.bytes, shown);
}

/** Table text from a file's bytes, refusing what looks binary. */
export function tableText(bytes: Uint8Array, shown: string): SourceResult {
  if (bytes.includes(0)) return { ok: false, reason: `${shown} contains NUL bytes: it looks like a binary file, not a control table` };
  try {
    return { ok: true, text: new TextDecoder('utf-8', { fatal: true }).decode(bytes) };
  } catch {
    return { ok: false, reason: `${shown} is not valid UTF-8 text: it looks like a binary file, not a control table` };
  }
}

export { describeFsError };

/** Reads and parses a small JSON settings file (severities, pin maps), with one-line reasons. */
export function readJsonFile(path: string, shown: string = path): { ok: true; data: unknown } | { ok: false; reason: string } {
  const read = readInputFile(path, inputLimits.settings, shown);
  if (!read.ok) return read;
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(read.bytes);
  } catch {
    return { ok: false, reason: `${shown} is not valid UTF-8 text, so it cannot be JSON` };
  }
  try {
    return { ok: true, data: JSON.parse(text) };
  } catch (err) {
    return { ok: false, reason: `${shown} is not valid JSON: ${(err as Error).message}` };
  }
}
