// `phasewright budget FILE`: the fan-out, bus load, LED current and step timing tables from the
// figures in the table, the fastest safe step clock and the path that limits it. Exit 1 when a
// budget check fails (overload, supply, timing) or the table has other errors, 0 otherwise, 2 on
// usage or file errors.
import { resolve } from 'node:path';
import { analyse, errorCount } from '../../core/analysis';
import { budgetOf, type LineLoad } from '../../core/budget/budget';
import { instructionTimes } from '../../core/budget/instructionTime';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { readSource } from '../readSource';
import { renderDiagnostic } from '../render';
import { textTable } from '../textTable';

const budgetCodes = ['strobe-overload', 'bus-overload', 'supply-budget', 'step-timing'];

export const budgetCommand = defineCommand({
  name: 'budget',
  summary: 'fan-out, bus load, LED current and step timing from entered figures',
  operands: 'FILE',
  options: [],
  exitCodes: [
    [0, 'within budget (rows with missing figures are listed as incomplete)'],
    [1, 'a budget check fails (overload, supply, timing), or the table has other errors (nothing computed)'],
    [2, 'usage error, or a file that cannot be read'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length !== 1) {
      io.err(`phasewright budget: ${parsed.errors[0] ?? 'give one .pwt file'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const file = parsed.positionals[0];
    const source = readSource(resolve(io.cwd, file));
    if (!source.ok) {
      io.err(`phasewright budget: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
      return 2;
    }
    const analysis = analyse(source.text);
    const other = analysis.diagnostics.filter((d) => d.severity === 'error' && !budgetCodes.includes(d.code));
    if (other.length) {
      io.err(`phasewright budget: ${file} has ${errorCount(other)} error(s) besides the budget; run \`phasewright check ${file}\` first\n`);
      return 1;
    }
    const b = budgetOf(analysis.machine);
    const out: string[] = [];
    out.push(`Budget for ${analysis.machine.title || file} (${file})`);
    out.push('These are estimates from the figures entered in the table. Real boards need margin, measurement and');
    out.push('the manufacturers\' data sheets; supply and bench work follow local practice.');
    out.push('');
    out.push('Control lines (each strobe is one control-store output)');
    out.push(textTable(['strobe', 'inputs', 'LED mA', 'load mA', 'driver', 'rating mA', 'margin mA'], b.strobes.map((r) => loadRow(r, r.name))));
    out.push('');
    out.push('Bus lines (load on each line, for each part that drives the bus)');
    out.push(textTable(['bus', 'driver', 'inputs', 'LED mA', 'load mA', 'rating mA', 'margin mA'], b.buses.map((r) => [r.name, r.driver, String(r.inputs), ma(r.ledMa), ma(r.loadMa), ma(r.driveMa), margin(r)])));
    out.push('');
    out.push('Indicator LEDs (current per LED = (supply - forward voltage) / resistor)');
    out.push(textTable(['where', 'LEDs', 'mA each', 'mA all lit'], b.leds.map((g) => [g.where, String(g.count), g.perLedMa.toFixed(2), g.totalMa.toFixed(1)])));
    out.push(`  all LEDs lit: ${b.ledTotalMa.toFixed(1)} mA${b.supplyMa !== undefined ? ` of a ${b.supplyMa} mA budget (${((100 * b.ledTotalMa) / b.supplyMa).toFixed(0)}%)` : ' (no supply_ma budget declared)'}`);
    out.push('');
    out.push('Step timing (longest path from the control word changing to the closing edge)');
    const paths = [...b.paths].sort((x, y) => y.totalNs - x.totalNs);
    out.push(textTable(['step', 'ns', 'path'], paths.map((p) => [`${p.owner} step ${p.step}${p.guard ? ` (${p.guard})` : ''}`, p.totalNs.toFixed(0), `${p.segments.map((s) => `${s.what} ${s.ns}`).join(' + ')} -> ${p.endpoint}`])));
    if (b.limiting && b.maxClockKhz !== undefined) {
      out.push('');
      out.push(`Fastest safe step clock: ${b.maxClockKhz.toFixed(0)} kHz (period ${b.limiting.totalNs.toFixed(0)} ns), limited by step ${b.limiting.step} of ${b.limiting.owner}${b.limiting.guard ? ` (${b.limiting.guard})` : ''} before ${b.limiting.endpoint}. Leave margin.`);
      if (b.plannedKhz !== undefined) out.push(`Planned step clock: ${b.plannedKhz} kHz (period ${(1e6 / b.plannedKhz).toFixed(0)} ns): ${b.plannedKhz <= b.maxClockKhz ? `${((1 - b.plannedKhz / b.maxClockKhz) * 100).toFixed(0)}% slower than the limit` : 'TOO FAST'}.`);
    }
    const times = instructionTimes(analysis.machine);
    out.push('');
    out.push(times.clockKhz !== undefined ? `Time per instruction at the ${times.clockFrom} step clock (${times.clockKhz.toFixed(0)} kHz, ${times.periodNs!.toFixed(0)} ns a step; steps counted from each class's control flow, fetch included)` : 'Time per instruction (no planned clock, clock_khz, and no complete step timing: steps only)');
    out.push(textTable(['class', 'steps', 'ns', 'counts'], times.rows.map((r) => [r.className, span(r.minSteps, r.maxSteps, 0), span(r.minNs, r.maxNs, 0), r.detail])));
    if (b.missing.length) {
      out.push('');
      out.push('Missing figures (those rows are incomplete):');
      for (const m of b.missing.slice(0, 30)) out.push(`  - ${m}`);
      if (b.missing.length > 30) out.push(`  ... ${b.missing.length - 30} more`);
    }
    const problems = analysis.diagnostics.filter((d) => budgetCodes.includes(d.code));
    if (problems.length) {
      out.push('');
      out.push('Problems:');
      for (const d of problems) out.push(renderDiagnostic(file, analysis, d));
    }
    io.out(out.join('\n') + '\n');
    return problems.some((d) => d.severity === 'error') ? 1 : 0;
  },
});

/** `min..max`, or one number when they agree; `min..` when only the least is known (a loop); `?` when unknown. */
function span(min: number | undefined, max: number | undefined, digits: number): string {
  if (min === undefined) return '?';
  if (max === undefined) return `${min.toFixed(digits)}..`;
  return min === max ? min.toFixed(digits) : `${min.toFixed(digits)}..${max.toFixed(digits)}`;
}

function ma(value: number | undefined): string {
  return value === undefined ? '?' : value.toFixed(2);
}

function margin(row: LineLoad): string {
  if (row.marginMa === undefined) return '?';
  return row.marginMa < 0 ? `${row.marginMa.toFixed(2)} OVER` : row.marginMa.toFixed(2);
}

function loadRow(r: LineLoad, name: string): string[] {
  return [name, String(r.inputs), ma(r.ledMa), ma(r.loadMa), r.driver, ma(r.driveMa), margin(r)];
}

