// The output layer: files land only inside the output folder, atomically and verified; a
// failure mid-write leaves the previous files as they were (one file or a whole set); a file
// Phasewright did not write is never replaced and nothing is ever deleted; and a damaged
// manifest is a clear error rather than a crash.
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeEach, describe, expect, it } from 'vitest';
import { ManifestError, manifestFileName, parseManifest, readManifest, type Manifest } from '../../server/src/cli/output/manifest';
import { writeOutputSet, type ImageOutputSpec } from '../../server/src/cli/output/outputSet';
import {
  OutputError,
  nodeFileSystem,
  resolveOutputTarget,
  writeFileSafely,
  type FileSystemOps,
} from '../../server/src/cli/output/safeWriter';
import { imageFormats, readIntelHex, type ChipImage } from '../../server/src/core/encode/formats/index';

const scratch = fs.mkdtempSync(join(tmpdir(), 'phasewright-output-'));
afterAll(() => fs.rmSync(scratch, { recursive: true, force: true }));

let caseNumber = 0;
let folder = '';
let outside = '';
beforeEach(() => {
  caseNumber++;
  folder = join(scratch, `case${caseNumber}`, 'out');
  outside = join(scratch, `case${caseNumber}`, 'elsewhere');
  fs.mkdirSync(folder, { recursive: true });
  fs.mkdirSync(outside, { recursive: true });
});

const bytes = (text: string): Uint8Array => new Uint8Array(Buffer.from(text, 'latin1'));
const read = (file: string): string => fs.readFileSync(file, 'latin1');
const listing = (dir: string): string[] => fs.readdirSync(dir).sort();

function thrown(action: () => unknown): Error {
  try {
    action();
  } catch (error) {
    return error as Error;
  }
  throw new Error('expected an exception');
}

describe('writeFileSafely', () => {
  it('writes, reads back and reports size, SHA-256 and the 16-bit byte sum', () => {
    const report = writeFileSafely(folder, { name: 'rom0.bin', bytes: bytes('\x01\x02\xff') });
    expect(read(join(folder, 'rom0.bin'))).toBe('\x01\x02\xff');
    expect(report.sizeBytes).toBe(3);
    expect(report.sum16).toBe(0x102); // 1 + 2 + 255
    // SHA-256 of the same bytes as sha256sum (coreutils) would print it.
    expect(report.sha256).toBe(createHash('sha256').update(Buffer.from([1, 2, 0xff])).digest('hex'));
    expect(report.displayPath).toBe(join(folder, 'rom0.bin'));
    expect(listing(folder)).toEqual(['rom0.bin']);
  });

  it('replaces an existing file and leaves no temporary file behind', () => {
    fs.writeFileSync(join(folder, 'rom0.hex'), 'old');
    writeFileSafely(folder, { name: 'rom0.hex', bytes: bytes('new contents') });
    expect(read(join(folder, 'rom0.hex'))).toBe('new contents');
    expect(listing(folder)).toEqual(['rom0.hex']);
  });

  it('creates sub-folders inside the output folder', () => {
    writeFileSafely(folder, { name: 'main/lane0.hex', bytes: bytes('x') });
    expect(read(join(folder, 'main', 'lane0.hex'))).toBe('x');
  });

  it("refuses '..', absolute names and empty parts, writing nothing", () => {
    const refusals: [string, RegExp][] = [
      ['../escape.hex', /contains '\.\.'/],
      ['sub/../../escape.hex', /contains '\.\.'/],
      ['..\\escape.hex', /contains '\.\.'/],
      [join(outside, 'abs.hex'), /absolute path/],
      ['C:\\abs.hex', /absolute path/],
      ['', /empty/],
      ['a//b.hex', /empty or '\.' part/],
    ];
    for (const [name, reason] of refusals) {
      const error = thrown(() => writeFileSafely(folder, { name, bytes: bytes('x') }));
      expect(error).toBeInstanceOf(OutputError);
      expect(error.message).toMatch(/^cannot write /);
      expect(error.message).toMatch(reason);
    }
    expect(listing(folder)).toEqual([]);
    expect(listing(outside)).toEqual([]);
    expect(fs.existsSync(join(folder, '..', 'escape.hex'))).toBe(false);
  });

  it('refuses a symbolic link that leads out of the folder, allows one that stays inside', () => {
    fs.symlinkSync(outside, join(folder, 'link'));
    const error = thrown(() => writeFileSafely(folder, { name: 'link/rom.hex', bytes: bytes('x') }));
    expect(error.message).toBe(`cannot write ${join(folder, 'link', 'rom.hex')}: ${join(folder, 'link')} is a symbolic link leading outside the output folder`);
    expect(listing(outside)).toEqual([]);

    fs.mkdirSync(join(folder, 'real'));
    fs.symlinkSync(join(folder, 'real'), join(folder, 'inside'));
    writeFileSafely(folder, { name: 'inside/rom.hex', bytes: bytes('ok') });
    expect(read(join(folder, 'real', 'rom.hex'))).toBe('ok');
  });

  it('refuses a target that is itself a symbolic link, even to a file inside', () => {
    fs.writeFileSync(join(outside, 'victim.txt'), 'precious');
    fs.symlinkSync(join(outside, 'victim.txt'), join(folder, 'rom.hex'));
    fs.writeFileSync(join(folder, 'plain.txt'), 'inside');
    fs.symlinkSync(join(folder, 'plain.txt'), join(folder, 'alias.hex'));
    for (const name of ['rom.hex', 'alias.hex']) {
      const error = thrown(() => writeFileSafely(folder, { name, bytes: bytes('x') }));
      expect(error.message).toMatch(/the target is a symbolic link; refusing to write through it/);
    }
    expect(read(join(outside, 'victim.txt'))).toBe('precious');
    expect(read(join(folder, 'plain.txt'))).toBe('inside');
    expect(fs.lstatSync(join(folder, 'rom.hex')).isSymbolicLink()).toBe(true);
  });

  it('resolves without creating anything when asked not to', () => {
    const target = resolveOutputTarget(folder, 'new/dir/rom.hex', { createFolders: false });
    expect(target.exists).toBe(false);
    expect(fs.existsSync(join(folder, 'new'))).toBe(false);
  });

  describe('a failure part-way leaves the previous file intact', () => {
    /** The real file system with one call replaced. */
    const faulty = (overrides: Partial<FileSystemOps>): FileSystemOps => ({ ...nodeFileSystem, ...overrides });
    /** The real file system, but every read of a file whose path passes `test` gives 'nex...' (one byte changed). */
    const misreading = (test: (file: string) => boolean): FileSystemOps => {
      const paths = new Map<number, string>();
      return faulty({
        openSync: (file, flags, mode) => {
          const fd = nodeFileSystem.openSync(file, flags, mode);
          paths.set(fd, file);
          return fd;
        },
        readSync: (fd, buffer, offset, length, position) => {
          const n = nodeFileSystem.readSync(fd, buffer, offset, length, position);
          if (n > 0 && test(paths.get(fd) ?? '')) buffer[offset + n - 1] ^= 1;
          return n;
        },
      });
    };

    it('when the disk fills up in the middle of the data', () => {
      fs.writeFileSync(join(folder, 'rom0.hex'), 'previous image');
      let nCalls = 0;
      const full = faulty({
        writeSync: (fd, buffer, offset, length) => {
          nCalls++;
          if (nCalls > 1) throw Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
          return nodeFileSystem.writeSync(fd, buffer, offset, Math.min(length, 5));
        },
      });
      const error = thrown(() => writeFileSafely(folder, { name: 'rom0.hex', bytes: bytes('a new image, longer') }, { fs: full }));
      expect(error.message).toBe(
        `cannot write ${join(folder, 'rom0.hex')}: no space left on the device (ENOSPC); the previous file is unchanged`,
      );
      expect(nCalls).toBe(2);
      expect(read(join(folder, 'rom0.hex'))).toBe('previous image');
      expect(listing(folder)).toEqual(['rom0.hex']);
    });

    it('when the rename fails', () => {
      fs.writeFileSync(join(folder, 'rom0.hex'), 'previous image');
      const error = thrown(() =>
        writeFileSafely(folder, { name: 'rom0.hex', bytes: bytes('new') }, {
          fs: faulty({
            renameSync: () => {
              throw Object.assign(new Error('EACCES'), { code: 'EACCES' });
            },
          }),
        }),
      );
      expect(error.message).toMatch(/permission denied \(EACCES\); the previous file is unchanged$/);
      expect(read(join(folder, 'rom0.hex'))).toBe('previous image');
      expect(listing(folder)).toEqual(['rom0.hex']);
    });

    it('when the temporary copy reads back different', () => {
      fs.writeFileSync(join(folder, 'rom0.hex'), 'previous image');
      const error = thrown(() =>
        writeFileSafely(folder, { name: 'rom0.hex', bytes: bytes('new') }, {
          fs: misreading((file) => file.endsWith('.tmp')),
        }),
      );
      expect(error.message).toMatch(/temporary copy reads back different .*; the previous file is unchanged$/);
      expect(read(join(folder, 'rom0.hex'))).toBe('previous image');
      expect(listing(folder)).toEqual(['rom0.hex']);
    });

    it('and says so when the final file reads back different', () => {
      const error = thrown(() =>
        writeFileSafely(folder, { name: 'rom0.hex', bytes: bytes('new') }, {
          fs: misreading((file) => file.endsWith('rom0.hex')),
        }),
      );
      expect(error.message).toBe(`cannot verify ${join(folder, 'rom0.hex')}: the file was replaced but reads back different from what was meant; do not use it`);
    });
  });
});

describe('writeOutputSet and the manifest', () => {
  const image = (seed: number, nWords = 64): ChipImage => ({
    widthBits: 8,
    words: Uint8Array.from({ length: nWords }, (_, address) => (address * 31 + seed) & 0xff),
  });
  const spec = (name: string, chip: number, seed: number): ImageOutputSpec => ({
    name,
    format: 'ihex',
    store: 'main',
    chip,
    image: image(seed),
    options: { sourceName: 'demo.pw' },
  });
  const build = (files: ImageOutputSpec[], extra: Partial<Parameters<typeof writeOutputSet>[0]> = {}) =>
    writeOutputSet({
      folder,
      command: 'build',
      sourceFile: 'demo.pw',
      version: '0.1.0',
      files,
      now: () => new Date('2030-01-02T03:04:05.000Z'),
      ...extra,
    });
  const manifestOnDisk = (): Manifest => JSON.parse(read(join(folder, manifestFileName))) as Manifest;

  it('parses each image back from the bytes the disk gives back, and writes nothing when they are not the image meant', () => {
    // A writer that gets one word wrong (a bug in a format writer): the bytes on disk are the
    // ones written, so only parsing them back can tell.
    const format = imageFormats.ihex;
    const original = format.write;
    format.write = (img, options) => original({ ...img, words: Uint8Array.from(img.words, (w, i) => (i === 5 ? w ^ 1 : w)) }, options);
    try {
      const error = thrown(() => build([spec('rom0.hex', 0, 1)]));
      expect(error.message).toMatch(/the image read back from the disk is not the image meant .*nothing was written/);
      expect(listing(folder)).toEqual([]);
    } finally {
      format.write = original;
    }
    expect(build([spec('rom0.hex', 0, 1)]).files).toHaveLength(1);
  });

  it('writes the files and then a manifest describing them', () => {
    const report = build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 2)]);
    expect(listing(folder)).toEqual([manifestFileName, 'rom0.hex', 'rom1.hex']);
    const manifest = manifestOnDisk();
    expect(manifest).toMatchObject({ generator: 'phasewright', layout: 2, version: '0.1.0', complete: true, createdAt: '2030-01-02T03:04:05.000Z' });
    expect(manifest.caution).toMatch(/data sheets/);
    const rom0 = fs.readFileSync(join(folder, 'rom0.hex'));
    const expectedSum = Array.from(image(1).words).reduce((sum, value) => sum + value, 0) & 0xffff;
    expect(manifest.files[0]).toEqual({
      name: 'rom0.hex',
      format: 'ihex',
      command: 'build',
      source: 'demo.pw',
      store: 'main',
      chip: 0,
      widthBits: 8,
      words: 64,
      size: rom0.length,
      sha256: createHash('sha256').update(rom0).digest('hex'),
      sum16: expectedSum.toString(16).toUpperCase().padStart(4, '0'),
      crc32: expect.stringMatching(/^[0-9A-F]{8}$/),
    });
    const readBack = readIntelHex(rom0, 8);
    expect(readBack.ok && Array.from(readBack.value.words)).toEqual(Array.from(image(1).words));
    expect(report.files.map((file) => file.name)).toEqual(['rom0.hex', 'rom1.hex']);
    expect(report.manifest.name).toBe(manifestFileName);
    expect(readManifest(folder)).toEqual(manifest);
  });

  it('replaces files the previous manifest lists', () => {
    build([spec('rom0.hex', 0, 1)]);
    const before = read(join(folder, 'rom0.hex'));
    build([spec('rom0.hex', 0, 9)]);
    expect(read(join(folder, 'rom0.hex'))).not.toBe(before);
    expect(manifestOnDisk().files.map((file) => file.name)).toEqual(['rom0.hex']);
  });

  it('never replaces a file the previous manifest does not list, and writes nothing at all then', () => {
    fs.writeFileSync(join(folder, 'rom1.hex'), 'my own notes');
    const error = thrown(() => build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 2)]));
    expect(error).toBeInstanceOf(OutputError);
    expect(error.message).toBe(
      `cannot replace ${join(folder, 'rom1.hex')}: a file with this name is already in the output folder and Phasewright ` +
        `did not write it (${manifestFileName} does not list it); move it elsewhere or choose another output folder`,
    );
    expect(read(join(folder, 'rom1.hex'))).toBe('my own notes');
    expect(listing(folder)).toEqual(['rom1.hex']);

    // The same file is also protected when an older manifest exists but does not list it.
    fs.rmSync(join(folder, 'rom1.hex'));
    build([spec('rom0.hex', 0, 1)]);
    fs.writeFileSync(join(folder, 'rom1.hex'), 'my own notes');
    expect(() => build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 2)])).toThrow(/cannot replace .*rom1\.hex/);
    expect(read(join(folder, 'rom1.hex'))).toBe('my own notes');
  });

  it('leaves unrelated files alone', () => {
    fs.writeFileSync(join(folder, 'README.txt'), 'keep');
    build([spec('rom0.hex', 0, 1)]);
    expect(read(join(folder, 'README.txt'))).toBe('keep');
  });

  it('deletes nothing: outputs a new build no longer makes stay, reported and listed as stale; changed ones are no longer listed', () => {
    build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 2), spec('rom2.hex', 2, 3)]);
    fs.appendFileSync(join(folder, 'rom2.hex'), '; edited by hand\n');
    const report = build([spec('rom0.hex', 0, 1)]);
    expect(report.leftInPlace).toEqual(['rom1.hex']);
    expect(report.warnings).toEqual([expect.stringMatching(/rom2\.hex is left from an earlier build of demo\.pw and was changed since/)]);
    expect(listing(folder)).toEqual([manifestFileName, 'rom0.hex', 'rom1.hex', 'rom2.hex']);
    expect(manifestOnDisk().files.map((file) => [file.name, file.stale ?? false])).toEqual([['rom1.hex', true], ['rom0.hex', false]]);
    // The stale file is still ours: a later build that makes it again replaces it.
    build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 7)]);
    expect(manifestOnDisk().files.map((file) => [file.name, file.stale ?? false])).toEqual([['rom0.hex', false], ['rom1.hex', false]]);
    // The changed file is now the user's: a later build will not overwrite it.
    expect(() => build([spec('rom0.hex', 0, 1), spec('rom2.hex', 2, 3)])).toThrow(/cannot replace .*rom2\.hex/);
  });

  it('does not delete a file of the user\'s that an edited manifest lists with its correct SHA-256', () => {
    build([spec('rom0.hex', 0, 1)]);
    fs.writeFileSync(join(folder, 'thesis.tex'), 'two years of work');
    const edited = manifestOnDisk();
    const precious = fs.readFileSync(join(folder, 'thesis.tex'));
    edited.files.push({ ...edited.files[0]!, name: 'thesis.tex', size: precious.length, sha256: createHash('sha256').update(precious).digest('hex') });
    fs.writeFileSync(join(folder, manifestFileName), JSON.stringify(edited));
    const report = build([spec('rom0.hex', 0, 2)]);
    expect(read(join(folder, 'thesis.tex'))).toBe('two years of work');
    expect(report.leftInPlace).toEqual(['thesis.tex']);
  });

  it('keeps the outputs of other commands and sources, listed as they were', () => {
    build([spec('rom0.hex', 0, 1)]);
    writeOutputSet({ folder, command: 'fit', sourceFile: 'demo.pw', version: '0.1.0', files: [{ name: 'decode.jed', format: 'jedec', bytes: bytes('\x02fuse map*\x03') }] });
    build([spec('other.hex', 0, 3)], { sourceFile: 'other.pw' });
    const report = build([spec('rom0.hex', 0, 4)]);
    expect(report.leftInPlace).toEqual([]);
    expect(manifestOnDisk().files.map((file) => [file.name, file.command, file.source, file.stale ?? false])).toEqual([
      ['decode.jed', 'fit', 'demo.pw', false],
      ['other.hex', 'build', 'other.pw', false],
      ['rom0.hex', 'build', 'demo.pw', false],
    ]);
    expect(listing(folder)).toEqual(['decode.jed', 'other.hex', manifestFileName, 'rom0.hex']);
  });

  /** Every file in the folder (and below) with its bytes, for comparing whole folders. */
  const snapshot = (): Record<string, string> =>
    Object.fromEntries((fs.readdirSync(folder, { recursive: true }) as string[]).filter((name) => fs.statSync(join(folder, name)).isFile()).map((name) => [name, read(join(folder, name))]));

  it('is all or nothing: the disk filling up at the third file leaves exactly the previous set, and names that file', () => {
    build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 2)]);
    const before = snapshot();
    let opened = 0;
    const full: FileSystemOps = {
      ...nodeFileSystem,
      openSync: (file, flags, mode) => {
        if (flags === 'wx' && file.endsWith('.tmp') && ++opened === 3) throw Object.assign(new Error('ENOSPC: no space left on device'), { code: 'ENOSPC' });
        return nodeFileSystem.openSync(file, flags, mode);
      },
    };
    const error = thrown(() => build([spec('rom0.hex', 0, 5), spec('rom1.hex', 1, 6), spec('rom2.hex', 2, 7)], { fs: full }));
    expect(error.message).toBe(`cannot write ${join(folder, 'rom2.hex')}: no space left on the device (ENOSPC); nothing was changed in the folder`);
    expect(snapshot()).toEqual(before);
  });

  it('is all or nothing when a rename fails part-way: every previous file and the manifest are put back', () => {
    build([spec('rom0.hex', 0, 1), spec('rom1.hex', 1, 2)]);
    const before = snapshot();
    let renames = 0;
    const failing: FileSystemOps = {
      ...nodeFileSystem,
      renameSync: (from, to) => {
        if (to.endsWith('rom1.hex') && from.endsWith('.tmp')) throw Object.assign(new Error('EIO: i/o error'), { code: 'EIO' });
        renames++;
        nodeFileSystem.renameSync(from, to);
      },
    };
    const error = thrown(() => build([spec('rom0.hex', 0, 5), spec('rom1.hex', 1, 6), spec('rom2.hex', 2, 7)], { fs: failing }));
    expect(error.message).toBe(`cannot write ${join(folder, 'rom1.hex')}: EIO: i/o error; the folder keeps its previous files`);
    expect(renames).toBeGreaterThan(2); // the provisional manifest and rom0.hex went in, and came back out
    expect(snapshot()).toEqual(before);
    build([spec('rom0.hex', 0, 5), spec('rom1.hex', 1, 6), spec('rom2.hex', 2, 7)]);
    expect(manifestOnDisk().complete).toBe(true);
  });

  it('a build killed after the provisional manifest leaves a folder the next build finishes', () => {
    build([spec('rom0.hex', 0, 1)]);
    // What a kill between the renames leaves: the provisional manifest, old files, leftovers in the work folder.
    const provisional = manifestOnDisk();
    provisional.complete = false;
    provisional.files.push({ ...provisional.files[0]!, name: 'rom1.hex', size: null, sha256: null, sum16: null });
    fs.writeFileSync(join(folder, manifestFileName), JSON.stringify(provisional));
    fs.mkdirSync(join(folder, '.phasewright-work'));
    fs.writeFileSync(join(folder, '.phasewright-work', '.pw-0123456789.tmp'), 'half');
    fs.writeFileSync(join(folder, 'rom1.hex'), 'half-renamed');
    build([spec('rom0.hex', 0, 5), spec('rom1.hex', 1, 6)]);
    expect(manifestOnDisk().complete).toBe(true);
    expect(listing(folder)).toEqual([manifestFileName, 'rom0.hex', 'rom1.hex']);
  });

  it('reports a damaged manifest clearly and writes nothing', () => {
    const damaged: [string, RegExp][] = [
      ['{ "generator": "phasewright", "files": [', /it is not valid JSON \(/],
      ['[]', /it does not hold a JSON object/],
      ['{"generator":"someone-else"}', /it was not written by Phasewright \(generator is "someone-else"\)/],
      [
        JSON.stringify({ generator: 'phasewright', version: '1', createdAt: 'x', source: 's', caution: 'c', complete: true, files: {} }),
        /"files" is missing or not a list/,
      ],
      [
        JSON.stringify({
          generator: 'phasewright', version: '1', createdAt: 'x', source: 's', caution: 'c', complete: true,
          files: [{ name: '../../etc/passwd', format: 'ihex', size: 1, sha256: null, sum16: null }],
        }),
        /files\[0\]\.name "\.\.\/\.\.\/etc\/passwd" is not a safe output name/,
      ],
      [
        JSON.stringify({
          generator: 'phasewright', version: '1', createdAt: 'x', source: 's', caution: 'c', complete: true,
          files: [{ name: 'rom0.hex', format: 'ihex', size: 1, sha256: null, sum16: null }],
        }),
        /files\[0\] has no size, sha256 or sum16 although the manifest says the build completed/,
      ],
    ];
    for (const [text, reason] of damaged) {
      fs.writeFileSync(join(folder, manifestFileName), text);
      const error = thrown(() => build([spec('rom0.hex', 0, 1)]));
      expect(error).toBeInstanceOf(ManifestError);
      expect(error.message).toMatch(new RegExp(`^cannot use ${join(folder, manifestFileName).replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')}: `));
      expect(error.message).toMatch(reason);
      expect(error.message).toMatch(/move the folder's contents elsewhere or choose another output folder\.$/);
      expect(listing(folder)).toEqual([manifestFileName]);
    }
  });

  it('accepts a well-formed manifest it did not just write (the parser does not fire on good input)', () => {
    const text = JSON.stringify({
      generator: 'phasewright', version: '1', createdAt: 'x', source: 's', caution: 'c', complete: false,
      files: [{ name: 'a/rom0.hex', format: 'ihex', size: null, sha256: null, sum16: null, store: 'main', chip: 0 }],
    });
    // A layout-1 manifest (one source for the folder): its entries take that source and the command of their format.
    expect(parseManifest(text, 'm.json').files).toEqual([
      { name: 'a/rom0.hex', format: 'ihex', command: 'build', source: 's', size: null, sha256: null, sum16: null, store: 'main', chip: 0 },
    ]);
  });

  it('refuses duplicate names, the manifest name and a folder that is a file', () => {
    expect(() => build([spec('rom0.hex', 0, 1), spec('ROM0.hex', 1, 2)])).toThrow(/produces both rom0\.hex and ROM0\.hex/);
    expect(() => build([spec(manifestFileName, 0, 1)])).toThrow(/reserved for the output manifest/);
    expect(listing(folder)).toEqual([]);
    const notAFolder = join(outside, 'file');
    fs.writeFileSync(notAFolder, 'x');
    expect(() => build([spec('rom0.hex', 0, 1)], { folder: notAFolder })).toThrow(`cannot use ${notAFolder}: a file has that name`);
  });

  it('creates a missing output folder and takes non-image files too', () => {
    const fresh = join(outside, 'new', 'out');
    const report = build([], { folder: fresh });
    expect(report.files).toEqual([]);
    expect(listing(fresh)).toEqual([manifestFileName]);
    const withPlain = writeOutputSet({
      folder: fresh,
      command: 'fit',
      sourceFile: 'demo.pw',
      version: '0.1.0',
      files: [{ name: 'decode.jed', format: 'jedec', bytes: bytes('\x02fuse map*\x03'), sum16: 0x1234 }],
    });
    expect(withPlain.files[0]!.entry).toMatchObject({ name: 'decode.jed', format: 'jedec', sum16: '1234' });
    expect(listing(fresh)).toEqual(['decode.jed', manifestFileName]);
  });
});

describe('names the file system takes as they are', () => {
  const image = (): ChipImage => ({ widthBits: 8, words: Uint8Array.from({ length: 16 }, (_, a) => a) });

  it('writes a file whose name is 250 characters long (the temporary name is short, not the name plus a suffix)', () => {
    // 255 bytes is the name limit of ext4, XFS and tmpfs (common practice, no source).
    const name = `${'s'.repeat(230)}.main.chip0.hex`;
    const report = writeOutputSet({ folder, command: 'build', sourceFile: 'x.pwt', version: '0', files: [{ name, format: 'ihex', store: 'main', chip: 0, image: image() }] });
    expect(report.files[0]!.name).toBe(name);
    expect(listing(folder)).toEqual([manifestFileName, name]);
  });

  it('keeps a folder and file name that are not UTF-8 byte for byte', () => {
    // 0xE9 alone is not UTF-8 (it starts a three-byte sequence); it stands for itself as U+DCE9.
    const out = join(folder, 'caf\udce9');
    const report = writeOutputSet({ folder: out, command: 'build', sourceFile: 'caf\udce9.pwt', version: '0', files: [{ name: 'caf\udce9.main.chip0.bin', format: 'bin', store: 'main', chip: 0, image: image() }] });
    const raw = fs.readdirSync(Buffer.from(folder), { encoding: 'buffer' });
    expect(raw.map((b) => b.toString('hex'))).toEqual([Buffer.from([0x63, 0x61, 0x66, 0xe9]).toString('hex')]);
    const inside = fs.readdirSync(Buffer.concat([Buffer.from(folder + '/'), Buffer.from([0x63, 0x61, 0x66, 0xe9])]), { encoding: 'buffer' }).map((b) => b.toString('latin1')).sort();
    expect(inside).toEqual(['caf\xe9.main.chip0.bin', manifestFileName]);
    expect(report.files[0]!.sizeBytes).toBe(16);
    // The manifest keeps the name exactly (JSON escapes the lone surrogate), so the next build replaces the file.
    expect(readManifest(out)!.files[0]!.name).toBe('caf\udce9.main.chip0.bin');
    expect(() => writeOutputSet({ folder: out, command: 'build', sourceFile: 'caf\udce9.pwt', version: '0', files: [{ name: 'caf\udce9.main.chip0.bin', format: 'bin', store: 'main', chip: 0, image: image() }] })).not.toThrow();
  });
});

describe('the folder lock', () => {
  const files = () => [{ name: 'rom.bin', format: 'bin' as const, store: 'main', chip: 0, image: { widthBits: 8 as const, words: new Uint8Array(4) } }];
  const lockFile = () => join(folder, '.phasewright.lock');

  it('waits a bounded time for a live owner, then refuses naming it, and writes nothing', () => {
    // The test runner's parent is alive for the whole test.
    fs.writeFileSync(lockFile(), JSON.stringify({ pid: process.ppid, host: hostname(), since: '2030-01-01T00:00:00.000Z' }));
    const error = thrown(() => writeOutputSet({ folder, command: 'build', sourceFile: 'x.pwt', version: '0', files: files(), lockWaitMs: 200 }));
    expect(error.message).toBe(
      `cannot write into ${folder}: another Phasewright run (process ${process.ppid} on ${hostname()}, since 2030-01-01T00:00:00.000Z) is writing into this folder; nothing was written. ` +
        `Try again when it has finished, or choose another output folder (if no such run exists, delete ${lockFile()})`,
    );
    expect(listing(folder)).toEqual(['.phasewright.lock']);
  });

  it('takes over a lock whose process no longer exists, and releases its own', () => {
    const gone = spawnSync(process.execPath, ['-e', '0']).pid!;
    fs.writeFileSync(lockFile(), JSON.stringify({ pid: gone, host: hostname(), since: '2030-01-01T00:00:00.000Z' }));
    writeOutputSet({ folder, command: 'build', sourceFile: 'x.pwt', version: '0', files: files(), lockWaitMs: 200 });
    expect(listing(folder)).toEqual([manifestFileName, 'rom.bin']);
  });

  it('is released when the run fails', () => {
    fs.writeFileSync(join(folder, 'rom.bin'), 'mine');
    expect(() => writeOutputSet({ folder, command: 'build', sourceFile: 'x.pwt', version: '0', files: files() })).toThrow(/cannot replace/);
    expect(fs.existsSync(lockFile())).toBe(false);
  });
});
