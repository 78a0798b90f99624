// The output manifest (`phasewright-manifest.json`): what Phasewright wrote into an output
// folder, file by file, with the command and the source file that made each one, so the
// outputs of different commands (`build`, `fit`) and tables live side by side in one folder
// and a later run replaces only what is listed. Its format, its checks when read back (a
// damaged or foreign manifest is a ManifestError, never a crash and never ignored) and its
// reading through the common reader are here; writing a set of files under it is
// outputSet.ts.
import * as path from 'node:path';
import { isImageFormatName } from '../../core/encode/formats/index';
import { inputLimits, readInputFile } from '../inputFile';
import { OutputError, checkOutputName, nodeFileSystem, resolveOutputTarget, type FileSystemOps } from './safeWriter';

export const manifestFileName = 'phasewright-manifest.json';
export const manifestGenerator = 'phasewright';
/** 2: each entry names its command and source (1 had one source for the whole folder). */
export const manifestLayout = 2;

/** Put in every manifest: a wrong control-store image can make parts fight over a bus. */
export const manifestCaution =
  'Check each image against the data sheets of the chips it is for (size, width, pin-out, timing) before ' +
  'programming them; a wrong control-store image can enable two drivers onto one bus and damage parts.';

export interface ManifestEntry {
  /** Path relative to the output folder. */
  name: string;
  /** 'ihex', 'srec', 'bin', 'memh', 'list', or another tool's format name for non-image files. */
  format: string;
  /** The command that wrote it: 'build' or 'fit'. */
  command: string;
  /** The source file it was made from, by name. */
  source: string;
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
  /**
   * True when the latest run of its command on its source no longer makes it: left in place
   * (Phasewright deletes nothing), still listed so that a later run may replace it.
   */
  stale?: true;
}

export interface Manifest {
  generator: typeof manifestGenerator;
  layout: typeof manifestLayout;
  version: string;
  /** ISO 8601 time the last run wrote the manifest. */
  createdAt: string;
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
  const layout = data.layout ?? 1;
  if (layout !== 1 && layout !== manifestLayout) fail(`its layout ${JSON.stringify(layout)} is newer than this Phasewright understands (${manifestLayout})`);
  // Layout 1 named one source for the whole folder; its entries take it, and the command
  // that writes their format.
  const keys = layout === 1 ? (['version', 'createdAt', 'source', 'caution'] as const) : (['version', 'createdAt', 'caution'] as const);
  for (const key of keys) {
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
    if (layout !== 1) {
      if (typeof item.command !== 'string') fail(`${where}.command is missing or not text`);
      if (typeof item.source !== 'string') fail(`${where}.source is missing or not text`);
    }
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
    optional('stale', (value) => value === true, 'true');
    if (data.complete === true && (item.sha256 === null || item.size === null || item.sum16 === null)) {
      fail(`${where} has no size, sha256 or sum16 although the manifest says the build completed`);
    }
    const format = item.format as string;
    const entry: ManifestEntry = {
      name: item.name,
      format,
      command: layout === 1 ? (format === 'list' || isImageFormatName(format) ? 'build' : 'fit') : (item.command as string),
      source: layout === 1 ? (data.source as string) : (item.source as string),
      size: item.size as number | null,
      sha256: item.sha256 as string | null,
      sum16: item.sum16 as string | null,
    };
    if (item.store !== undefined) entry.store = item.store as string;
    if (item.chip !== undefined) entry.chip = item.chip as number;
    if (item.widthBits !== undefined) entry.widthBits = item.widthBits as number;
    if (item.words !== undefined) entry.words = item.words as number;
    if (item.crc32 !== undefined) entry.crc32 = item.crc32 as string;
    if (item.stale === true) entry.stale = true;
    files.push(entry);
  });
  return {
    generator: manifestGenerator,
    layout: manifestLayout,
    version: data.version as string,
    createdAt: data.createdAt as string,
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
  const read = readInputFile(target.absolutePath, inputLimits.manifest, displayPath, fs);
  if (!read.ok) throw new ManifestError(displayPath, `it cannot be read (${read.reason})`);
  return parseManifest(read.bytes.toString('utf8'), displayPath);
}

/** The manifest's bytes as written: JSON with two-space indents and a final newline. */
export function manifestBytes(manifest: Manifest): Uint8Array {
  return Buffer.from(`${JSON.stringify(manifest, null, 2)}\n`, 'utf8');
}

/** The entry with its fields in reading order (JSON keeps insertion order). */
export function orderedEntry(entry: ManifestEntry): ManifestEntry {
  const ordered = { name: entry.name, format: entry.format, command: entry.command, source: entry.source } as ManifestEntry;
  if (entry.store !== undefined) ordered.store = entry.store;
  if (entry.chip !== undefined) ordered.chip = entry.chip;
  if (entry.widthBits !== undefined) ordered.widthBits = entry.widthBits;
  if (entry.words !== undefined) ordered.words = entry.words;
  ordered.size = entry.size;
  ordered.sha256 = entry.sha256;
  ordered.sum16 = entry.sum16;
  if (entry.crc32 !== undefined) ordered.crc32 = entry.crc32;
  if (entry.stale) ordered.stale = true;
  return ordered;
}

