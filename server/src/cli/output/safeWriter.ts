// Writes output files into an output folder without ever writing outside it or leaving a
// half-written file behind: names are checked and resolved inside the folder (no `..`, no
// absolute names, no symbolic link that leads out, no target that is itself a link); bytes go
// to a temporary file with a short name of its own (never longer than a few characters, so a
// long final name cannot fail on the temporary one), are flushed to disk and read back, then
// renamed over the target (atomic on POSIX). Bytes may come as a whole or as a stream of
// chunks, so a file far larger than memory (the listing of a 24-line store) is written with
// memory for one chunk. Names that are not UTF-8 reach the file system exactly (fsPath.ts).
// It does not decide which files may be replaced, nor in which order a set of files is
// committed; outputSet.ts does that before and after calling here.
import { createHash, randomBytes } from 'node:crypto';
import * as nodeFs from 'node:fs';
import * as path from 'node:path';
import { fsPath, nameFromBytes } from '../fsPath';
import { refuseKind } from '../inputFile';

/** The file-system calls the writer uses, so tests can inject failures. */
export interface FileSystemOps {
  openSync(path: string, flags: string | number, mode?: number): number;
  writeSync(fd: number, buffer: Uint8Array, offset: number, length: number): number;
  readSync(fd: number, buffer: Uint8Array, offset: number, length: number, position: number | null): number;
  fstatSync(fd: number): nodeFs.Stats;
  fsyncSync(fd: number): void;
  closeSync(fd: number): void;
  renameSync(from: string, to: string): void;
  linkSync(existing: string, created: string): void;
  unlinkSync(path: string): void;
  lstatSync(path: string): nodeFs.Stats;
  realpathSync(path: string): string;
  mkdirSync(path: string, recursive?: boolean): void;
  readdirSync(path: string): string[];
  rmdirSync(path: string): void;
}

export const nodeFileSystem: FileSystemOps = {
  openSync: (file, flags, mode) => nodeFs.openSync(fsPath(file), flags, mode),
  writeSync: (fd, buffer, offset, length) => nodeFs.writeSync(fd, buffer, offset, length),
  readSync: (fd, buffer, offset, length, position) => nodeFs.readSync(fd, buffer, offset, length, position),
  fstatSync: (fd) => nodeFs.fstatSync(fd),
  fsyncSync: (fd) => nodeFs.fsyncSync(fd),
  closeSync: (fd) => nodeFs.closeSync(fd),
  renameSync: (from, to) => nodeFs.renameSync(fsPath(from), fsPath(to)),
  linkSync: (existing, created) => nodeFs.linkSync(fsPath(existing), fsPath(created)),
  unlinkSync: (file) => nodeFs.unlinkSync(fsPath(file)),
  lstatSync: (file) => nodeFs.lstatSync(fsPath(file)),
  // The native call, asked for bytes: the JavaScript one turns a Buffer path into a UTF-8
  // string on the way and loses a name that is not UTF-8.
  realpathSync: (file) => nameFromBytes(nodeFs.realpathSync.native(fsPath(file), { encoding: 'buffer' })),
  mkdirSync: (dir, recursive) => {
    nodeFs.mkdirSync(fsPath(dir), { recursive: recursive ?? false });
  },
  readdirSync: (dir) => nodeFs.readdirSync(fsPath(dir), { encoding: 'buffer' }).map((name) => nameFromBytes(name)),
  rmdirSync: (dir) => nodeFs.rmdirSync(fsPath(dir)),
};

/**
 * A failure to write one output file. The message reads "cannot write <path>: <reason>" with
 * the path as the user gave the folder, ready to print.
 */
export class OutputError extends Error {
  readonly displayPath: string;
  readonly reason: string;

  constructor(displayPath: string, reason: string, verb = 'write') {
    super(`cannot ${verb} ${displayPath}: ${reason}`);
    this.name = 'OutputError';
    this.displayPath = displayPath;
    this.reason = reason;
  }
}

export interface OutputFileContent {
  /** Path relative to the output folder, with '/' between folder names. */
  name: string;
  bytes: FileContent;
}

export interface WrittenFileReport {
  name: string;
  /** The folder as given joined with the name, for messages. */
  displayPath: string;
  /** Absolute path after resolving links in the folder. */
  absolutePath: string;
  sizeBytes: number;
  /** Lowercase hex SHA-256 of the file's bytes. */
  sha256: string;
  /** 16-bit sum of the file's bytes. */
  sum16: number;
}

export interface SafeWriteOptions {
  fs?: FileSystemOps;
  /** Create missing sub-folders on the way to the target (true by default). */
  createFolders?: boolean;
}

/** A resolved place to write: the real directory and the final name in it. */
export interface ResolvedTarget {
  name: string;
  displayPath: string;
  directory: string;
  absolutePath: string;
  /** Whether a file exists at the target now. */
  exists: boolean;
}

/**
 * Splits a relative output name into its parts, or returns why it is not acceptable. Both '/'
 * and '\' separate parts so a name means the same on every platform.
 */
export function checkOutputName(name: string): { ok: true; parts: string[] } | { ok: false; reason: string } {
  if (name.length === 0) return { ok: false, reason: 'the file name is empty' };
  if (name.includes('\0')) return { ok: false, reason: 'the file name contains a NUL character' };
  if (path.isAbsolute(name) || path.win32.isAbsolute(name) || /^[A-Za-z]:/.test(name)) {
    return { ok: false, reason: 'the name is an absolute path; output names must be relative to the output folder' };
  }
  const parts = name.split(/[\\/]/);
  for (const part of parts) {
    if (part === '..') return { ok: false, reason: "the name contains '..', which would leave the output folder" };
    if (part === '' || part === '.') return { ok: false, reason: "the name has an empty or '.' part" };
  }
  return { ok: true, parts };
}

function isInside(root: string, candidate: string): boolean {
  const relative = path.relative(root, candidate);
  return relative === '' || (!relative.startsWith('..') && !path.isAbsolute(relative));
}

export function describeError(error: unknown): string {
  if (error instanceof OutputError) return error.reason;
  const code = (error as { code?: unknown })?.code;
  const message = error instanceof Error ? error.message : String(error);
  const plain: Record<string, string> = {
    EACCES: 'permission denied',
    EPERM: 'operation not permitted',
    ENOSPC: 'no space left on the device',
    EROFS: 'the file system is read-only',
    EDQUOT: 'disk quota exceeded',
    EISDIR: 'a folder has that name',
    ENOTDIR: 'a part of the path is a file, not a folder',
    EEXIST: 'a file with the temporary name already exists',
  };
  return typeof code === 'string' && plain[code] ? `${plain[code]} (${code})` : message;
}

/**
 * Resolves `name` inside the real output folder, creating missing sub-folders. Every existing
 * part of the path is checked with lstat: a link is followed only if it stays inside the
 * folder, and the target itself must not be a link or a folder.
 */
export function resolveOutputTarget(folder: string, name: string, options: SafeWriteOptions = {}): ResolvedTarget {
  const fs = options.fs ?? nodeFileSystem;
  const displayPath = path.join(folder, name);
  const checked = checkOutputName(name);
  if (!checked.ok) throw new OutputError(displayPath, checked.reason);
  let root: string;
  try {
    root = fs.realpathSync(folder);
  } catch (error) {
    throw new OutputError(displayPath, `the output folder cannot be opened (${describeError(error)})`);
  }
  let directory = root;
  const parts = checked.parts;
  for (let index = 0; index < parts.length - 1; index++) {
    const next = path.join(directory, parts[index]!);
    const shown = path.join(folder, ...parts.slice(0, index + 1));
    const stats = lstatOrNull(fs, next, displayPath);
    if (stats === null) {
      if (options.createFolders === false) {
        // Nothing can exist below a missing folder; report where the file would go.
        const absolutePath = path.join(next, ...parts.slice(index + 1));
        return { name, displayPath, directory: path.dirname(absolutePath), absolutePath, exists: false };
      }
      try {
        fs.mkdirSync(next);
      } catch (error) {
        throw new OutputError(displayPath, `cannot create the folder ${shown} (${describeError(error)})`);
      }
      directory = next;
      continue;
    }
    if (stats.isSymbolicLink()) {
      let real: string;
      try {
        real = fs.realpathSync(next);
      } catch (error) {
        throw new OutputError(displayPath, `${shown} is a symbolic link that cannot be followed (${describeError(error)})`);
      }
      if (!isInside(root, real)) {
        throw new OutputError(displayPath, `${shown} is a symbolic link leading outside the output folder`);
      }
      if (!fs.lstatSync(real).isDirectory()) throw new OutputError(displayPath, `${shown} is not a folder`);
      directory = real;
      continue;
    }
    if (!stats.isDirectory()) throw new OutputError(displayPath, `${shown} is a file, not a folder`);
    directory = next;
  }
  const absolutePath = path.join(directory, parts[parts.length - 1]!);
  const stats = lstatOrNull(fs, absolutePath, displayPath);
  if (stats?.isSymbolicLink()) {
    throw new OutputError(displayPath, 'the target is a symbolic link; refusing to write through it (remove the link or choose another folder)');
  }
  if (stats && !stats.isFile()) throw new OutputError(displayPath, 'something other than a plain file has that name');
  return { name, displayPath, directory, absolutePath, exists: stats !== null };
}

function lstatOrNull(fs: FileSystemOps, file: string, displayPath: string): nodeFs.Stats | null {
  try {
    return fs.lstatSync(file);
  } catch (error) {
    if ((error as { code?: unknown })?.code === 'ENOENT') return null;
    throw new OutputError(displayPath, describeError(error));
  }
}

export function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/** The content of a file to write: all of it, or chunks made one after another as it is written. */
export type FileContent = Uint8Array | (() => Iterable<string | Uint8Array>);

/** Size and checksums of bytes as they were written (and as they read back). */
export interface ContentFigures {
  sizeBytes: number;
  sha256: string;
  sum16: number;
}

/** A temporary file holding one output's bytes, flushed and read back, not yet renamed. */
export interface TempFile extends ContentFigures {
  path: string;
}

/** A short name of our own for a temporary file in `directory`. */
export function temporaryPath(directory: string, tag = 'tmp'): string {
  return path.join(directory, `.pw-${randomBytes(5).toString('hex')}.${tag}`);
}

/** Bytes written between two progress calls of a long file. */
const progressEveryBytes = 8 * 1024 * 1024;

/**
 * Writes `content` to a new temporary file at `tempPath` ('wx': nothing may already have the
 * name, not even a planted link), hashing it on the way, flushes it, and reads it back in
 * chunks: the read-back must give the same SHA-256 and size. With `verify` (a chip image: a few
 * megabytes at most) the file is read back whole instead and `verify` judges those very bytes,
 * as read from the disk (it returns what is wrong, or undefined): one read checks both. On any
 * failure the temporary file is removed and the error rethrown. `onBytes` hears the bytes
 * written so far.
 */
export function writeTemporary(fs: FileSystemOps, tempPath: string, content: FileContent, onBytes?: (bytes: number) => void, verify?: (bytes: Uint8Array) => string | undefined): TempFile {
  let fd: number | null = null;
  let created = false;
  try {
    fd = fs.openSync(tempPath, 'wx', 0o644);
    created = true;
    const hash = createHash('sha256');
    let size = 0;
    let sum = 0;
    let reported = 0;
    const put = (bytes: Uint8Array) => {
      let offset = 0;
      while (offset < bytes.length) {
        const n = fs.writeSync(fd!, bytes, offset, bytes.length - offset);
        if (!(n > 0)) throw new Error('the file system accepted no bytes');
        offset += n;
      }
      hash.update(bytes);
      sum = (sum + byteSum(bytes)) & 0xffff;
      size += bytes.length;
      if (onBytes && size - reported >= progressEveryBytes) {
        reported = size;
        onBytes(size);
      }
    };
    if (content instanceof Uint8Array) put(content);
    else for (const chunk of content()) put(typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk);
    fs.fsyncSync(fd);
    fs.closeSync(fd);
    fd = null;
    const written: ContentFigures = { sizeBytes: size, sha256: hash.digest('hex'), sum16: sum };
    const back = verify ? readWhole(fs, tempPath) : undefined;
    const readBack = back ? { sizeBytes: back.length, sha256: createHash('sha256').update(back).digest('hex') } : figuresOfFile(fs, tempPath);
    if (readBack.sizeBytes !== written.sizeBytes || readBack.sha256 !== written.sha256) {
      throw new OutputError(tempPath, 'the temporary copy reads back different from what was written; the disk may be faulty');
    }
    const wrong = back && verify ? verify(back) : undefined;
    if (wrong) throw new OutputError(tempPath, wrong);
    return { path: tempPath, ...written };
  } catch (error) {
    if (fd !== null) {
      try {
        fs.closeSync(fd);
      } catch {
        // The descriptor is unusable either way; removing the file below is what matters.
      }
    }
    if (created) removeQuietly(fs, tempPath);
    throw error;
  }
}

/** The whole of a regular file we just wrote (a chip image), read through the same checks as figuresOfFile. */
function readWhole(fs: FileSystemOps, file: string): Uint8Array {
  const fd = fs.openSync(file, nodeFs.constants.O_RDONLY | (nodeFs.constants.O_NONBLOCK ?? 0));
  try {
    const stat = fs.fstatSync(fd);
    const refusal = refuseKind(stat, file);
    if (refusal) throw new OutputError(file, refusal, 'read back');
    const pieces: Buffer[] = [];
    let size = 0;
    for (;;) {
      const piece = Buffer.allocUnsafe(Math.max(64 * 1024, Number(stat.size) - size + 1));
      const n = fs.readSync(fd, piece, 0, piece.length, null);
      if (n === 0) break;
      pieces.push(piece.subarray(0, n));
      size += n;
    }
    return pieces.length === 1 ? pieces[0] : Buffer.concat(pieces);
  } finally {
    fs.closeSync(fd);
  }
}

/** Size, SHA-256 and 16-bit sum of a regular file, read in chunks (memory for one chunk). */
export function figuresOfFile(fs: FileSystemOps, file: string): ContentFigures {
  const fd = fs.openSync(file, nodeFs.constants.O_RDONLY | (nodeFs.constants.O_NONBLOCK ?? 0));
  try {
    const refusal = refuseKind(fs.fstatSync(fd), file);
    if (refusal) throw new OutputError(file, refusal, 'read back');
    const hash = createHash('sha256');
    const buffer = Buffer.allocUnsafe(1024 * 1024);
    let size = 0;
    let sum = 0;
    for (;;) {
      const n = fs.readSync(fd, buffer, 0, buffer.length, null);
      if (n === 0) break;
      const piece = buffer.subarray(0, n);
      hash.update(piece);
      sum = (sum + byteSum(piece)) & 0xffff;
      size += n;
    }
    return { sizeBytes: size, sha256: hash.digest('hex'), sum16: sum };
  } finally {
    fs.closeSync(fd);
  }
}

/** The sum of the bytes, modulo 2^16 (a plain loop with local variables: the hot path of large files). */
function byteSum(bytes: Uint8Array): number {
  let sum = 0;
  for (let i = 0; i < bytes.length; i++) sum += bytes[i]!;
  return sum & 0xffff;
}

export function removeQuietly(fs: FileSystemOps, file: string): void {
  try {
    fs.unlinkSync(file);
  } catch {
    // A temporary file we cannot remove is harmless: its name starts with '.pw-'.
  }
}

/**
 * Writes one file atomically and verifies it. On any failure before the rename the temporary
 * file is removed and the previous file (if any) is untouched; the thrown OutputError says why.
 */
export function writeFileSafely(folder: string, file: OutputFileContent, options: SafeWriteOptions = {}): WrittenFileReport {
  const fs = options.fs ?? nodeFileSystem;
  const target = resolveOutputTarget(folder, file.name, options);
  const previous = target.exists ? '; the previous file is unchanged' : '';
  let temp: TempFile;
  try {
    temp = writeTemporary(fs, temporaryPath(target.directory), file.bytes);
    try {
      fs.renameSync(temp.path, target.absolutePath);
    } catch (error) {
      removeQuietly(fs, temp.path);
      throw error;
    }
  } catch (error) {
    throw new OutputError(target.displayPath, `${describeError(error)}${previous}`);
  }
  syncDirectory(fs, target.directory);
  return verifyWritten(fs, target, temp);
}

/** Reads a renamed file back and checks it is what was written: the figures reported are the disk's. */
export function verifyWritten(fs: FileSystemOps, target: ResolvedTarget, written: ContentFigures): WrittenFileReport {
  let onDisk: ContentFigures;
  try {
    onDisk = figuresOfFile(fs, target.absolutePath);
  } catch (error) {
    throw new OutputError(target.displayPath, `the file was written but cannot be read back (${describeError(error)}); do not use it`, 'verify');
  }
  if (onDisk.sha256 !== written.sha256 || onDisk.sizeBytes !== written.sizeBytes) {
    throw new OutputError(target.displayPath, 'the file was replaced but reads back different from what was meant; do not use it', 'verify');
  }
  return { name: target.name, displayPath: target.displayPath, absolutePath: target.absolutePath, ...onDisk };
}

/**
 * Flushes the directory entry after a rename so the new name survives a power loss. Some
 * platforms (Windows) cannot open a folder for syncing; the rename is still atomic there.
 */
export function syncDirectory(fs: FileSystemOps, directory: string): void {
  let fd: number | null = null;
  try {
    fd = fs.openSync(directory, 'r');
    fs.fsyncSync(fd);
  } catch {
    // Best effort only, as explained above.
  } finally {
    if (fd !== null) {
      try {
        fs.closeSync(fd);
      } catch {
        // Nothing was written through this descriptor.
      }
    }
  }
}
