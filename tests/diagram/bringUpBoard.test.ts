// The bring-up board (core/diagram/bringUpBoard.ts) and its webview page (client/src/bringUpWebview.ts).
// One source of truth: every LED the board draws, read back from the SVG by its circle's class,
// must equal the bit pattern `phasewright trace --csv` writes for the same cycle (the CLI run as
// a user runs it). Exact values on tests/programs/debugdemo.S, by the RV32I unprivileged spec
// (chapter 2): ADDI x10,x0,5 and ADDI x11,x0,7 (2.4), JAL at 0x10008 writes pc + 4 = 0x1000c to
// x1 (2.5), ADD x10,x10,x11 is the R-type word 0x00b50533 (2.4: funct7 0, rs2 11, rs1 10,
// funct3 0, rd 10, opcode 0110011) and puts 5 + 7 = 12 on the result bus in its step 2.
// add3 stands at 0x10038: _start is fourteen 4-byte instructions (`la` is auipc + addi) from
// 0x10000 (tests/programs/link.ld).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { bringUpHtml } from '../../client/src/bringUpWebview';
import { type BringUpTable, bringUpRows } from '../../server/src/core/debug/bringUp';
import { bringUpBoard } from '../../server/src/core/diagram/bringUpBoard';
import { prepareTable } from '../../server/src/core/sim/session';
import { buildPrograms } from '../programs/build.mjs';
import { haveTools } from '../support/tools';

const REPO = join(__dirname, '..', '..');
const CLI = join(REPO, 'dist', 'cli.js');
const DEMO = join(REPO, 'examples/halyard-32.pwt');
const symbol = { '1': 'on', '0': 'off', z: 'z', x: 'x' } as const;

/** Every row of LEDs the board draws: name -> pattern, most significant first, read from the circles' classes and bit numbers. */
function drawnLeds(svg: string): Map<string, { kind: string; pattern: string; changed: boolean }> {
  const rows = new Map<string, { kind: string; pattern: string; changed: boolean }>();
  for (const g of svg.matchAll(/<g class="ind" data-name="([^"]+)" data-kind="(\w+)"( data-changed="1")?>([\s\S]*?)<\/g>/g)) {
    const leds = [...g[4].matchAll(/<circle class="led (\w+)" cx="([\d.]+)"[^>]*data-bit="(\d+)"\/>/g)].map((m) => ({ cls: m[1], x: Number(m[2]), bit: Number(m[3]) }));
    // Drawn left to right, most significant bit first, one LED per bit.
    expect(leds.map((l) => l.bit)).toEqual(Array.from({ length: leds.length }, (_, i) => leds.length - 1 - i));
    expect(leds.every((l, i) => i === 0 || l.x > leds[i - 1].x)).toBe(true);
    const pattern = leds.map((l) => Object.entries(symbol).find(([, c]) => c === l.cls)![0]).join('');
    rows.set(g[1].replace(/&lt;/g, '<').replace(/&amp;/g, '&'), { kind: g[2], pattern, changed: !!g[3] });
  }
  return rows;
}

/** The CSV of `phasewright trace` as header + rows (its labels hold no commas or quotes, which is checked). */
function traceCsv(elf: string, from: number, count: number): { header: string[]; rows: string[][] } {
  const out = join(mkdtempSync(join(tmpdir(), 'pw-board-')), 'leds.csv');
  execFileSync(process.execPath, [CLI, 'trace', DEMO, elf, '--from', String(from), '--count', String(count), '--csv', out], { cwd: REPO, stdio: 'pipe' });
  const lines = readFileSync(out, 'utf8').split('\r\n').filter(Boolean);
  expect(lines.some((l) => l.includes('"'))).toBe(false);
  const [header, ...rows] = lines.map((l) => l.split(','));
  return { header, rows };
}

function rowsOf(elf: string, from: number, count: number): BringUpTable {
  const prepared = prepareTable({ text: readFileSync(DEMO, 'utf8'), sourceName: 'halyard-32.pwt', program: readFileSync(elf) });
  if (!prepared.ok) throw new Error(prepared.reason);
  return bringUpRows(prepared.plan, prepared.program, { from, count, lines: prepared.analysis.lines });
}

/** Compares the board of every cycle of the range with the CSV's row of that cycle, LED by LED. */
function expectBoardsEqualCsv(table: BringUpTable, csv: { header: string[]; rows: string[][] }): void {
  expect(table.rows.map((r) => String(r.cycle))).toEqual(csv.rows.map((r) => r[0]));
  // Columns from step_counter on: the step counter, the groups, the chips (names repeat: pc and ir are also columns 4 and 5).
  const first = csv.header.indexOf('step_counter');
  const names = ['step', ...csv.header.slice(first + 1)];
  for (const [i, row] of table.rows.entries()) {
    const drawn = drawnLeds(bringUpBoard(table, { cycle: row.cycle }).svg);
    expect([...drawn.keys()]).toEqual(names);
    expect(names.map((n) => drawn.get(n)!.pattern)).toEqual(csv.rows[i].slice(first));
  }
}

describe.skipIf(!haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf'))('the bring-up board', () => {
  let debugdemo = '';
  let crc = '';
  beforeAll(() => {
    execFileSync(process.execPath, [join(REPO, 'scripts/build.mjs')], { cwd: REPO });
    [debugdemo, crc] = buildPrograms({ names: ['debugdemo', 'crc_sieve'] }).map((p) => p.elfPath);
  }, 180_000);

  it('draws at the first add of debugdemo what the RV32I spec says the registers and buses hold', () => {
    const table = rowsOf(debugdemo, 0, 13);
    const board = bringUpBoard(table, { current: 12, theme: 'light' });
    expect(board.cycle).toBe(12);
    const drawn = drawnLeds(board.svg);
    const value = (name: string) => parseInt(drawn.get(name)!.pattern, 2);
    expect(drawn.get('step')!.pattern).toBe('010');
    expect(value('x10')).toBe(5);
    expect(value('x11')).toBe(7);
    expect(value('x1')).toBe(0x1000c);
    expect(value('left')).toBe(5);
    expect(value('right')).toBe(7);
    expect(value('result')).toBe(12);
    expect(value('ir')).toBe(0x00b50533);
    expect(value('pc')).toBe(0x10038);
    expect(drawn.get('x10')!.kind).toBe('register');
    expect(drawn.get('result')!.kind).toBe('bus');
    expect(drawn.get('pc')!.kind).toBe('part');
    expect(drawn.get('chip0')!.kind).toBe('chip');
    // The demo declares no LEDs on mar and t: no rows for them.
    expect(drawn.has('mar')).toBe(false);
    expect(drawn.has('t')).toBe(false);
    // Changed since cycle 11 (fetch step 1, which loaded ir at its closing edge): the step counter, ir, the buses; not x10 or pc.
    expect([...drawn].filter(([, r]) => r.changed).map(([n]) => n)).toEqual(['step', 'left', 'right', 'result', 'ir', 'chip0', 'chip1', 'chip2', 'chip3']);
    const line = readFileSync(DEMO, 'utf8').split('\n').findIndex((l) => l.startsWith('  2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn')) + 1;
    expect(board.svg).toContain(`>cycle 12 · step 2 · class OP step 2 (line ${line})</text>`);
    expect(board.svg).toContain('>pc 0x00010038 · ir 0x00b50533 · add x10,x10,x11</text>');
    // The strip: one cell per cycle, the shown one selected, the session's marked.
    expect([...board.svg.matchAll(/<g class="([^"]+)" data-pick="(\d+)"/g)].map((m) => `${m[2]}:${m[1]}`)).toEqual([...Array.from({ length: 12 }, (_, i) => `${i}:cell`), '12:cell sel now']);
    // Bit numbers every 8 bits over 32-bit rows, every 4 over the 8-bit chips, 0 over the 3-bit step counter.
    const rulers = [...board.svg.matchAll(/data-ruler="1">(\d+)</g)].map((m) => Number(m[1]));
    expect(rulers).toEqual([0, 0, 8, 16, 24, 0, 8, 16, 24, 0, 8, 16, 24, 0, 4]);
    // Bits of equal weight stand in one column: bit 0 of x10, of chip0 and of the step counter.
    const bit0 = (name: string) => board.svg.match(new RegExp(`data-name="${name}"[^>]*>[\\s\\S]*?cx="([\\d.]+)"[^>]*data-bit="0"`))![1];
    expect(bit0('chip0')).toBe(bit0('x10'));
    expect(bit0('step')).toBe(bit0('x10'));
    expect(board.svg).toContain('data-theme="light"');
    expect(board.svg).toContain('--pw-signal:#3358c4');
  });

  it('draws every LED of debugdemo cycles 0..12 as `phasewright trace --csv` writes it', () => {
    expectBoardsEqualCsv(rowsOf(debugdemo, 0, 13), traceCsv(debugdemo, 0, 13));
  });

  it('draws every LED of crc_sieve cycles 100000..100015 as `phasewright trace --csv` writes it', () => {
    const table = rowsOf(crc, 100_000, 16);
    expect(table.rows.length).toBe(16);
    expectBoardsEqualCsv(table, traceCsv(crc, 100_000, 16));
  });

  it('shows the cycle picked, and the last of the range when the pick is outside it', () => {
    const table = rowsOf(debugdemo, 0, 13);
    expect(bringUpBoard(table, { cycle: 3 }).svg).toContain('>cycle 3 · step 0 · phase fetch step 0 (class OP-IMM) (line 76)</text>');
    expect(bringUpBoard(table, { cycle: 40 }).cycle).toBe(12);
    expect(bringUpBoard(table, { cycle: 40, current: 5 }).cycle).toBe(12);
    expect(bringUpBoard(table, { current: 5 }).cycle).toBe(5);
  });

  it('says so when the range starts after the program ended', () => {
    const table = rowsOf(debugdemo, 10_000, 4);
    const board = bringUpBoard(table);
    expect(board.cycle).toBeUndefined();
    expect(board.svg).toContain('>Bring-up: no cycles in this range</text>');
    expect(board.svg).toContain('>(the program exited with code 15)</text>');
  });
});

describe('the bring-up board of hand-made rows', () => {
  const table: BringUpTable = {
    stepBits: 2,
    groups: [
      { name: 'a<b', kind: 'bus', leds: 4 },
      { name: 'q', kind: 'part', leds: 4 },
    ],
    chips: [{ name: 'chip0', widthBits: 8 }],
    rows: [
      { cycle: 7, step: 1, pc: 0x100, ir: 0x13, label: 'class X step 1', addresses: [5], leds: ['zzzz', '0110'], chips: ['10000001'] },
      { cycle: 8, step: 2, pc: 0x100, ir: 0x13, label: 'class X step 2', addresses: [6], leds: ['x1x0', '0110'], chips: ['10000001'] },
    ],
  };

  it('draws floating and undefined LEDs apart from 0 and 1, and escapes names', () => {
    const first = bringUpBoard(table, { cycle: 7, theme: 'dark' });
    const drawn = drawnLeds(first.svg);
    expect(drawn.get('a<b')).toEqual({ kind: 'bus', pattern: 'zzzz', changed: false });
    expect(first.svg).toContain('data-name="a&lt;b"');
    expect(first.svg).toContain('>a&lt;b</text>');
    expect(first.svg).toMatch(/<text [^>]*>floating<\/text>/);
    const second = drawnLeds(bringUpBoard(table, { cycle: 8 }).svg);
    expect(second.get('a<b')).toEqual({ kind: 'bus', pattern: 'x1x0', changed: true });
    expect(second.get('q')).toEqual({ kind: 'part', pattern: '0110', changed: false });
    expect(second.get('step')).toEqual({ kind: 'step', pattern: '10', changed: true });
    expect(bringUpBoard(table, { cycle: 8 }).svg).toMatch(/<text [^>]*>undefined<\/text>/);
    expect(first.svg).toContain('data-theme="dark"');
  });

  it('follows the workbench theme in the host palette', () => {
    const svg = bringUpBoard(table, { theme: 'host' }).svg;
    expect(svg).toContain('--pw-signal:var(--vscode-charts-blue,#3358c4)');
  });
});

describe('the bring-up webview page', () => {
  it('runs only its own script and offers follow, from and count', () => {
    const html = bringUpHtml('vscode-resource:', 'n0nce');
    expect(html).toContain("script-src 'nonce-n0nce';");
    expect(html).toContain("default-src 'none'");
    expect(html.match(/<script/g)).toEqual(['<script']);
    expect(html).toContain('<script nonce="n0nce">');
    for (const id of ['follow', 'from', 'count', 'show', 'board', 'status', 'problem']) expect(html).toContain(`id="${id}"`);
    expect(html).toContain('max="256"');
  });
});
