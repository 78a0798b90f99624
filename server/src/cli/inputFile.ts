// The one reader for every file Phasewright reads on a user's say-so: control tables,
// programs, severity and pin settings, manifests, files read back for checking. It opens the
// path once with O_NONBLOCK (so a FIFO with no writer cannot hang the open), asks the open
// descriptor what it is, and refuses anything but a regular file (a device such as /dev/zero,
// a FIFO, a socket, a directory) and anything over the caller's size limit, before reading a
// byte. Reading stops one byte past the limit, so a file that grows while it is read cannot
// exhaust memory either. Never throws: the refusal is one line, ready to print (the CLI exits
// 2 with it, the language server answers it).
//
// It does not interpret the bytes; readSource.ts turns them into table text, and the callers
// parse JSON, ELF and manifests themselves.
import { closeSync, constants, fstatSync, openSync, readSync, type Stats } from 'node:fs';
import { fsPath } from './fsPath';

export interface InputLimit {
  /** Largest accepted size in bytes. */
  maxBytes: number;
  /** What such files are called in the refusal, plural: "control tables", "programs". */
  what: string;
  /** What to give instead, in a refusal: "a .pwt file". */
  give: string;
}

/** The limits of the kinds of file the tool reads, in one place. */
export const inputLimits = {
  table: { maxBytes: 5 * 1024 * 1024, what: 'control tables', give: 'a .pwt file' },
  program: { maxBytes: 256 * 1024 * 1024, what: 'programs', give: 'an ELF file or a raw binary image' },
  settings: { maxBytes: 1024 * 1024, what: 'settings files', give: 'a JSON file' },
  manifest: { maxBytes: 16 * 1024 * 1024, what: 'manifests', give: 'a file' },
} as const satisfies Record<string, InputLimit>;

export type InputResult = { ok: true; bytes: Buffer } | { ok: false; reason: string };

/** The calls the reader makes; the output layer passes its own so tests can fail them. */
export interface ReaderCalls {
  openSync(path: string, flags: number): number;
  fstatSync(fd: number): Stats;
  readSync(fd: number, buffer: Uint8Array, offset: number, length: number, position: number | null): number;
  closeSync(fd: number): void;
}

const nodeCalls: ReaderCalls = {
  openSync: (path, flags) => openSync(fsPath(path), flags),
  fstatSync: (fd) => fstatSync(fd),
  readSync: (fd, buffer, offset, length, position) => readSync(fd, buffer, offset, length, position),
  closeSync: (fd) => closeSync(fd),
};

const openFlags = constants.O_RDONLY | (constants.O_NONBLOCK ?? 0) | (constants.O_NOCTTY ?? 0);
const chunkBytes = 1024 * 1024;

/**
 * Reads a whole regular file of at most `limit.maxBytes` bytes. `shown` is the name used in
 * messages (the path as the user wrote it); `path` is what is opened.
 */
export function readInputFile(path: string, limit: InputLimit, shown: string = path, calls: ReaderCalls = nodeCalls): InputResult {
  let fd: number;
  try {
    fd = calls.openSync(path, openFlags);
  } catch (err) {
    return { ok: false, reason: describeFsError(shown, err, limit.give) };
  }
  try {
    const stat = calls.fstatSync(fd);
    const refusal = refuseKind(stat, shown, limit.give) ?? refuseSize(stat.size, limit, shown);
    if (refusal) return { ok: false, reason: refusal };
    // Sized from the descriptor, but read until the end: the file may have grown since.
    const parts: Buffer[] = [];
    let total = 0;
    for (;;) {
      const piece = Buffer.allocUnsafe(Math.min(chunkBytes, limit.maxBytes + 1 - total));
      const n = calls.readSync(fd, piece, 0, piece.length, null);
      if (n === 0) break;
      parts.push(n === piece.length ? piece : piece.subarray(0, n));
      total += n;
      if (total > limit.maxBytes) return { ok: false, reason: refuseSize(total, limit, shown, true)! };
    }
    return { ok: true, bytes: parts.length === 1 ? parts[0] : Buffer.concat(parts, total) };
  } catch (err) {
    return { ok: false, reason: describeFsError(shown, err, limit.give) };
  } finally {
    try {
      calls.closeSync(fd);
    } catch {
      // Nothing was written through it; a failed close loses nothing.
    }
  }
}

/** The refusal for what is not a regular file, or undefined. */
export function refuseKind(stat: Stats, shown: string, give = 'a file'): string | undefined {
  if (stat.isFile()) return undefined;
  if (stat.isDirectory()) return `${shown} is a directory; give ${give}`;
  const kind = stat.isFIFO() ? 'a FIFO (named pipe)' : stat.isCharacterDevice() ? 'a character device' : stat.isBlockDevice() ? 'a block device' : stat.isSocket() ? 'a socket' : 'not a plain file';
  return `${shown} is ${kind}, not a regular file; give ${give}`;
}

function refuseSize(size: number, limit: InputLimit, shown: string, grew = false): string | undefined {
  if (size <= limit.maxBytes) return undefined;
  const megabytes = (size / 1024 / 1024).toFixed(1);
  return `${shown} is ${grew ? 'over ' : ''}${megabytes} MB; ${limit.what} larger than ${limit.maxBytes / 1024 / 1024} MB are refused (is this the right file?)`;
}

export function describeFsError(path: string, err: unknown, give = 'a file'): string {
  const code = (err as NodeJS.ErrnoException)?.code;
  switch (code) {
    case 'ENOENT':
      return `${path}: no such file`;
    case 'EACCES':
    case 'EPERM':
      return `${path}: permission denied`;
    case 'EISDIR':
      return `${path} is a directory; give ${give}`;
    case 'ENOTDIR':
      return `${path}: a part of the path is not a directory`;
    case 'ELOOP':
      return `${path}: too many symbolic links (a link loop?)`;
    case 'ENXIO':
      return `${path} is a socket or a device with nothing behind it, not a regular file; give ${give}`;
    case 'ENAMETOOLONG':
      return `${path}: the name is too long for the file system`;
    default:
      return `${path}: ${(err as Error)?.message ?? String(err)}`;
  }
}
