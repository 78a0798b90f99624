// The output manifest (`phasewright-manifest.json`) and the one entry point a build uses to
// put a set of files into an output folder. The manifest lists the files Phasewright wrote
// there, which is what lets a later build replace them: a file the previous manifest does not
// list is never overwritten. Files are written atomically through the safe writer and the
// complete manifest is written last. This module does not encode images itself beyond calling
// the core's format table; it decides what may be replaced and records what was written.
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
import {
  OutputError,
  checkOutputName,
  nodeFileSystem,
  resolveOutputTarget,
  sha256Hex,
  writeFileSafely,
  type FileSystemOps,
  type WrittenFileReport,
} from './safeWriter';

export const manifestFileName = 'phasewright-manifest.json';
export const manifestGenerator = 'phasewright';

/** Put in every manifest: a wrong control-store image can make parts fight over a bus. */
export const manifestCaution =
  'Check each image against the data sheets of the chips it is for (size, width, pin-out, timing) before ' +
  'programming them; a wrong control-store image can enable two drivers onto one bus and damage parts.';

export interface ManifestEntry {
  /** Path relative to the output folder. */
  name: string;
  /** 'ihex', 'srec', 'bin', 'memh', or another tool's format name for non-image files. */
  format: string;
  store?: string;
  /** Chip index within the store; chip 0 holds the least significant bits of the word. */
  chip?: number;
  widthBits?: number;
  words?: number;
  /** File size in bytes; null while the build that lists it has not finished. */
  size: number | null;
  /** Lowercase hex SHA-256 of the file; null while the build has not finished. */
  sha256: string | null;
  /**
   * 16-bit sum of the data bytes as 4 uppercase hex digits: for images, the sum of the chip's
   * bytes (the figure a device programmer shows after loading the file); for other files, the
   * sum of the file's bytes. Null while the build has not finished.
   */
  sum16: string | null;
  /** CRC-32 (IEEE 802.3) of the chip's bytes for images, 8 uppercase hex digits. */
  crc32?: string;
}

export interface Manifest {
  generator: typeof manifestGenerator;
  version: string;
  /** ISO 8601 time the build wrote the manifest. */
  createdAt: string;
  /** Name of the source file the outputs were built from. */
  source: string;
  /** False in the provisional manifest written before the files, true once all are written. */
  complete: boolean;
  caution: string;
  files: ManifestEntry[];
}

/** A manifest that cannot be used; the message says what is wrong and what the user can do. */
export class ManifestError extends Error {
  readonly displayPath: string;

  constructor(displayPath: string, reason: string) {
    super(
      `cannot use ${displayPath}: ${reason}. Phasewright cannot tell which files in that folder it wrote; ` +
        'move the folder\'s contents elsewhere or choose another output folder.',
    );
    this.name = 'ManifestError';
    this.displayPath = displayPath;
  }
}

type JsonObject = Record<string, unknown>;

function isObject(value: unknown): value is JsonObject {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** Checks and converts the manifest's JSON text; throws ManifestError with a plain reason. */
export function parseManifest(text: string, displayPath: string): Manifest {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (error) {
    throw new ManifestError(displayPath, `it is not valid JSON (${error instanceof Error ? error.message : String(error)})`);
  }
  const fail = (reason: string): never => {
    throw new ManifestError(displayPath, reason);
  };
  if (!isObject(data)) return fail('it does not hold a JSON object');
  if (data.generator !== manifestGenerator) {
    return fail(`it was not written by Phasewright (generator is ${JSON.stringify(data.generator) ?? 'missing'})`);
  }
  for (const key of ['version', 'createdAt', 'source', 'caution'] as const) {
    if (typeof data[key] !== 'string') fail(`the field "${key}" is missing or not text`);
  }
  if (typeof data.complete !== 'boolean') fail('the field "complete" is missing or not true/false');
  if (!Array.isArray(data.files)) return fail('the field "files" is missing or not a list');
  const files: ManifestEntry[] = [];
  const seen = new Set<string>();
  data.files.forEach((item: unknown, index: number) => {
    const where = `files[${index}]`;
    if (!isObject(item)) return fail(`${where} is not an object`);
    if (typeof item.name !== 'string') return fail(`${where}.name is missing or not text`);
    const checked = checkOutputName(item.name);
    if (!checked.ok) fail(`${where}.name "${item.name}" is not a safe output name (${checked.reason})`);
    if (item.name === manifestFileName) fail(`${where} lists the manifest itself`);
    if (seen.has(item.name)) fail(`${where}.name "${item.name}" is listed twice`);
    seen.add(item.name);
    if (typeof item.format !== 'string') fail(`${where}.format is missing or not text`);
    const nullable = (key: string, valid: (value: unknown) => boolean, what: string): void => {
      if (item[key] !== null && !valid(item[key])) fail(`${where}.${key} must be ${what} or null`);
    };
    nullable('size', (value) => Number.isInteger(value) && (value as number) >= 0, 'a byte count');
    nullable('sha256', (value) => typeof value === 'string' && /^[0-9a-f]{64}$/.test(value), '64 lowercase hex digits');
    nullable('sum16', (value) => typeof value === 'string' && /^[0-9A-F]{4}$/.test(value), '4 uppercase hex digits');
    const optional = (key: string, valid: (value: unknown) => boolean, what: string): void => {
      if (item[key] !== undefined && !valid(item[key])) fail(`${where}.${key} must be ${what}`);
    };
    optional('store', (value) => typeof value === 'string', 'text');
    optional('chip', (value) => Number.isInteger(value) && (value as number) >= 0, 'a chip index');
    optional('widthBits', (value) => Number.isInteger(value), 'a whole number');
    optional('words', (value) => Number.isInteger(value), 'a whole number');
    optional('crc32', (value) => typeof value === 'string' && /^[0-9A-F]{8}$/.test(value), '8 uppercase hex digits');
    if (data.complete === true && (item.sha256 === null || item.size === null || item.sum16 === null)) {
      fail(`${where} has no size, sha256 or sum16 although the manifest says the build completed`);
    }
    const entry: ManifestEntry = {
      name: item.name,
      format: item.format as string,
      size: item.size as number | null,
      sha256: item.sha256 as string | null,
      sum16: item.sum16 as string | null,
    };
    if (item.store !== undefined) entry.store = item.store as string;
    if (item.chip !== undefined) entry.chip = item.chip as number;
    if (item.widthBits !== undefined) entry.widthBits = item.widthBits as number;
    if (item.words !== undefined) entry.words = item.words as number;
    if (item.crc32 !== undefined) entry.crc32 = item.crc32 as string;
    files.push(entry);
  });
  return {
    generator: manifestGenerator,
    version: data.version as string,
    createdAt: data.createdAt as string,
    source: data.source as string,
    complete: data.complete as boolean,
    caution: data.caution as string,
    files,
  };
}

/**
 * The manifest in `folder`, or null when there is none. A manifest that exists but cannot be
 * read or checked is a ManifestError, never a crash and never silently ignored.
 */
export function readManifest(folder: string, fs: FileSystemOps = nodeFileSystem): Manifest | null {
  const displayPath = path.join(folder, manifestFileName);
  let target;
  try {
    target = resolveOutputTarget(folder, manifestFileName, { fs, createFolders: false });
  } catch (error) {
    if (error instanceof OutputError) throw new ManifestError(displayPath, error.reason);
    throw error;
  }
  if (!target.exists) return null;
  let bytes: Uint8Array;
  try {
    bytes = fs.readFileSync(target.absolutePath);
  } catch (error) {
    throw new ManifestError(displayPath, `it cannot be read (${error instanceof Error ? error.message : String(error)})`);
  }
  return parseManifest(Buffer.from(bytes).toString('utf8'), displayPath);
}

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

export type OutputSpec = ImageOutputSpec | PlainOutputSpec;

export interface OutputSetRequest {
  /** The output folder as the user gave it; created if missing. */
  folder: string;
  /** The source file's name as it should appear in the manifest. */
  sourceFile: string;
  /** Phasewright's version, recorded in the manifest. */
  version: string;
  files: readonly OutputSpec[];
  /** The clock, for tests. */
  now?: () => Date;
  fs?: FileSystemOps;
}

export interface OutputSetReport {
  /** One per requested file, in request order. */
  files: (WrittenFileReport & { entry: ManifestEntry })[];
  manifest: WrittenFileReport;
  /** Files an earlier build wrote, unchanged since, that this build no longer makes: deleted. */
  removed: string[];
  /** Plain sentences worth showing the user (e.g. a leftover file that was kept). */
  warnings: string[];
}

interface PreparedFile {
  name: string;
  bytes: Uint8Array;
  entry: Omit<ManifestEntry, 'size' | 'sha256'>;
}

function prepare(folder: string, spec: OutputSpec): PreparedFile {
  const displayPath = path.join(folder, spec.name);
  if ('image' in spec) {
    const format = imageFormats[spec.format];
    if (!format) throw new OutputError(displayPath, `unknown image format "${String(spec.format)}"`);
    let bytes: Uint8Array;
    try {
      bytes = format.write(spec.image, spec.options);
    } catch (error) {
      if (error instanceof ImageFormatError) throw new OutputError(displayPath, error.message);
      throw error;
    }
    const check = verifyReadBack(spec.format, bytes, spec.image);
    if (!check.ok) {
      throw new OutputError(displayPath, `internal check failed, nothing was written: ${check.error.message}`);
    }
    return {
      name: spec.name,
      bytes,
      entry: {
        name: spec.name,
        format: spec.format,
        store: spec.store,
        chip: spec.chip,
        widthBits: spec.image.widthBits,
        words: spec.image.words.length,
        sum16: checksumHex(imageSum16(spec.image), 4),
        crc32: checksumHex(imageCrc32(spec.image), 8),
      },
    };
  }
  const entry: Omit<ManifestEntry, 'size' | 'sha256'> = { name: spec.name, format: spec.format, sum16: null };
  if (spec.store !== undefined) entry.store = spec.store;
  if (spec.chip !== undefined) entry.chip = spec.chip;
  if (spec.sum16 !== undefined) entry.sum16 = checksumHex(spec.sum16, 4);
  return { name: spec.name, bytes: spec.bytes, entry };
}

function manifestBytes(manifest: Manifest): Uint8Array {
  return Buffer.from(`${JSON.stringify(manifest, null, 2)}\n`, 'utf8');
}

/**
 * Writes a build's files into `request.folder`:
 * 1. checks every name and refuses (before writing anything) to replace a file the previous
 *    manifest does not list, or to use a folder whose manifest is unreadable;
 * 2. encodes images and reads each encoding back through its own reader;
 * 3. writes a provisional manifest listing old and new names, so an interrupted build never
 *    leaves behind a file of ours that a later build would refuse to replace;
 * 4. writes each file atomically with read-back;
 * 5. deletes files an earlier build wrote that this one no longer makes, if unchanged since;
 * 6. writes the complete manifest, atomically, last.
 * Throws OutputError or ManifestError with a message ready to print.
 */
export function writeOutputSet(request: OutputSetRequest): OutputSetReport {
  const fs = request.fs ?? nodeFileSystem;
  const folder = request.folder;
  const now = request.now ?? (() => new Date());
  const safe = { fs };

  const seenNames = new Map<string, string>();
  for (const spec of request.files) {
    const displayPath = path.join(folder, spec.name);
    const checked = checkOutputName(spec.name);
    if (!checked.ok) throw new OutputError(displayPath, checked.reason);
    const key = spec.name.toLowerCase();
    if (key === manifestFileName) throw new OutputError(displayPath, 'that name is reserved for the output manifest');
    const clash = seenNames.get(key);
    if (clash !== undefined) {
      throw new OutputError(displayPath, `the build produces both ${clash} and ${spec.name}, which are the same file on some systems`);
    }
    seenNames.set(key, spec.name);
  }

  try {
    const stats = fs.lstatSync(folder);
    if (!stats.isDirectory() && !(stats.isSymbolicLink() && isDirectory(fs, folder))) {
      throw new OutputError(folder, 'a file has that name; the output folder must be a folder', 'use');
    }
  } catch (error) {
    if (error instanceof OutputError) throw error;
    if ((error as { code?: unknown })?.code !== 'ENOENT') {
      throw new OutputError(folder, error instanceof Error ? error.message : String(error), 'use');
    }
    try {
      fs.mkdirSync(folder, true);
    } catch (mkdirError) {
      throw new OutputError(folder, `the output folder cannot be created (${mkdirError instanceof Error ? mkdirError.message : String(mkdirError)})`, 'create');
    }
  }

  const previous = readManifest(folder, fs);
  const previouslyListed = new Map((previous?.files ?? []).map((entry) => [entry.name, entry]));

  // Refuse before writing anything: one unlisted file anywhere stops the whole build.
  for (const spec of request.files) {
    const target = resolveOutputTarget(folder, spec.name, { fs, createFolders: false });
    if (target.exists && !previouslyListed.has(spec.name)) {
      throw new OutputError(
        target.displayPath,
        `a file with this name is already in the output folder and Phasewright did not write it (${manifestFileName} ` +
          'does not list it); move it elsewhere or choose another output folder',
        'replace',
      );
    }
  }

  const prepared = request.files.map((spec) => prepare(folder, spec));
  const header = (complete: boolean) =>
    ({
      generator: manifestGenerator,
      version: request.version,
      createdAt: now().toISOString(),
      source: request.sourceFile,
      complete,
      caution: manifestCaution,
    }) as const;

  const provisional: Manifest = {
    ...header(false),
    files: [
      ...(previous?.files ?? []),
      ...prepared
        .filter((file) => !previouslyListed.has(file.name))
        .map((file) => orderedEntry({ ...file.entry, size: null, sha256: null, sum16: null })),
    ],
  };
  writeFileSafely(folder, { name: manifestFileName, bytes: manifestBytes(provisional) }, safe);

  const written = prepared.map((file) => {
    const report = writeFileSafely(folder, { name: file.name, bytes: file.bytes }, safe);
    const entry = orderedEntry({
      ...file.entry,
      size: report.sizeBytes,
      sha256: report.sha256,
      sum16: file.entry.sum16 ?? checksumHex(report.sum16, 4),
    });
    return { ...report, entry };
  });

  const removed: string[] = [];
  const warnings: string[] = [];
  const producedNames = new Set(prepared.map((file) => file.name));
  for (const old of previous?.files ?? []) {
    if (producedNames.has(old.name)) continue;
    const outcome = removeIfUnchanged(folder, old, fs);
    if (outcome === 'removed') removed.push(old.name);
    if (outcome === 'kept') {
      warnings.push(
        `${path.join(folder, old.name)} is left from an earlier build and was changed since (or that build did not finish); ` +
          'it was kept, is no longer listed as written by Phasewright, and must not be mistaken for a current image',
      );
    }
  }

  const finalManifest: Manifest = { ...header(true), files: written.map((file) => file.entry) };
  const manifest = writeFileSafely(folder, { name: manifestFileName, bytes: manifestBytes(finalManifest) }, safe);
  return { files: written, manifest, removed, warnings };
}

/** The entry with its fields in reading order (JSON keeps insertion order). */
function orderedEntry(entry: ManifestEntry): ManifestEntry {
  const ordered: ManifestEntry = { name: entry.name, format: entry.format } as ManifestEntry;
  if (entry.store !== undefined) ordered.store = entry.store;
  if (entry.chip !== undefined) ordered.chip = entry.chip;
  if (entry.widthBits !== undefined) ordered.widthBits = entry.widthBits;
  if (entry.words !== undefined) ordered.words = entry.words;
  ordered.size = entry.size;
  ordered.sha256 = entry.sha256;
  ordered.sum16 = entry.sum16;
  if (entry.crc32 !== undefined) ordered.crc32 = entry.crc32;
  return ordered;
}

function isDirectory(fs: FileSystemOps, folder: string): boolean {
  try {
    return fs.lstatSync(fs.realpathSync(folder)).isDirectory();
  } catch {
    return false;
  }
}

/** Deletes a file an earlier build listed if it still has the recorded SHA-256. */
function removeIfUnchanged(folder: string, entry: ManifestEntry, fs: FileSystemOps): 'removed' | 'kept' | 'absent' {
  let target;
  try {
    target = resolveOutputTarget(folder, entry.name, { fs, createFolders: false });
  } catch {
    return 'kept';
  }
  if (!target.exists) return 'absent';
  try {
    if (entry.sha256 !== null && sha256Hex(fs.readFileSync(target.absolutePath)) === entry.sha256) {
      fs.unlinkSync(target.absolutePath);
      return 'removed';
    }
  } catch {
    // A file we cannot read or delete is simply kept and reported.
  }
  return 'kept';
}
