// The bring-up view: what the board's indicators should show at each microcycle of a range, so a
// builder single-stepping the real clock can compare LED by LED. For every cycle (steps counted
// from reset, 0 first) the values during the step, after the buses settle and before the closing
// edge (as the VCD trace records them):
//   - the step counter, and the word each chip of each store outputs (its line levels, as
//     burned: an active-low strobe shows 0 when asserted);
//   - every bus and part that declares indicators (`leds=`): its low `leds` bits (a register
//     file's `leds` are counted per register: leds / width cards, from x1 when x0 is hardwired).
//     A floating bus shows `z` on every LED, an undefined value `x`.
// Rows come from a fresh run of the program from reset (the table's machine, optionally in
// lock-step), so they do not depend on what a debug session changed.
//
// Deliberately not here: files and terminals (the CLI writes the text and CSV), the webview.
import { elementZeroStored, heldValue } from '../model/partFacts';
import type { LineIndex } from '../text/lineIndex';
import { disassemble } from '../isa/disasm';
import { chipImagesOf } from '../encode/plan';
import { stopText } from '../sim/describe';
import { ProgramRun, type RunEnding } from '../sim/lockstep';
import type { SimPlan } from '../sim/plan';
import type { LoadedProgram } from '../sim/program';

export interface BringUpRequest {
  from: number;
  count: number;
  reference?: boolean;
  lines?: LineIndex;
}

/** One group of LEDs: a bus, a part, or one register of a register file. */
export interface IndicatorGroup {
  name: string;
  kind: 'bus' | 'part' | 'register';
  /** LEDs in the group (its low bits). */
  leds: number;
}

export interface BringUpRow {
  cycle: number;
  step: number;
  pc: number;
  ir: number;
  /** `class OP step 2`, or `fill word`. */
  label: string;
  /** One-based table line of the step, when the word has one. */
  line?: number;
  addresses: number[];
  /** Per group, the LEDs as a string, most significant first: `0`, `1`, `z` (floating), `x` (undefined). */
  leds: string[];
  /** Per chip (all stores, in order), its output word in binary, most significant line first. */
  chips: string[];
}

export interface BringUpTable {
  stepBits: number;
  groups: IndicatorGroup[];
  chips: { name: string; widthBits: number }[];
  rows: BringUpRow[];
  /** How the run ended, when it ended before the range did. */
  ending?: string;
  /** Said when the table declares no indicators. */
  note?: string;
}

function bits(value: number, width: number): string {
  return (value >>> 0).toString(2).padStart(32, '0').slice(32 - width);
}

function ledCount(figures: Map<string, { value: number }>): number {
  return Math.max(0, Math.floor(figures.get('leds')?.value ?? 0));
}

/** The indicator groups the table declares, and how to read each from the simulator. */
function indicatorsOf(plan: SimPlan): { group: IndicatorGroup; read: (r: { bus: (b: number) => string; part: (p: number) => number; reg: (f: number, r: number) => number }) => string }[] {
  const out: ReturnType<typeof indicatorsOf> = [];
  const machine = plan.machine;
  plan.busNames.forEach((name, b) => {
    const leds = Math.min(ledCount(machine.buses.get(name)!.figures), plan.busWidth[b]);
    if (leds > 0) out.push({ group: { name, kind: 'bus', leds }, read: (r) => r.bus(b).slice(-leds) });
  });
  plan.parts.forEach((part, p) => {
    const leds = ledCount(part.figures);
    if (leds === 0) return;
    const f = plan.regfileIndex.get(part.name);
    if (f !== undefined) {
      // A register file: one card of LEDs per register; a hard-wired x0 (its read ports give a constant) has none.
      const first = elementZeroStored(machine, part) ? 0 : 1;
      const cards = Math.min(32 - first, Math.floor(leds / part.width));
      for (let r = first; r < first + cards; r++) out.push({ group: { name: `${part.name}${r}`, kind: 'register', leds: part.width }, read: (read) => bits(read.reg(f, r), part.width) });
    } else if (heldValue(machine, part)) {
      const n = Math.min(leds, part.width);
      out.push({ group: { name: part.name, kind: 'part', leds: n }, read: (read) => bits(read.part(p), n) });
    }
  });
  return out;
}

function endingText(ending: RunEnding): string {
  switch (ending.kind) {
    case 'exit':
      return `the program exited with code ${ending.exitCode}`;
    case 'ebreak':
      return `the program stopped at EBREAK`;
    case 'stopped':
      return stopText(ending.stop);
    default:
      return ending.report.headline;
  }
}

/** The indicator rows of cycles from..from+count-1 of the program run from reset. */
export function bringUpRows(plan: SimPlan, program: LoadedProgram, request: BringUpRequest): BringUpTable {
  const run = new ProgramRun(plan, { ...program, memory: program.memory.clone() }, { reference: request.reference ?? true });
  const sim = run.sim;
  const indicators = indicatorsOf(plan);
  const images = plan.stores.map((s) => chipImagesOf(s.enc));
  const chips = plan.stores.flatMap((s, i) => images[i].map((image, c) => ({ name: `${plan.stores.length > 1 ? `${s.store.name}.` : ''}chip${c}`, widthBits: image.widthBits })));
  const table: BringUpTable = { stepBits: plan.stepBits, groups: indicators.map((i) => i.group), chips, rows: [] };
  if (indicators.length === 0) table.note = 'the table declares no indicators (`leds=` on a bus or part); only the step counter and the chips are shown';
  // Run fast to the first cycle of the range, then record each step through the observer.
  let ending: RunEnding | null = null;
  while (sim.steps < request.from && !ending) ending = run.advance(Math.min(request.from - sim.steps, 1 << 22));
  if (ending) {
    table.ending = endingText(ending);
    return table;
  }
  const nStores = plan.stores.length;
  const reader = {
    bus: (b: number) => (sim.isBusDefined(b) ? bits(sim.busValue[b], plan.busWidth[b]) : (plan.busKeeper[b] || plan.microOps.info[uopNow].driven[b] ? 'x' : 'z').repeat(plan.busWidth[b])),
    part: (p: number) => sim.partValue[p],
    reg: (f: number, r: number) => sim.regs[f * 32 + r],
  };
  let uopNow = 0;
  sim.observer = (s, uop) => {
    uopNow = uop;
    const addresses = plan.stores.map((_, i) => s.logAddress[s.step * nStores + i]);
    let label = 'fill word';
    let line: number | undefined;
    for (let i = 0; i < nStores; i++) {
      const { alt, cls } = plan.sourceOf(i, addresses[i]);
      if (alt && cls) {
        label = alt.phase ? `phase ${alt.phase.name} step ${alt.step} (class ${cls.name})` : `class ${cls.name} step ${alt.step}`;
        if (request.lines) line = request.lines.position(alt.span.start).line + 1;
        break;
      }
    }
    table.rows.push({
      cycle: request.from + table.rows.length,
      step: s.step,
      pc: s.pc,
      ir: s.ir,
      label,
      line,
      addresses,
      leds: indicators.map((i) => i.read(reader)),
      chips: plan.stores.flatMap((_, i) => images[i].map((image) => bits(image.words[addresses[i]], image.widthBits))),
    });
  };
  ending = run.advance(request.count);
  sim.observer = null;
  if (ending && table.rows.length < request.count) table.ending = endingText(ending);
  return table;
}

function groupBits(pattern: string): string {
  return pattern.replace(/(.{4})(?=.)/g, '$1 ');
}

/** The rows as text: one block per cycle, one line per group of LEDs. */
export function bringUpText(table: BringUpTable, file = ''): string {
  const names = ['step counter', ...table.groups.map((g) => g.name), ...table.chips.map((c) => c.name)];
  const width = Math.max(...names.map((n) => n.length));
  const lines: string[] = [];
  if (table.note) lines.push(`note: ${table.note}`, '');
  for (const row of table.rows) {
    const place = row.line !== undefined ? `  (${file ? `${file}:` : 'line '}${row.line})` : '';
    lines.push(`cycle ${row.cycle}  step ${row.step}  ${row.label}${place}  pc 0x${hex(row.pc)}  ir 0x${hex(row.ir)}  ${disassemble(row.ir, row.pc)}`);
    lines.push(`  ${'step counter'.padEnd(width)}  ${bits(row.step, table.stepBits)}`);
    table.groups.forEach((g, i) => lines.push(`  ${g.name.padEnd(width)}  ${groupBits(row.leds[i])}`));
    table.chips.forEach((c, i) => lines.push(`  ${c.name.padEnd(width)}  ${groupBits(row.chips[i])}`));
  }
  if (table.ending) lines.push(`(${table.ending})`);
  return lines.join('\n') + '\n';
}

function csvField(text: string): string {
  return /[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** The rows as CSV (RFC 4180): one row per cycle; LED columns hold the bit patterns, most significant first. */
export function bringUpCsv(table: BringUpTable): string {
  const header = ['cycle', 'step', 'label', 'line', 'pc', 'ir', 'step_counter', ...table.groups.map((g) => g.name), ...table.chips.map((c) => c.name)];
  const lines = [header.join(',')];
  for (const row of table.rows) {
    lines.push([String(row.cycle), String(row.step), csvField(row.label), row.line === undefined ? '' : String(row.line), `0x${hex(row.pc)}`, `0x${hex(row.ir)}`, bits(row.step, table.stepBits), ...row.leds, ...row.chips].join(','));
  }
  return lines.join('\r\n') + '\r\n';
}

function hex(value: number): string {
  return (value >>> 0).toString(16).padStart(8, '0');
}
