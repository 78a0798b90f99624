// `phasewright build` and `phasewright diff` as a user runs them: refusal on errors, --force,
// format and store selection, the manifest, safety of the output folder, and the chip diff.
import { beforeEach, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/cli-build');

async function run(...args: string[]) {
  const io = memoryIo(root);
  const code = await runCommand(args, io);
  return { code, out: io.stdout, err: io.stderr };
}

beforeEach(() => {
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(tmp, { recursive: true });
});

describe('phasewright build', () => {
  it('names the source file in the $readmemh header and the S-record S0 record, as the listing and manifest do', async () => {
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/named', '--format', 'memh,srec')).code).toBe(0);
    const memh = readFileSync(join(tmp, 'named/halyard-32.main.chip2.memh'), 'utf8').split('\n');
    expect(memh.slice(0, 3)).toEqual([
      '// Phasewright control-store image for $readmemh (IEEE 1364-2005, 17.2.9)',
      '// source: halyard-32.pwt',
      '// store main, chip 2 of 4 (bits 23..16 of the 32-bit word)',
    ]);
    // Motorola S-record: S0 = count, a 16-bit address of 0000, the header bytes (here the
    // module name in ASCII), a one's-complement checksum (published format description).
    const s0 = readFileSync(join(tmp, 'named/halyard-32.main.chip0.srec'), 'utf8').split('\n')[0];
    expect(s0.slice(0, 8)).toBe(`S0${(2 + 1 + 'halyard-32.pwt'.length).toString(16).toUpperCase().padStart(2, '0')}0000`);
    expect(Buffer.from(s0.slice(8, -2), 'hex').toString('latin1')).toBe('halyard-32.pwt');
  });

  it('deletes nothing when a build makes fewer files: it lists what it left in place', async () => {
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/fewer', '--format', 'bin,list')).code).toBe(0);
    const r = await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/fewer', '--format', 'bin');
    expect(r.code).toBe(0);
    expect(r.out).toContain('left in place: 1 file an earlier build of this table made and this one does not (Phasewright deletes nothing; remove it if no longer needed):\n  halyard-32.main.lst\n');
    expect(existsSync(join(tmp, 'fewer/halyard-32.main.lst'))).toBe(true);
  });

  it('shows a progress line on a terminal (stderr), cleared before the summary, and none when piped', async () => {
    const io = { ...memoryIo(root), errIsTty: true };
    const tty = Object.assign(io, { stderr: '' });
    tty.err = (text: string) => {
      tty.stderr += text;
    };
    expect(await runCommand(['build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/tty'], tty)).toBe(0);
    expect(tty.stderr).toMatch(/^\r\x1b\[Kbuild: 0% \(0\/17\) halyard-32\.main\.chip0\.hex/);
    expect(tty.stderr.endsWith('\r\x1b[K')).toBe(true);
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/piped')).err).toBe('');
  });

  it('writes every chip in every format, a listing and a manifest, and prints a summary', async () => {
    const r = await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/out');
    expect(r.code).toBe(0);
    expect(r.out).toContain('store main: 13 address lines (8192 words), 32-bit word on 4 chips of 8 bits (28C64); 1202 words from the table, 6990 fill');
    expect(r.out).toContain('Caution: check every image');
    const files = readdirSync(join(tmp, 'out')).sort();
    expect(files).toHaveLength(18);
    expect(files).toContain('halyard-32.main.chip3.srec');
    expect(files).toContain('phasewright-manifest.json');
    const manifest = JSON.parse(readFileSync(join(tmp, 'out/phasewright-manifest.json'), 'utf8'));
    expect(manifest.complete).toBe(true);
    const bin0 = manifest.files.find((f: { name: string }) => f.name === 'halyard-32.main.chip0.bin');
    const bytes = readFileSync(join(tmp, 'out/halyard-32.main.chip0.bin'));
    // The 16-bit byte sum a device programmer shows (common practice, no source).
    const sum = bytes.reduce((a, b) => (a + b) & 0xffff, 0);
    expect(bin0).toMatchObject({ size: 8192, sum16: sum.toString(16).toUpperCase().padStart(4, '0'), chip: 0, store: 'main' });
    expect(bin0.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it('refuses a table with errors and writes nothing; --force writes and says so', async () => {
    const refused = await run('build', 'examples/faults/bus-contention.pwt', '--out', 'tests/.tmp/cli-build/bad');
    expect(refused.code).toBe(1);
    expect(refused.err).toContain('has 1 error(s); no images were written');
    expect(existsSync(join(tmp, 'bad'))).toBe(false);
    const forced = await run('build', 'examples/faults/bus-contention.pwt', '--out', 'tests/.tmp/cli-build/bad', '--force', '--format', 'bin');
    expect(forced.code).toBe(0);
    expect(forced.out).toMatch(/^WARNING: built with --force although the table has 1 error\(s\); do not program these images into chips\./);
    expect(readdirSync(join(tmp, 'bad')).sort()).toEqual(['bus-contention.main.chip0.bin', 'phasewright-manifest.json']);
  });

  it('writes only the formats asked for, and refuses unknown formats and stores', async () => {
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/some', '--format', 'memh,list')).code).toBe(0);
    expect(readdirSync(join(tmp, 'some')).filter((f) => !f.endsWith('.json')).map((f) => f.split('.').pop()).sort()).toEqual(['lst', 'memh', 'memh', 'memh', 'memh']);
    const badFormat = await run('build', 'examples/halyard-32.pwt', '--format', 'hex');
    expect(badFormat).toMatchObject({ code: 2 });
    expect(badFormat.err).toContain("unknown format 'hex'; choose from ihex, srec, bin, memh, list");
    const badStore = await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/x', '--store', 'decoder');
    expect(badStore.code).toBe(2);
    expect(badStore.err).toContain("no store named 'decoder'; the file has main");
  });

  it('never overwrites a file the manifest does not list, and overwrites its own files', async () => {
    mkdirSync(join(tmp, 'mine'));
    writeFileSync(join(tmp, 'mine/halyard-32.main.chip0.bin'), 'my own notes');
    const r = await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/mine', '--format', 'bin');
    expect(r.code).toBe(1);
    expect(r.err).toContain('halyard-32.main.chip0.bin');
    expect(readFileSync(join(tmp, 'mine/halyard-32.main.chip0.bin'), 'utf8')).toBe('my own notes');
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/again', '--format', 'bin')).code).toBe(0);
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/cli-build/again', '--format', 'bin')).code).toBe(0);
  });
});

describe('phasewright diff', () => {
  it('exits 0 for identical tables and 1 naming the chip, addresses, class, step and field that changed', async () => {
    expect((await run('diff', 'examples/halyard-32.pwt', 'examples/halyard-32.pwt')).code).toBe(0);
    const text = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8').replace('100 0 xor', '100 0 or ');
    writeFileSync(join(tmp, 'changed.pwt'), text);
    const r = await run('diff', 'examples/halyard-32.pwt', 'tests/.tmp/cli-build/changed.pwt');
    expect(r.code).toBe(1);
    expect(r.out.split('\n')).toEqual([
      'store main chip 0: unchanged',
      'store main chip 1: unchanged',
      'store main chip 2: 2 addresses changed',
      '  0x0C82  class OP step 2        step=2 taken=0 f7b5=0 funct3=100 opcode=01100  alu.fn xor -> or',
      '  0x0C8A  class OP step 2        step=2 taken=1 f7b5=0 funct3=100 opcode=01100  alu.fn xor -> or',
      'store main chip 3: unchanged',
      're-program: chip 2 of store main',
      '',
    ]);
  });
});
