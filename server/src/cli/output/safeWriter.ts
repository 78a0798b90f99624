// Writes output files into an output folder without ever writing outside it or leaving a
// half-written file behind: names are checked and resolved inside the folder (no `..`, no
// absolute names, no symbolic link that leads out, no target that is itself a link); bytes go
// to a uniquely named temporary file in the target's own directory, are flushed to disk and
// read back, then renamed over the target (atomic on POSIX) and read back once more. It does
// not decide which files may be replaced; the manifest layer does that before calling here.
import { createHash, randomBytes } from 'node:crypto';
import * as nodeFs from 'node:fs';
import * as path from 'node:path';
import { sum16 } from '../../core/encode/formats/checksums';

/** The file-system calls the writer uses, so tests can inject failures. */
export interface FileSystemOps {
  openSync(path: string, flags: string, mode?: number): number;
  writeSync(fd: number, buffer: Uint8Array, offset: number, length: number): number;
  fsyncSync(fd: number): void;
  closeSync(fd: number): void;
  renameSync(from: string, to: string): void;
  unlinkSync(path: string): void;
  readFileSync(path: string): Uint8Array;
  lstatSync(path: string): nodeFs.Stats;
  realpathSync(path: string): string;
  mkdirSync(path: string, recursive?: boolean): void;
}

export const nodeFileSystem: FileSystemOps = {
  openSync: (file, flags, mode) => nodeFs.openSync(file, flags, mode),
  writeSync: (fd, buffer, offset, length) => nodeFs.writeSync(fd, buffer, offset, length),
  fsyncSync: (fd) => nodeFs.fsyncSync(fd),
  closeSync: (fd) => nodeFs.closeSync(fd),
  renameSync: (from, to) => nodeFs.renameSync(from, to),
  unlinkSync: (file) => nodeFs.unlinkSync(file),
  readFileSync: (file) => nodeFs.readFileSync(file),
  lstatSync: (file) => nodeFs.lstatSync(file),
  realpathSync: (file) => nodeFs.realpathSync(file),
  mkdirSync: (dir, recursive) => {
    nodeFs.mkdirSync(dir, { recursive: recursive ?? false });
  },
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
  bytes: Uint8Array;
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

function describeError(error: unknown): string {
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

function sameBytes(a: Uint8Array, b: Uint8Array): boolean {
  if (a.length !== b.length) return false;
  for (let index = 0; index < a.length; index++) if (a[index] !== b[index]) return false;
  return true;
}

export function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/**
 * Writes one file atomically and verifies it. On any failure before the rename the temporary
 * file is removed and the previous file (if any) is untouched; the thrown OutputError says why.
 */
export function writeFileSafely(folder: string, file: OutputFileContent, options: SafeWriteOptions = {}): WrittenFileReport {
  const fs = options.fs ?? nodeFileSystem;
  const target = resolveOutputTarget(folder, file.name, options);
  const baseName = path.basename(target.absolutePath);
  const tempPath = path.join(target.directory, `.${baseName}.${process.pid}-${randomBytes(6).toString('hex')}.tmp`);
  let fd: number | null = null;
  let tempCreated = false;
  try {
    // 'wx' creates the file and fails if anything (a file or a planted link) already has the name.
    fd = fs.openSync(tempPath, 'wx', 0o644);
    tempCreated = true;
    let offset = 0;
    while (offset < file.bytes.length) {
      const nWritten = fs.writeSync(fd, file.bytes, offset, file.bytes.length - offset);
      if (!(nWritten > 0)) throw new Error('the file system accepted no bytes');
      offset += nWritten;
    }
    fs.fsyncSync(fd);
    fs.closeSync(fd);
    fd = null;
    if (!sameBytes(fs.readFileSync(tempPath), file.bytes)) {
      throw new OutputError(target.displayPath, 'the temporary copy reads back different from what was written; the disk may be faulty');
    }
    fs.renameSync(tempPath, target.absolutePath);
    tempCreated = false;
  } catch (error) {
    if (fd !== null) {
      try {
        fs.closeSync(fd);
      } catch {
        // The descriptor is unusable either way; removing the file below is what matters.
      }
    }
    if (tempCreated) {
      try {
        fs.unlinkSync(tempPath);
      } catch {
        // A temporary file we cannot remove is harmless: its name starts with '.' and ends in .tmp.
      }
    }
    const previous = target.exists ? '; the previous file is unchanged' : '';
    throw new OutputError(target.displayPath, `${describeError(error)}${previous}`);
  }
  syncDirectory(target.directory);
  let readBack: Uint8Array;
  try {
    readBack = fs.readFileSync(target.absolutePath);
  } catch (error) {
    throw new OutputError(target.displayPath, `the file was written but cannot be read back (${describeError(error)}); do not use it`, 'verify');
  }
  if (!sameBytes(readBack, file.bytes)) {
    throw new OutputError(target.displayPath, 'the file was replaced but reads back different from what was meant; do not use it', 'verify');
  }
  return {
    name: file.name,
    displayPath: target.displayPath,
    absolutePath: target.absolutePath,
    sizeBytes: readBack.length,
    sha256: sha256Hex(readBack),
    sum16: sum16(readBack),
  };
}

/**
 * Flushes the directory entry after a rename so the new name survives a power loss. Some
 * platforms (Windows) cannot open a folder for syncing; the rename is still atomic there.
 */
function syncDirectory(directory: string): void {
  let fd: number | null = null;
  try {
    fd = nodeFs.openSync(directory, 'r');
    nodeFs.fsyncSync(fd);
  } catch {
    // Best effort only, as explained above.
  } finally {
    if (fd !== null) {
      try {
        nodeFs.closeSync(fd);
      } catch {
        // Nothing was written through this descriptor.
      }
    }
  }
}

/** Writes several files one after another; stops at the first failure (thrown as OutputError). */
export function writeFilesSafely(folder: string, files: readonly OutputFileContent[], options: SafeWriteOptions = {}): WrittenFileReport[] {
  return files.map((file) => writeFileSafely(folder, file, options));
}
