// The bring-up board as an SVG document (a string; no DOM): what the board's indicators should
// show during one microcycle of a range, drawn as rows of LEDs, for a builder who single-steps
// the real clock and compares LED by LED. On top, one cell per cycle of the range (cycle number
// and step; the page picks a cycle by a cell's `data-pick`); below, for the chosen cycle: the
// step counter, every bus, register and part that declares `leds=`, and each chip's output
// word as burned. LEDs are right-aligned on bit 0 so bits of equal weight stand in one column,
// with a gap every 4 bits and the bit number every 8 (every 4 where a section is 8 bits or
// narrower). A name drawn in colour changed since the cycle before.
//
// It computes nothing about the machine: the rows come from core/debug/bringUp.ts, the same
// rows `phasewright trace` prints and writes as CSV.
import type { BringUpRow, BringUpTable } from '../debug/bringUp';
import { disassemble } from '../isa/disasm';
import { type DiagramTheme, paletteCss } from './palette';
import { esc, font, num, size, text, textWidth } from './svgText';

export interface BoardOptions {
  /** The cycle to show in detail (default: `current` when in the range, else the range's last). */
  cycle?: number;
  /** The cycle the debug session stands at, marked in the strip. */
  current?: number;
  theme?: DiagramTheme;
}

export interface BringUpBoard {
  svg: string;
  /** The cycle drawn in detail, or undefined when the range has no rows. */
  cycle?: number;
  width: number;
  height: number;
}

const rootClass = 'pw-board';
const pad = 16;
const pitch = 11;
const radius = 3.8;
const nibbleGap = 5;
const rowHeight = 15;
const cellsPerLine = 8;
const cellHeight = 34;

/** One row of LEDs: its name, kind and pattern (most significant first: `0`, `1`, `z`, `x`). */
interface LedRow {
  name: string;
  kind: string;
  pattern: string;
  previous?: string;
  /** The value as text at the right of the LEDs. */
  value: string;
}

function hex(value: number, digits = 8): string {
  return `0x${(value >>> 0).toString(16).padStart(digits, '0')}`;
}

/** A pattern's value in hex, or what it is when not every LED is 0 or 1. */
function valueText(pattern: string): string {
  if (/^[01]+$/.test(pattern)) return hex(parseInt(pattern, 2), Math.ceil(pattern.length / 4));
  if (/^z+$/.test(pattern)) return 'floating';
  return 'undefined';
}

function bitsOf(value: number, width: number): string {
  return (value >>> 0).toString(2).padStart(32, '0').slice(32 - width);
}

function stripCells(table: BringUpTable, shown: number, current: number | undefined): { out: string[]; height: number; width: number } {
  const last = table.rows[table.rows.length - 1].cycle;
  const maxStep = Math.max(...table.rows.map((r) => r.step));
  const cellWidth = Math.max(textWidth(String(last)), textWidth(`▸ step ${maxStep}`, size.small)) + 12;
  const out: string[] = [];
  table.rows.forEach((row, i) => {
    const x = pad + (i % cellsPerLine) * cellWidth;
    const y = Math.floor(i / cellsPerLine) * (cellHeight + 4);
    const classes = ['cell', row.cycle === shown ? 'sel' : '', row.cycle === current ? 'now' : ''].filter(Boolean).join(' ');
    out.push(`<g class="${classes}" data-pick="${row.cycle}" role="button" aria-label="cycle ${row.cycle}, step ${row.step}">`);
    out.push(`<rect x="${num(x + 1)}" y="${num(y)}" width="${num(cellWidth - 2)}" height="${cellHeight}" rx="3"/>`);
    out.push(text(x + cellWidth / 2, y + 14, String(row.cycle), { anchor: 'middle', weight: row.cycle === shown ? 'bold' : undefined }));
    out.push(text(x + cellWidth / 2, y + 28, `${row.cycle === current ? '▸ ' : ''}step ${row.step}`, { cls: 'muted', px: size.small, anchor: 'middle' }));
    out.push('</g>');
  });
  const lines = Math.ceil(table.rows.length / cellsPerLine);
  return { out, height: lines * (cellHeight + 4), width: Math.min(table.rows.length, cellsPerLine) * cellWidth };
}

/** The sections of LED rows of one cycle, in the board's order. */
function sectionsOf(table: BringUpTable, row: BringUpRow, before: BringUpRow | undefined): { title: string; rows: LedRow[] }[] {
  const groupRows = (kind: string) =>
    table.groups.flatMap((g, i) => (g.kind === kind ? [{ name: g.name, kind, pattern: row.leds[i], previous: before?.leds[i], value: valueText(row.leds[i]) }] : []));
  const sections = [
    { title: 'Step counter', rows: [{ name: 'step', kind: 'step', pattern: bitsOf(row.step, table.stepBits), previous: before && bitsOf(before.step, table.stepBits), value: String(row.step) }] },
    { title: 'Buses', rows: groupRows('bus') },
    { title: 'Registers', rows: groupRows('register') },
    { title: 'Parts', rows: groupRows('part') },
    {
      title: 'Control word: each chip’s outputs as burned (an active-low strobe reads 0 when asserted)',
      rows: table.chips.map((c, i) => ({ name: c.name, kind: 'chip', pattern: row.chips[i], previous: before?.chips[i], value: valueText(row.chips[i]) })),
    },
  ];
  return sections.filter((s) => s.rows.length > 0);
}

const ledClass: Record<string, string> = { '1': 'on', '0': 'off', z: 'z', x: 'x' };

/** Draws the board of one cycle of the range, with the strip of every cycle above it. */
export function bringUpBoard(table: BringUpTable, options: BoardOptions = {}): BringUpBoard {
  const theme = options.theme ?? 'auto';
  const out: string[] = [];
  let y = pad;
  const line = (content: string, px: number, cls: string, weight?: 'bold') => {
    y += px + 5;
    out.push(text(pad, y, content, { cls, px, weight }));
  };
  let width = 0;
  let shown: number | undefined;
  if (table.rows.length === 0) {
    line('Bring-up: no cycles in this range', size.title, 'fg', 'bold');
    if (table.ending) line(`(${table.ending})`, size.text, 'muted');
    width = Math.max(...[table.ending ?? '', 'Bring-up: no cycles in this range'].map((t) => textWidth(t, size.title))) + 2 * pad;
  } else {
    const first = table.rows[0].cycle;
    const last = table.rows[table.rows.length - 1].cycle;
    const wanted = options.cycle ?? options.current;
    const row = table.rows.find((r) => r.cycle === wanted) ?? table.rows[table.rows.length - 1];
    shown = row.cycle;
    const before = table.rows.find((r) => r.cycle === row.cycle - 1);
    const head = [`Bring-up · cycles ${first}–${last}${options.current !== undefined ? ` · the session stands at cycle ${options.current}` : ''}`];
    line(head[0], size.title, 'fg', 'bold');
    const sub = 'What the indicators show during each step, after the buses settle and before the closing edge.';
    line(sub, size.small, 'muted');
    y += 8;
    const strip = stripCells(table, shown, options.current);
    out.push(`<g transform="translate(0 ${num(y)})">`, ...strip.out, '</g>');
    y += strip.height + 10;
    const detail = `cycle ${row.cycle} · step ${row.step} · ${row.label}${row.line !== undefined ? ` (line ${row.line})` : ''}`;
    const instruction = `pc ${hex(row.pc)} · ir ${hex(row.ir)} · ${disassemble(row.ir, row.pc)}`;
    line(detail, size.text, 'fg', 'bold');
    line(instruction, size.text, 'fg');
    if (table.note) line(`note: ${table.note}`, size.small, 'muted');
    y += 6;

    const sections = sectionsOf(table, row, before);
    const allRows = sections.flatMap((s) => s.rows);
    const maxBits = Math.max(...allRows.map((r) => r.pattern.length));
    const labelWidth = Math.max(...allRows.map((r) => textWidth(r.name))) + 12;
    const bit0 = pad + labelWidth + (maxBits - 1) * pitch + Math.floor((maxBits - 1) / 4) * nibbleGap + radius;
    const ledX = (bit: number) => bit0 - bit * pitch - Math.floor(bit / 4) * nibbleGap;
    const valueX = bit0 + radius + 12;
    const valueWidth = Math.max(...allRows.map((r) => textWidth(r.value)));
    for (const section of sections) {
      y += 6;
      out.push(text(pad, y + 11, section.title, { cls: 'muted', px: size.small, weight: 'bold', attrs: 'data-section="1"' }));
      y += 15;
      // The ruler: bit numbers over the LEDs of their weight.
      const widest = Math.max(...section.rows.map((r) => r.pattern.length));
      const every = widest > 8 ? 8 : 4;
      for (let bit = 0; bit < widest; bit += every) out.push(text(ledX(bit), y + 9, String(bit), { cls: 'muted', px: size.small - 1.5, anchor: 'middle', attrs: 'data-ruler="1"' }));
      y += 12;
      for (const r of section.rows) {
        const changed = r.previous !== undefined && r.previous !== r.pattern;
        const cy = y + rowHeight / 2;
        out.push(`<g class="ind" data-name="${esc(r.name)}" data-kind="${r.kind}"${changed ? ' data-changed="1"' : ''}>`);
        out.push(text(pad, cy + 4, r.name, { cls: changed ? 'chg' : 'fg', weight: changed ? 'bold' : undefined }));
        const n = r.pattern.length;
        for (let i = 0; i < n; i++) {
          const bit = n - 1 - i;
          out.push(`<circle class="led ${ledClass[r.pattern[i]] ?? 'x'}" cx="${num(ledX(bit))}" cy="${num(cy)}" r="${radius}" data-bit="${bit}"/>`);
        }
        out.push(text(valueX, cy + 4, r.value, { cls: 'muted' }));
        out.push('</g>');
        y += rowHeight;
      }
    }
    if (table.ending) {
      y += 6;
      line(`(${table.ending})`, size.small, 'muted');
    }
    y += 10;
    // The legend, drawn with the LEDs it explains.
    const legend: [string, string][] = [
      ['on', 'lit = 1'],
      ['off', 'dark = 0'],
      ['z', 'floating'],
      ['x', 'undefined'],
    ];
    let x = pad + radius;
    for (const [cls, words] of legend) {
      out.push(`<circle class="led ${cls}" cx="${num(x)}" cy="${num(y + 6)}" r="${radius}"/>`);
      out.push(text(x + 8, y + 10, words, { cls: 'muted', px: size.small }));
      x += 8 + textWidth(words, size.small) + 18;
    }
    out.push(text(x, y + 10, 'bold coloured name = changed since the cycle before', { cls: 'chg', px: size.small }));
    x += textWidth('bold coloured name = changed since the cycle before', size.small);
    y += 14;
    width = Math.ceil(Math.max(valueX + valueWidth, pad + strip.width, x, textWidth(head[0], size.title) + pad, textWidth(sub, size.small) + pad, textWidth(detail) + pad, textWidth(instruction) + pad) + pad);
  }
  const height = Math.ceil(y + pad);
  const style =
    paletteCss(theme, rootClass) +
    `.${rootClass} text{font-family:${font};font-size:${size.text}px;fill:var(--pw-fg)}` +
    `.${rootClass} .muted{fill:var(--pw-muted)}` +
    `.${rootClass} .chg{fill:var(--pw-field)}` +
    `.${rootClass} .bg{fill:var(--pw-bg)}` +
    `.${rootClass} .led{stroke-width:1.2}` +
    `.${rootClass} .led.on{fill:var(--pw-signal);stroke:var(--pw-signal)}` +
    `.${rootClass} .led.off{fill:none;stroke:var(--pw-muted);stroke-opacity:.75}` +
    `.${rootClass} .led.z{fill:none;stroke:var(--pw-muted);stroke-dasharray:1.6 1.6}` +
    `.${rootClass} .led.x{fill:var(--pw-bad);fill-opacity:.35;stroke:var(--pw-bad)}` +
    `.${rootClass} .cell{cursor:pointer}` +
    `.${rootClass} .cell rect{fill:var(--pw-bg);stroke:var(--pw-grid)}` +
    `.${rootClass} .cell.sel rect{fill:var(--pw-signal);fill-opacity:.16;stroke:var(--pw-signal);stroke-width:1.5}` +
    `.${rootClass} .cell.now text{fill:var(--pw-signal)}`;
  const label = shown === undefined ? 'Bring-up board: no cycles' : `Bring-up board: the indicators in cycle ${shown}`;
  const svg =
    `<svg xmlns="http://www.w3.org/2000/svg" class="${rootClass}" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" aria-label="${esc(label)}"${shown !== undefined ? ` data-cycle="${shown}"` : ''} data-theme="${theme}">\n` +
    `<style>${style}</style>\n` +
    `<rect class="bg" x="0" y="0" width="${width}" height="${height}"/>\n` +
    out.join('\n') +
    '\n</svg>\n';
  return { svg, cycle: shown, width, height };
}
