// Hostile input files for the command line, run in child processes with a small heap
// (--max-old-space-size) so that reading without bound or a quadratic walk fails the test by
// running out of memory, not by a timer: device files and FIFOs in every place a path is
// read, and a file that is not a table where one is expected. Each must end with one line
// and exit 2.
import { beforeAll, describe, expect, it } from 'vitest';
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { bigMapTable, store24Table, unterminatedSymbolsElf } from '../support/hostile';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/hostile-inputs');
const cli = join(root, 'dist/cli.js');
const demo = join(root, 'examples/halyard-32.pwt');
const fifo = join(tmp, 'fifo');

/** Runs the CLI with a 64 MB heap; the timeout only keeps a hang from stalling the suite. */
export function boundedCli(args: string[], heapMb = 64): { status: number | null; signal: string | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [`--max-old-space-size=${heapMb}`, cli, ...args], { cwd: root, encoding: 'utf8', timeout: 60_000 });
  return { status: r.status, signal: r.signal, stdout: r.stdout, stderr: r.stderr };
}

beforeAll(() => {
  execFileSync('npm', ['run', 'build', '--silent'], { cwd: root });
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(tmp, { recursive: true });
  execFileSync('mkfifo', [fifo]);
});

describe('paths that are not regular files', () => {
  // Every option and argument the CLI reads a file from, with /dev/zero (endless) and a FIFO
  // nobody writes to (an open without O_NONBLOCK would wait forever).
  const places: [string, (path: string) => string[], string][] = [
    ['a table to check', (p) => ['check', p], 'a .pwt file'],
    ['a table to build', (p) => ['build', p, '--out', join(tmp, 'out')], 'a .pwt file'],
    ['a table to diff', (p) => ['diff', demo, p], 'a .pwt file'],
    ['a table to draw', (p) => ['diagram', p, '--class', 'OP', '-o', join(tmp, 'd.svg')], 'a .pwt file'],
    ['a table to budget', (p) => ['budget', p], 'a .pwt file'],
    ['a severity configuration', (p) => ['check', '--config', p, demo], 'a JSON file'],
    ['a severity configuration for build', (p) => ['build', demo, '--config', p, '--out', join(tmp, 'out')], 'a JSON file'],
    ['a program to run', (p) => ['run', demo, p], 'an ELF file or a raw binary image'],
    ['a pin file', (p) => ['fit', demo, '--device', 'gal22v10', '--pins', p], 'a JSON file'],
  ];
  for (const [where, argsOf, give] of places) {
    it(`refuses /dev/zero and a FIFO as ${where}, in one line, exit 2, within a 64 MB heap`, () => {
      for (const [path, kind] of [['/dev/zero', 'a character device'], [fifo, 'a FIFO (named pipe)']]) {
        const r = boundedCli(argsOf(path));
        expect(r.signal, `${where}: ${path}`).toBeNull();
        expect(r.status, `${where}: ${path}: ${r.stderr}`).toBe(2);
        expect(r.stderr.trim().split('\n'), `${where}: ${path}`).toHaveLength(1);
        expect(r.stderr).toContain(`${path} is ${kind}, not a regular file; give ${give}`);
      }
    });
  }
});

describe('quadratic inputs', () => {
  it('checks a decode map of 12 000 rows that all overlap within a 64 MB heap: 100 shown, the rest counted', () => {
    const file = join(tmp, 'map.pwt');
    writeFileSync(file, bigMapTable(12_000, 'overlapping'));
    const r = boundedCli(['check', file]);
    expect(r.signal).toBeNull();
    expect(r.status, r.stderr).toBe(1);
    const lines = r.stdout.split('\n').filter((l) => l.includes('[map-overlap]'));
    expect(lines).toHaveLength(101);
    expect(r.stdout).toContain('11899 more row(s) of map fn overlap an earlier row that gives a different value (the first 100 are shown)');
  });

  it('runs a 2 MB ELF whose 65 536 symbols point into one unterminated name table, within a 64 MB heap', () => {
    const elf = join(tmp, 'names.elf');
    writeFileSync(elf, unterminatedSymbolsElf(65_536, 1024 * 1024));
    const r = boundedCli(['run', demo, elf, '--max-steps', '1000']);
    expect(r.signal).toBeNull();
    // The program is one ADDI followed by zeros; the demo runs word 0 as a LOAD (its opcode
    // bits select that class) where the reference stops: a divergence, exit 3.
    expect(r.status, r.stderr).toBe(3);
    expect(r.stderr).toContain('note: the symbol name table does not end with a NUL byte');
    expect(r.stderr).toContain('note: 65536 symbol name(s) are longer than 1024 characters and were cut to that length');
  });
});

describe('a store of 24 address lines', () => {
  it('builds its listing (over 512 MB, more than one string can hold) and images within a 128 MB heap', () => {
    const file = join(tmp, 'wide.pwt');
    writeFileSync(file, store24Table(readFileSync(demo, 'utf8'), '_has_a_long_descriptive_class_name_and_longer_still_and_even_longer_now'));
    const out = join(tmp, 'wide-out');
    const r = boundedCli(['build', file, '--out', out, '--format', 'bin,list'], 128);
    expect(r.signal).toBeNull();
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('store main: 24 address lines (16777216 words)');
    const listing = statSync(join(out, 'wide.main.lst')).size;
    // V8 strings hold at most 2^29 - 24 characters (V8's String::kMaxLength on 64-bit hosts, from memory).
    expect(listing).toBeGreaterThan(2 ** 29);
    expect(r.stdout).toMatch(new RegExp(`wide\\.main\\.lst +${listing} bytes`));
    expect(statSync(join(out, 'wide.main.chip0.bin')).size).toBe(16 * 1024 * 1024);
    expect(readdirSync(out).sort()).toEqual(['phasewright-manifest.json', 'wide.main.chip0.bin', 'wide.main.chip1.bin', 'wide.main.chip2.bin', 'wide.main.chip3.bin', 'wide.main.lst']);
    rmSync(out, { recursive: true, force: true });
  }, 120_000);
});

