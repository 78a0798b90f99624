// The timing diagram as an SVG document (a string; no DOM): one column per step of a class,
// one row per strobe showing its control-store output level step by step, field values and
// bus ownership as labelled segments, and under each column the word every store holds at
// that step's address, per chip in hex. Text is measured by character count in a monospace
// font, so columns and the label column are always wide enough for their text. On a machine
// with a sequencer part the columns follow the sequencer: each says its step and visit, a line
// under the headers says where the sequencer goes next, a closing edge that goes back to an
// earlier step (or stays) is drawn solid, and a bracket over the headers spans each loop drawn.
// It computes nothing about the machine itself: timingModel.ts does.
import type { ClassDef, Machine } from '../model/types';
import { type GuardChoice, choiceText, emptyChoice } from './guardChoice';
import { type DiagramTheme, paletteCss } from './palette';
import { esc, font, num, size, text, textWidth } from './svgText';
import { type TimingModel, type TimingOptions, actsAtClosingEdge, loopText, opcodeText, ordinal, timingModel } from './timingModel';

export interface TimingDiagram {
  svg: string;
  model: TimingModel;
  width: number;
  height: number;
}

export interface RenderOptions {
  theme?: DiagramTheme;
}

const rootClass = 'pw-timing';
const pad = 16;
const gutter = 14;
const rowHeight = { strobe: 38, field: 32, bus: 42, word: 19, header: 50 };
const sectionGap = 12;

/** Draws one class under one guard choice. */
export function timingDiagram(machine: Machine, cls: ClassDef, choice: GuardChoice = emptyChoice(), options: TimingOptions & RenderOptions = {}): TimingDiagram {
  return renderTiming(timingModel(machine, cls, choice, options), options);
}

/** A segment in the shape buses are drawn with in data sheets: a box with slanted ends. */
function segment(x0: number, x1: number, top: number, bottom: number, cls: string): string {
  const slant = Math.min(5, (x1 - x0) / 4);
  const mid = (top + bottom) / 2;
  const points = [
    [x0, mid],
    [x0 + slant, top],
    [x1 - slant, top],
    [x1, mid],
    [x1 - slant, bottom],
    [x0 + slant, bottom],
  ];
  return `<polygon class="${cls}" points="${points.map(([x, y]) => `${num(x)},${num(y)}`).join(' ')}"/>`;
}

/** Runs of equal neighbouring cells, as [first, last] column indexes; a run also ends before a column `startsAnew` says. */
function runs<T>(cells: readonly T[], same: (a: T, b: T) => boolean, startsAnew: (i: number) => boolean = () => false): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i < cells.length; i++) {
    if (out.length && !startsAnew(i) && same(cells[out[out.length - 1][1]], cells[i])) out[out.length - 1][1] = i;
    else out.push([i, i]);
  }
  return out;
}

function columnLabels(model: TimingModel, i: number): { step: string; guard: string; note: string; next: string } {
  const c = model.columns[i];
  const note = !c.reached ? 'not reached' : c.alt ? (c.phase ? `from ${c.phase}` : '') : 'fill word';
  return { step: `step ${c.step}${c.visit ? ` (${ordinal(c.visit)})` : ''}`, guard: c.guard ?? '', note, next: model.sequence ? nextLabel(model, i) : '' };
}

/** Where the sequencer goes at a column's closing edge: `→ 4`, `→ 6 jump`, `→ 8 call`, `→ 3 return`, `↩ 3 stays`, `↩ 2 back` (round a loop), `→ 0 ends`. */
function nextLabel(model: TimingModel, i: number): string {
  const c = model.columns[i];
  const cut = i === model.columns.length - 1 && model.sequence?.cut ? ' (cut)' : '';
  if (c.next === undefined) return `→ ?${cut}`;
  if (c.next === 0) return '→ 0 ends';
  if (c.goesRound) return `↩ ${c.next} ${c.next === c.step ? 'stays' : 'back'}${cut}`;
  if (c.call) return `→ ${c.next} ${c.call}${cut}`;
  return `→ ${c.next}${c.next === c.step + 1 ? '' : ' jump'}${cut}`;
}

/** True where the sequencer goes round a loop at the column's closing edge: it stays, or goes back to a step that comes here again. */
function goesBack(model: TimingModel, i: number): boolean {
  return model.columns[i].goesRound === true;
}

function busLabel(cell: { drivers: string[] }, keeper: boolean): string {
  if (cell.drivers.length === 0) return keeper ? 'held by keeper' : 'floating';
  return cell.drivers.join(' + ');
}

function loadLabel(cell: { loaders: string[] }): string {
  return cell.loaders.length ? `→ ${cell.loaders.join(' ')}` : '';
}

function fieldLabel(cell: { value: string; set: boolean }): string {
  return cell.set ? cell.value : `(${cell.value})`;
}

/** Renders a timing model as SVG text. */
export function renderTiming(model: TimingModel, options: RenderOptions = {}): TimingDiagram {
  const theme = options.theme ?? 'auto';
  const nCols = model.columns.length;

  // Labels of the left column: a name and, in smaller type under it, what the row is.
  const strobeSub = (r: TimingModel['strobes'][number]) => `${r.kind} · active ${r.active}${r.placement ? ` · ${r.placement}` : ''}`;
  const fieldSub = (r: TimingModel['fields'][number]) => `field · ${r.width} bit${r.width > 1 ? 's' : ''}${r.placement ? ` · ${r.placement}` : ''}`;
  const busSub = (r: TimingModel['buses'][number]) => `bus${r.keeper ? ' · keeper' : ''}`;
  const wordLabels = model.words.flatMap((w) => [`${w.store} address`, ...w.chipWidths.map((width, chip) => `${w.store} chip ${chip} (${width} bits)`)]);
  const labelWidth = Math.max(
    96,
    ...model.strobes.map((r) => Math.max(textWidth(r.name), textWidth(strobeSub(r), size.small))),
    ...model.fields.map((r) => Math.max(textWidth(r.name), textWidth(fieldSub(r), size.small))),
    ...model.buses.map((r) => Math.max(textWidth(r.name), textWidth(busSub(r), size.small))),
    ...wordLabels.map((l) => textWidth(l)),
  );

  // Every column is as wide as the widest text any single cell may need.
  const cellTexts: number[] = [72];
  for (let i = 0; i < nCols; i++) {
    const h = columnLabels(model, i);
    cellTexts.push(textWidth(h.step, size.text), textWidth(h.guard, size.small), textWidth(h.note, size.small));
    if (h.next) cellTexts.push(textWidth(h.next, size.small));
    for (const f of model.fields) cellTexts.push(textWidth(fieldLabel(f.cells[i])) + 6);
    for (const b of model.buses) cellTexts.push(textWidth(busLabel(b.cells[i], b.keeper)) + 6, textWidth(loadLabel(b.cells[i]), size.small) + 6);
    for (const w of model.words) cellTexts.push(textWidth(w.cells[i].addressHex), ...w.cells[i].chipHex.map((h) => textWidth(h)));
  }
  const colWidth = Math.max(...cellTexts) + 2 * gutter;
  const gridLeft = pad + labelWidth + gutter;
  const gridWidth = nCols * colWidth;
  const colX = (i: number) => gridLeft + i * colWidth;

  // Title, inputs and legend lines above the grid.
  const title = `${model.machineTitle ? `${model.machineTitle} · ` : ''}class ${model.className}`;
  const facts: string[] = [];
  if (model.opcode !== undefined) facts.push(`opcode ${opcodeText(model)}`);
  if (model.inputs.length) facts.push(model.inputs.map((i) => `${i.name}=${i.bits}${i.given ? '' : '*'}`).join(' '));
  facts.push(model.instruction ? `instruction ${model.instruction}` : model.opcode !== undefined ? 'no single RV32I instruction' : '');
  const sequence = model.sequence;
  if (sequence?.loops.length) facts.push(`loop count ${sequence.loopCount}${sequence.loopCountGiven ? '' : ' (default)'}`);
  const subtitle = facts.filter(Boolean).join('  ·  ');
  const legend = [
    'Lines: control-store output level, up = 1 (high), down = 0 (low). Shaded = asserted;',
    'an active-low strobe is asserted while its line is low. ▲ = acts at the closing edge.',
    `Dashed verticals: closing edges. Fields in (parentheses) hold their idle code.${model.inputs.some((i) => !i.given) ? ' * = not chosen, 0 assumed.' : ''}`,
  ];
  if (sequence) {
    legend.push('Columns follow the sequencer from step 0 until it returns there; under each header, where it goes next.');
    legend.push('Solid verticals (↩): it goes round a loop (stays, or goes back). Brackets span the loops, drawn for the loop count.');
  }
  const headLines: { content: string; px: number; cls: string; weight?: 'bold' }[] = [
    { content: title, px: size.title, cls: 'fg', weight: 'bold' },
    { content: subtitle, px: size.text, cls: 'fg' },
  ];
  if (model.description) headLines.push({ content: model.description, px: size.text, cls: 'muted' });
  for (const l of legend) headLines.push({ content: l, px: size.small, cls: 'muted' });
  const notes = model.notes;

  const contentWidth = Math.max(
    gridLeft + gridWidth - pad,
    ...headLines.map((l) => textWidth(l.content, l.px)),
    ...notes.map((n) => textWidth(n, size.small)),
    ...(sequence?.loops ?? []).map((l) => colX(l.first) + 4 + textWidth(loopText(l), size.small) - pad),
  );
  const width = Math.ceil(contentWidth + 2 * pad);

  const out: string[] = [];
  let y = pad;
  for (const line of headLines) {
    y += line.px + 5;
    out.push(text(pad, y, line.content, { cls: line.cls, px: line.px, weight: line.weight }));
  }
  y += 10;

  // A segment does not run on across a closing edge that goes back: each repetition has its own.
  const repeatStarts = (i: number) => !!sequence && i > 0 && goesBack(model, i - 1);

  // Loop brackets over the column headers (a sequencer machine only).
  const loopMarks: string[] = [];
  if (sequence?.loops.length) {
    for (const loop of sequence.loops) {
      const x0 = colX(loop.first) + 4;
      const x1 = colX(loop.last + 1) - 4;
      const label = loopText(loop);
      const fits = textWidth(label, size.small) <= x1 - x0;
      loopMarks.push(
        `<g class="loop" data-loop="${loop.steps.join(',')}" data-first="${loop.first}" data-last="${loop.last}" data-repeats="${loop.repeats}">` +
          `<path class="bracket" d="M${num(x0)},${num(y + 22)}V${num(y + 16)}H${num(x1)}V${num(y + 22)}"/>` +
          text(fits ? (x0 + x1) / 2 : x0, y + 11, label, { cls: loop.forEver ? 'bad' : 'fg', px: size.small, anchor: fits ? 'middle' : 'start', weight: 'bold' }) +
          '</g>',
      );
    }
    y += 24;
  }
  out.push(...loopMarks);

  // Column headers.
  const headerTop = y;
  for (let i = 0; i < nCols; i++) {
    const h = columnLabels(model, i);
    const cx = colX(i) + colWidth / 2;
    out.push(text(cx, y + 15, h.step, { cls: 'fg', anchor: 'middle', weight: 'bold', attrs: `data-col="${i}" data-step="${model.columns[i].step}"${model.columns[i].visit ? ` data-visit="${model.columns[i].visit}"` : ''}` }));
    if (h.guard) out.push(text(cx, y + 30, h.guard, { cls: 'fg', px: size.small, anchor: 'middle' }));
    if (h.note) out.push(text(cx, y + 44, h.note, { cls: model.columns[i].reached ? 'muted' : 'bad', px: size.small, anchor: 'middle' }));
    if (h.next) {
      const c = model.columns[i];
      const cls = i === nCols - 1 && sequence?.cut ? 'bad' : goesBack(model, i) ? 'back' : 'muted';
      out.push(text(cx, y + 58, h.next, { cls, px: size.small, anchor: 'middle', weight: cls === 'muted' ? undefined : 'bold', attrs: `data-next="${c.next ?? '?'}" data-col="${i}"` }));
    }
  }
  y += rowHeight.header + (sequence ? 14 : 0);
  const rowsTop = y;

  // Section titles run across the whole width in a band the closing-edge lines leave out.
  const bands: [number, number][] = [];
  const sectionTitle = (label: string) => {
    out.push(text(pad, y + 12, label, { cls: 'muted', px: size.small, weight: 'bold', attrs: 'data-section="1"' }));
    bands.push([y, y + 16]);
    y += 16;
  };
  const rowLabel = (top: number, height: number, name: string, sub: string) => {
    out.push(text(pad, top + height / 2 - 2, name, { cls: 'fg' }));
    out.push(text(pad, top + height / 2 + 11, sub, { cls: 'muted', px: size.small }));
  };

  if (model.strobes.length) {
    sectionTitle('STROBES');
    for (const row of model.strobes) {
      const top = y;
      const hi = top + 8;
      const lo = top + rowHeight.strobe - 8;
      const parts: string[] = [];
      rowLabel(top, rowHeight.strobe, row.name, strobeSub(row));
      row.asserted.forEach((on, i) => {
        if (on) parts.push(`<rect class="on" x="${num(colX(i))}" y="${num(hi)}" width="${num(colWidth)}" height="${num(lo - hi)}"/>`);
      });
      let d = '';
      row.levels.forEach((level, i) => {
        const yy = level === 'high' ? hi : lo;
        d += i === 0 ? `M${num(colX(0))},${num(yy)}` : `V${num(yy)}`;
        d += `H${num(colX(i) + colWidth)}`;
      });
      parts.push(`<path class="wave" d="${d}"/>`);
      if (actsAtClosingEdge(row.kind)) {
        row.asserted.forEach((on, i) => {
          if (!on) return;
          const x = colX(i) + colWidth;
          parts.push(`<path class="edge" d="M${num(x - 4)},${num(top + rowHeight.strobe - 1)}L${num(x)},${num(top + rowHeight.strobe - 8)}L${num(x + 4)},${num(top + rowHeight.strobe - 1)}Z"/>`);
        });
      }
      out.push(`<g class="row" data-row="strobe" data-name="${esc(row.name)}" data-levels="${row.levels.map((l) => (l === 'high' ? 'H' : 'L')).join('')}" data-asserted="${row.asserted.map((a) => (a ? '1' : '0')).join('')}">${parts.join('')}</g>`);
      y += rowHeight.strobe;
    }
    y += sectionGap;
  }

  if (model.fields.length) {
    sectionTitle('FIELDS');
    for (const row of model.fields) {
      const top = y;
      rowLabel(top, rowHeight.field, row.name, fieldSub(row));
      const parts: string[] = [];
      for (const [a, b] of runs(row.cells, (p, q) => p.code === q.code && p.set === q.set && p.map === q.map, repeatStarts)) {
        const cell = row.cells[a];
        parts.push(segment(colX(a) + 2, colX(b) + colWidth - 2, top + 5, top + rowHeight.field - 5, cell.set ? 'seg field' : 'seg idle'));
        parts.push(text((colX(a) + colX(b) + colWidth) / 2, top + rowHeight.field / 2 + 4, fieldLabel(cell), { cls: cell.set ? 'fg' : 'muted', anchor: 'middle' }));
      }
      out.push(`<g class="row" data-row="field" data-name="${esc(row.name)}" data-values="${esc(row.cells.map(fieldLabel).join(' '))}">${parts.join('')}</g>`);
      y += rowHeight.field;
    }
    y += sectionGap;
  }

  if (model.buses.length) {
    sectionTitle('BUSES: who drives  → who loads at the closing edge');
    for (const row of model.buses) {
      const top = y;
      rowLabel(top, rowHeight.bus, row.name, busSub(row));
      const parts: string[] = [];
      const key = (c: { drivers: string[]; loaders: string[] }) => `${c.drivers.join('+')}>${c.loaders.join(' ')}`;
      for (const [a, b] of runs(row.cells, (p, q) => key(p) === key(q), repeatStarts)) {
        const cell = row.cells[a];
        const cls = cell.contention ? 'seg bad' : cell.drivers.length >= 1 ? 'seg bus' : 'seg idle';
        const cx = (colX(a) + colX(b) + colWidth) / 2;
        parts.push(segment(colX(a) + 2, colX(b) + colWidth - 2, top + 5, top + rowHeight.bus - 5, cls));
        const load = loadLabel(cell);
        const mainY = load ? top + rowHeight.bus / 2 - 1 : top + rowHeight.bus / 2 + 4;
        parts.push(text(cx, mainY, busLabel(cell, row.keeper), { cls: cell.contention ? 'bad' : cell.drivers.length ? 'fg' : 'muted', anchor: 'middle', weight: cell.contention ? 'bold' : undefined }));
        if (load) parts.push(text(cx, top + rowHeight.bus / 2 + 12, load, { cls: 'fg', px: size.small, anchor: 'middle' }));
      }
      out.push(`<g class="row" data-row="bus" data-name="${esc(row.name)}" data-drivers="${esc(row.cells.map((c) => c.drivers.join('+') || '-').join(' '))}">${parts.join('')}</g>`);
      y += rowHeight.bus;
    }
    y += sectionGap;
  }
  const rowsBottom = y - sectionGap;

  if (model.words.length) {
    sectionTitle('CONTROL WORD at each step (hex, as in the images and the listing)');
    for (const w of model.words) {
      const lines: { label: string; values: string[]; attr: (i: number) => string }[] = [
        { label: `${w.store} address`, values: w.cells.map((c) => c.addressHex), attr: (i) => `data-store="${esc(w.store)}" data-address="${w.cells[i].address}" data-col="${i}"` },
        ...w.chipWidths.map((width, chip) => ({
          label: `${w.store} chip ${chip} (${width} bits)`,
          values: w.cells.map((c) => c.chipHex[chip]),
          attr: (i: number) => `data-store="${esc(w.store)}" data-chip="${chip}" data-col="${i}"`,
        })),
      ];
      lines.forEach((line, k) => {
        const top = y;
        if (k % 2 === 1) out.push(`<rect class="band" x="${num(pad)}" y="${num(top)}" width="${num(gridLeft + gridWidth - pad)}" height="${rowHeight.word}"/>`);
        out.push(text(pad, top + 14, line.label, { cls: k === 0 ? 'muted' : 'fg' }));
        line.values.forEach((v, i) => out.push(text(colX(i) + colWidth / 2, top + 14, v, { cls: k === 0 ? 'muted' : 'fg', anchor: 'middle', attrs: line.attr(i) })));
        y += rowHeight.word;
      });
      y += 6;
    }
  }

  // Closing edges and unreached steps are drawn over the row area only.
  const grid: string[] = [];
  const spans: [number, number][] = [];
  let from = headerTop;
  for (const [top, bottom] of bands) {
    if (top > from) spans.push([from, top]);
    from = bottom;
  }
  if (y > from) spans.push([from, y]);
  for (let i = 0; i <= nCols; i++) {
    const x = colX(i);
    const back = sequence && i > 0 && goesBack(model, i - 1);
    for (const [y1, y2] of spans) grid.push(`<line class="${i === 0 ? 'grid solid' : back ? 'grid back' : 'grid'}" x1="${num(x)}" y1="${num(y1)}" x2="${num(x)}" y2="${num(y2)}"/>`);
  }
  model.columns.forEach((c, i) => {
    if (!c.reached) grid.push(`<rect class="unreached" x="${num(colX(i))}" y="${num(rowsTop)}" width="${num(colWidth)}" height="${num(Math.max(0, rowsBottom - rowsTop))}"/>`);
  });

  if (notes.length) {
    y += 6;
    for (const n of notes) {
      y += size.small + 5;
      out.push(text(pad, y, n, { cls: 'muted', px: size.small }));
    }
  }
  const height = Math.ceil(y + pad);

  const style =
    paletteCss(theme, rootClass) +
    `.${rootClass} text{font-family:${font};font-size:${size.text}px;fill:var(--pw-fg)}` +
    `.${rootClass} .muted{fill:var(--pw-muted)}` +
    `.${rootClass} text.bad{fill:var(--pw-bad)}` +
    `.${rootClass} .bg{fill:var(--pw-bg)}` +
    `.${rootClass} .grid{stroke:var(--pw-grid);stroke-width:1;stroke-dasharray:3 4}` +
    `.${rootClass} .grid.solid{stroke-dasharray:none}` +
    `.${rootClass} .band{fill:var(--pw-grid);fill-opacity:.28}` +
    `.${rootClass} .wave{fill:none;stroke:var(--pw-signal);stroke-width:2;stroke-linejoin:round}` +
    `.${rootClass} .on{fill:var(--pw-signal);fill-opacity:.2}` +
    `.${rootClass} .edge{fill:var(--pw-signal)}` +
    `.${rootClass} .seg{stroke-width:1.4}` +
    `.${rootClass} .seg.field{stroke:var(--pw-field);fill:var(--pw-field);fill-opacity:.13}` +
    `.${rootClass} .seg.bus{stroke:var(--pw-bus);fill:var(--pw-bus);fill-opacity:.13}` +
    `.${rootClass} .seg.bad{stroke:var(--pw-bad);fill:var(--pw-bad);fill-opacity:.2}` +
    `.${rootClass} .seg.idle{stroke:var(--pw-muted);fill:none;stroke-dasharray:4 3}` +
    `.${rootClass} .unreached{fill:url(#pw-hatch)}` +
    `.${rootClass} .hatch{stroke:var(--pw-muted);stroke-width:1;stroke-opacity:.45}` +
    (sequence
      ? `.${rootClass} .grid.back{stroke:var(--pw-signal);stroke-width:1.6;stroke-dasharray:none;stroke-opacity:.6}` +
        `.${rootClass} text.back{fill:var(--pw-signal)}` +
        `.${rootClass} .bracket{fill:none;stroke:var(--pw-signal);stroke-width:1.5}`
      : '');
  const loopLabel = sequence?.loops.length ? `, loop count ${sequence.loopCount}` : '';
  const label = `Timing diagram of class ${model.className}${model.inputs.length ? ` with ${choiceText(model.inputs)}` : ''}${loopLabel}`;
  const svg =
    `<svg xmlns="http://www.w3.org/2000/svg" class="${rootClass}" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" aria-label="${esc(label)}" data-class="${esc(model.className)}" data-theme="${theme}">\n` +
    `<title>${esc(label)}</title>\n` +
    `<style>${style}</style>\n` +
    `<defs><pattern id="pw-hatch" width="8" height="8" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><line class="hatch" x1="0" y1="0" x2="0" y2="8"/></pattern></defs>\n` +
    (theme === 'host' ? '' : `<rect class="bg" x="0" y="0" width="${width}" height="${height}"/>\n`) +
    grid.join('\n') +
    '\n' +
    out.join('\n') +
    '\n</svg>\n';
  return { svg, model, width, height };
}
