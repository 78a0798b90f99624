// Puts the files of one run (a `build`, a `fit`) into an output folder, all or nothing, under
// the folder's lock, and records them in the manifest beside what other runs made there:
//
// 1. checks every name, takes the folder's lock (folderLock.ts), reads the manifest, and
//    refuses, before writing anything, to replace a file the manifest does not list;
// 2. writes every file to a temporary file in `.phasewright-work/` (one file at a time, each
//    encoded, written in chunks, flushed and read back, then let go: memory for one file), and
//    the provisional and final manifests too, so the disk is full before anything changes;
// 3. sets the present files aside (hard links, or renames where links are not possible),
//    renames the provisional manifest in, then every file, then the final manifest; a failure
//    on the way puts every previous file and the previous manifest back;
// 4. reads every file back from its final place, so the checksums reported are the disk's.
//
// Nothing is ever deleted: a file an earlier run of the same command on the same source made
// and this run does not is left in place, reported, and stays listed as stale (so a later run
// may replace it), as long as it is unchanged; a changed one is no longer listed. Outputs of
// other commands and sources stay listed as they were. Throws OutputError or ManifestError
// with a message ready to print, naming the file that failed.
import * as path from 'node:path';
import {
  checksumHex,
  imageCrc32,
  imageFormats,
  imageSum16,
  verifyReadBack,
  ImageFormatError,
  type ChipImage,
  type ImageFormatName,
  type ImageWriteOptions,
} from '../../core/encode/formats/index';
import { lockFolder } from './folderLock';
import { type Manifest, type ManifestEntry, manifestBytes, manifestCaution, manifestFileName, manifestGenerator, manifestLayout, orderedEntry, readManifest } from './manifest';
import {
  OutputError,
  checkOutputName,
  describeError,
  figuresOfFile,
  nodeFileSystem,
  removeQuietly,
  resolveOutputTarget,
  syncDirectory,
  temporaryPath,
  verifyWritten,
  writeTemporary,
  type FileContent,
  type FileSystemOps,
  type ResolvedTarget,
  type TempFile,
  type WrittenFileReport,
} from './safeWriter';

/** The folder inside an output folder that holds temporary files and set-aside copies. */
export const workFolderName = '.phasewright-work';

/** A control-store image to be written in one format. */
export interface ImageOutputSpec {
  name: string;
  format: ImageFormatName;
  store: string;
  chip: number;
  image: ChipImage;
  options?: ImageWriteOptions;
}

/** Any other file (e.g. a fuse map) that should go through the same safe path and manifest. */
export interface PlainOutputSpec {
  name: string;
  format: string;
  bytes: Uint8Array;
  store?: string;
  chip?: number;
  /** The checksum a device programmer shows for this content; the file's byte sum if omitted. */
  sum16?: number;
}

/** A file made in chunks as it is written (a listing larger than memory). */
export interface StreamOutputSpec {
  name: string;
  format: string;
  store?: string;
  chunks: () => Iterable<string | Uint8Array>;
}

export type OutputSpec = ImageOutputSpec | PlainOutputSpec | StreamOutputSpec;

export interface OutputSetRequest {
  /** The output folder as the user gave it; created if missing. */
  folder: string;
  /** The command writing: 'build' or 'fit'. Its earlier outputs from the same source are the ones this run may leave stale. */
  command: string;
  /** The source file's name as it should appear in the manifest. */
  sourceFile: string;
  /** Phasewright's version, recorded in the manifest. */
  version: string;
  files: readonly OutputSpec[];
  /** How long to wait for another run's lock on the folder (10 s by default). */
  lockWaitMs?: number;
  /** Hears the progress: files done of all, and what is being written. */
  progress?: (done: number, total: number, detail: string) => void;
  /** The clock, for tests. */
  now?: () => Date;
  fs?: FileSystemOps;
}

export interface OutputSetReport {
  /** One per requested file, in request order, with the figures read back from disk. */
  files: (WrittenFileReport & { entry: ManifestEntry })[];
  manifest: WrittenFileReport;
  /** Files an earlier run of this command on this source made, unchanged, that this run does not: left in place. */
  leftInPlace: string[];
  /** Plain sentences worth showing the user (e.g. a leftover file that was changed since). */
  warnings: string[];
}

export function writeOutputSet(request: OutputSetRequest): OutputSetReport {
  const fs = request.fs ?? nodeFileSystem;
  checkNames(request);
  const root = openFolder(fs, request.folder);
  const lock = lockFolder(fs, root, request.folder, request.lockWaitMs ?? 10_000);
  try {
    return writeLocked(request, fs, root);
  } finally {
    lock.release();
  }
}

function checkNames(request: OutputSetRequest): void {
  const seenNames = new Map<string, string>();
  for (const spec of request.files) {
    const displayPath = path.join(request.folder, spec.name);
    const checked = checkOutputName(spec.name);
    if (!checked.ok) throw new OutputError(displayPath, checked.reason);
    const key = spec.name.toLowerCase();
    if (key === manifestFileName || key.split(/[\\/]/)[0] === workFolderName) throw new OutputError(displayPath, 'that name is reserved for the output manifest and its work folder');
    const clash = seenNames.get(key);
    if (clash !== undefined) {
      throw new OutputError(displayPath, `the run produces both ${clash} and ${spec.name}, which are the same file on some systems`);
    }
    seenNames.set(key, spec.name);
  }
}

/** The real path of the output folder, created if missing. */
function openFolder(fs: FileSystemOps, folder: string): string {
  try {
    const stats = fs.lstatSync(folder);
    if (!stats.isDirectory() && !(stats.isSymbolicLink() && isDirectory(fs, folder))) {
      throw new OutputError(folder, 'a file has that name; the output folder must be a folder', 'use');
    }
  } catch (error) {
    if (error instanceof OutputError) throw error;
    if ((error as { code?: unknown })?.code !== 'ENOENT') throw new OutputError(folder, describeError(error), 'use');
    try {
      fs.mkdirSync(folder, true);
    } catch (mkdirError) {
      throw new OutputError(folder, `the output folder cannot be created (${describeError(mkdirError)})`, 'create');
    }
  }
  try {
    return fs.realpathSync(folder);
  } catch (error) {
    throw new OutputError(folder, `the output folder cannot be opened (${describeError(error)})`, 'use');
  }
}

function isDirectory(fs: FileSystemOps, folder: string): boolean {
  try {
    return fs.lstatSync(fs.realpathSync(folder)).isDirectory();
  } catch {
    return false;
  }
}

/**
 * The work folder, made if missing, emptied of what an interrupted run left (only our own
 * `.pw-` files; it is ours, and we hold the lock).
 */
function openWorkFolder(fs: FileSystemOps, root: string, folder: string): string {
  const work = path.join(root, workFolderName);
  const shown = path.join(folder, workFolderName);
  let stats;
  try {
    stats = fs.lstatSync(work);
  } catch {
    stats = undefined;
  }
  if (stats && !stats.isDirectory()) throw new OutputError(shown, 'Phasewright keeps its temporary files there, but something other than a folder has the name; remove it', 'use');
  if (!stats) {
    try {
      fs.mkdirSync(work);
    } catch (error) {
      throw new OutputError(shown, `the work folder cannot be created (${describeError(error)})`, 'create');
    }
  }
  for (const leftover of fs.readdirSync(work)) if (/^\.pw-[0-9a-f]{10}\.(tmp|old)$/.test(leftover)) removeQuietly(fs, path.join(work, leftover));
  return work;
}

interface Staged {
  spec: OutputSpec;
  target: ResolvedTarget;
  temp: TempFile;
  entry: ManifestEntry;
}

function writeLocked(request: OutputSetRequest, fs: FileSystemOps, root: string): OutputSetReport {
  const folder = request.folder;
  const previous = readManifest(folder, fs);
  const listed = new Map((previous?.files ?? []).map((entry) => [entry.name, entry]));
  const targets = request.files.map((spec) => resolveOutputTarget(folder, spec.name, { fs, createFolders: false }));
  for (const target of targets) {
    if (target.exists && !listed.has(target.name)) {
      throw new OutputError(
        target.displayPath,
        `a file with this name is already in the output folder and Phasewright did not write it (${manifestFileName} ` +
          'does not list it); move it elsewhere or choose another output folder',
        'replace',
      );
    }
  }

  const work = openWorkFolder(fs, root, folder);
  try {
    return writeStaged(request, fs, folder, work, previous, listed);
  } finally {
    // Empty after a run that finished or failed cleanly; what a killed run leaves, the next removes.
    try {
      fs.rmdirSync(work);
    } catch {
      // Not empty (a temporary file could not be removed): harmless, and cleared next time.
    }
  }
}

function writeStaged(request: OutputSetRequest, fs: FileSystemOps, folder: string, work: string, previous: Manifest | null, listed: Map<string, ManifestEntry>): OutputSetReport {
  const staged: Staged[] = [];
  const manifestTemps: TempFile[] = [];
  const discard = () => {
    for (const file of [...staged.map((s) => s.temp), ...manifestTemps]) removeQuietly(fs, file.path);
  };
  const total = request.files.length;
  let leftInPlace: string[] = [];
  let warnings: string[] = [];
  let manifestTarget: ResolvedTarget;
  try {
    request.files.forEach((spec, index) => {
      request.progress?.(index, total, spec.name);
      // Sub-folders are made now; they are harmless if the run fails later.
      const target = resolveOutputTarget(folder, spec.name, { fs });
      const { content, entry } = prepare(folder, spec, request);
      // A chip image is parsed back from the bytes the disk gives back, once (not from memory).
      const verify = 'image' in spec ? (bytes: Uint8Array) => {
        const check = verifyReadBack(spec.format, bytes, spec.image);
        return check.ok ? undefined : `the image read back from the disk is not the image meant (${check.error.message}); nothing was written`;
      } : undefined;
      let temp: TempFile;
      try {
        temp = writeTemporary(fs, temporaryPath(work), content, (bytes) => request.progress?.(index, total, `${spec.name} ${(bytes / 1024 / 1024).toFixed(0)} MB`), verify);
      } catch (error) {
        throw new OutputError(target.displayPath, `${describeError(error)}${target.exists ? '; the folder keeps its previous files' : '; nothing was changed in the folder'}`);
      }
      staged.push({ spec, target, temp, entry: orderedEntry({ ...entry, size: temp.sizeBytes, sha256: temp.sha256, sum16: entry.sum16 ?? checksumHex(temp.sum16, 4) }) });
    });
    request.progress?.(total, total, manifestFileName);
    const kept = keptEntries(fs, folder, previous, request, new Set(request.files.map((spec) => spec.name)));
    leftInPlace = kept.leftInPlace;
    warnings = kept.warnings;
    const header = (complete: boolean): Omit<Manifest, 'files'> => ({
      generator: manifestGenerator,
      layout: manifestLayout,
      version: request.version,
      createdAt: (request.now ?? (() => new Date()))().toISOString(),
      complete,
      caution: manifestCaution,
    });
    // Listed before the files arrive, so a run killed mid-way leaves no file of ours unlisted.
    const provisional: Manifest = {
      ...header(false),
      files: [...(previous?.files ?? []), ...staged.filter((s) => !listed.has(s.entry.name)).map((s) => orderedEntry({ ...s.entry, size: null, sha256: null, sum16: null }))],
    };
    const final: Manifest = { ...header(true), files: [...kept.entries, ...staged.map((s) => s.entry)] };
    manifestTarget = resolveOutputTarget(folder, manifestFileName, { fs });
    for (const manifest of [provisional, final]) {
      try {
        manifestTemps.push(writeTemporary(fs, temporaryPath(work), manifestBytes(manifest)));
      } catch (error) {
        throw new OutputError(manifestTarget.displayPath, `${describeError(error)}; the folder keeps its previous files`);
      }
    }
  } catch (error) {
    discard();
    throw error;
  }

  commit(fs, work, [
    { target: manifestTarget, temp: manifestTemps[0]! },
    ...staged.map((s) => ({ target: s.target, temp: s.temp })),
    { target: manifestTarget, temp: manifestTemps[1]! },
  ]);

  const files = staged.map((s) => ({ ...verifyWritten(fs, s.target, s.temp), entry: s.entry }));
  const manifest = verifyWritten(fs, manifestTarget, manifestTemps[1]!);
  return { files, manifest, leftInPlace, warnings };
}

function prepare(folder: string, spec: OutputSpec, request: OutputSetRequest): { content: FileContent; entry: Omit<ManifestEntry, 'size' | 'sha256' | 'sum16'> & { sum16?: string } } {
  const base = { name: spec.name, format: spec.format, command: request.command, source: request.sourceFile };
  if ('image' in spec) {
    const displayPath = path.join(folder, spec.name);
    const format = imageFormats[spec.format];
    if (!format) throw new OutputError(displayPath, `unknown image format "${String(spec.format)}"`);
    let bytes: Uint8Array;
    try {
      bytes = format.write(spec.image, spec.options);
    } catch (error) {
      if (error instanceof ImageFormatError) throw new OutputError(displayPath, error.message);
      throw error;
    }
    return {
      content: bytes,
      entry: {
        ...base,
        store: spec.store,
        chip: spec.chip,
        widthBits: spec.image.widthBits,
        words: spec.image.words.length,
        sum16: checksumHex(imageSum16(spec.image), 4),
        crc32: checksumHex(imageCrc32(spec.image), 8),
      },
    };
  }
  const entry: Omit<ManifestEntry, 'size' | 'sha256' | 'sum16'> & { sum16?: string } = { ...base };
  if (spec.store !== undefined) entry.store = spec.store;
  if ('bytes' in spec) {
    if (spec.chip !== undefined) entry.chip = spec.chip;
    if (spec.sum16 !== undefined) entry.sum16 = checksumHex(spec.sum16, 4);
    return { content: spec.bytes, entry };
  }
  return { content: spec.chunks, entry };
}

/**
 * What the new manifest keeps of the previous one besides this run's files: other commands'
 * and sources' entries whose files are still there, and this command's earlier outputs from
 * this source that it no longer makes, as stale while unchanged.
 */
function keptEntries(fs: FileSystemOps, folder: string, previous: Manifest | null, request: OutputSetRequest, produced: Set<string>): { entries: ManifestEntry[]; leftInPlace: string[]; warnings: string[] } {
  const entries: ManifestEntry[] = [];
  const leftInPlace: string[] = [];
  const warnings: string[] = [];
  for (const old of previous?.files ?? []) {
    if (produced.has(old.name)) continue;
    const state = fileState(fs, folder, old);
    const ours = old.command === request.command && old.source === request.sourceFile;
    if (state === 'absent') continue;
    if (state === 'unchanged') {
      if (ours) leftInPlace.push(old.name);
      entries.push(ours ? orderedEntry({ ...old, stale: true }) : old);
      continue;
    }
    warnings.push(
      `${path.join(folder, old.name)} is left from an earlier ${old.command} of ${old.source} and was changed since (or that run did not finish); ` +
        'it was kept, is no longer listed as written by Phasewright, and must not be mistaken for a current output',
    );
  }
  return { entries, leftInPlace, warnings };
}

function fileState(fs: FileSystemOps, folder: string, entry: ManifestEntry): 'absent' | 'unchanged' | 'changed' {
  let target;
  try {
    target = resolveOutputTarget(folder, entry.name, { fs, createFolders: false });
  } catch {
    return 'changed';
  }
  if (!target.exists) return 'absent';
  try {
    return entry.sha256 !== null && figuresOfFile(fs, target.absolutePath).sha256 === entry.sha256 ? 'unchanged' : 'changed';
  } catch {
    return 'changed';
  }
}

interface Move {
  target: ResolvedTarget;
  temp: TempFile;
}

interface SetAside {
  target: ResolvedTarget;
  /** Where the previous file is kept, and whether it is a second link (the file stays) or was moved. */
  copy: string;
  moved: boolean;
}

/**
 * Renames the temporary files over their targets in order. The files present before are set
 * aside first (a hard link keeps the old file in place while it is replaced; where links are
 * not possible it is moved aside), so any failure can put the folder back as it was.
 */
function commit(fs: FileSystemOps, work: string, moves: Move[]): void {
  const asides = new Map<string, SetAside>();
  const undoAsides = () => {
    for (const aside of asides.values()) {
      if (aside.moved) tryRename(fs, aside.copy, aside.target.absolutePath);
      else removeQuietly(fs, aside.copy);
    }
  };
  for (const { target } of moves) {
    if (!target.exists || asides.has(target.absolutePath)) continue;
    const copy = temporaryPath(work, 'old');
    try {
      fs.linkSync(target.absolutePath, copy);
      asides.set(target.absolutePath, { target, copy, moved: false });
    } catch {
      try {
        fs.renameSync(target.absolutePath, copy);
        asides.set(target.absolutePath, { target, copy, moved: true });
      } catch (error) {
        undoAsides();
        for (const move of moves) removeQuietly(fs, move.temp.path);
        throw new OutputError(target.displayPath, `the previous file cannot be set aside (${describeError(error)}); the folder keeps its previous files`);
      }
    }
  }
  const done: Move[] = [];
  for (const move of moves) {
    try {
      fs.renameSync(move.temp.path, move.target.absolutePath);
      done.push(move);
    } catch (error) {
      const unrestored: string[] = [];
      // Put back what was there: each target renamed so far gets its previous file, or none.
      for (const target of new Map(done.map((d) => [d.target.absolutePath, d.target])).values()) {
        const aside = asides.get(target.absolutePath);
        const ok = aside ? tryRename(fs, aside.copy, target.absolutePath) : tryUnlink(fs, target.absolutePath);
        if (!ok) unrestored.push(target.displayPath);
        if (aside) asides.delete(target.absolutePath);
      }
      undoAsides();
      for (const rest of moves) removeQuietly(fs, rest.temp.path);
      const state = unrestored.length ? `; these could not be put back as they were: ${unrestored.join(', ')}` : '; the folder keeps its previous files';
      throw new OutputError(move.target.displayPath, `${describeError(error)}${state}`);
    }
  }
  for (const aside of asides.values()) removeQuietly(fs, aside.copy);
  for (const directory of new Set(moves.map((m) => m.target.directory))) syncDirectory(fs, directory);
}

function tryRename(fs: FileSystemOps, from: string, to: string): boolean {
  try {
    fs.renameSync(from, to);
    return true;
  } catch {
    return false;
  }
}

function tryUnlink(fs: FileSystemOps, file: string): boolean {
  try {
    fs.unlinkSync(file);
    return true;
  } catch {
    return false;
  }
}
