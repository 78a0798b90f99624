// Reads a control-table file for the CLI, refusing with a one-line reason what cannot be a
// table: a missing path, a directory, a file over the size limit, a binary file (NUL bytes or
// bytes that are not UTF-8). Never throws; the caller prints the reason and exits 2.
import { readFileSync, statSync } from 'node:fs';

export const maxSourceBytes = 5 * 1024 * 1024;

export type SourceResult = { ok: true; text: string } | { ok: false; reason: string };

export function readSource(path: string, limitBytes = maxSourceBytes): SourceResult {
  let size: number;
  try {
    const stat = statSync(path);
    if (stat.isDirectory()) return { ok: false, reason: `${path} is a directory; give a .pwt file` };
    if (!stat.isFile()) return { ok: false, reason: `${path} is not a regular file` };
    size = stat.size;
  } catch (err) {
    return { ok: false, reason: describeFsError(path, err) };
  }
  if (size > limitBytes) {
    return { ok: false, reason: `${path} is ${(size / 1024 / 1024).toFixed(1)} MB; control tables larger than ${limitBytes / 1024 / 1024} MB are refused (is this the right file?)` };
  }
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (err) {
    return { ok: false, reason: describeFsError(path, err) };
  }
  if (bytes.includes(0)) return { ok: false, reason: `${path} contains NUL bytes: it looks like a binary file, not a control table` };
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return { ok: false, reason: `${path} is not valid UTF-8 text: it looks like a binary file, not a control table` };
  }
  return { ok: true, text };
}

export function describeFsError(path: string, err: unknown): string {
  const code = (err as NodeJS.ErrnoException)?.code;
  switch (code) {
    case 'ENOENT':
      return `${path}: no such file`;
    case 'EACCES':
    case 'EPERM':
      return `${path}: permission denied`;
    case 'EISDIR':
      return `${path} is a directory; give a .pwt file`;
    case 'ENOTDIR':
      return `${path}: a part of the path is not a directory`;
    default:
      return `${path}: ${(err as Error)?.message ?? String(err)}`;
  }
}

/** Reads and parses a small JSON settings file (severities, pin maps), with one-line reasons. */
export function readJsonFile(path: string): { ok: true; data: unknown } | { ok: false; reason: string } {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    return { ok: false, reason: describeFsError(path, err) };
  }
  try {
    return { ok: true, data: JSON.parse(text) };
  } catch (err) {
    return { ok: false, reason: `${path} is not valid JSON: ${(err as Error).message}` };
  }
}
