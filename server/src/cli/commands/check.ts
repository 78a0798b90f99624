// `phasewright check FILE... [--json] [--config FILE] [--no-proof]`: analyses each file and prints
// its diagnostics. When a file has no errors its meaning is proved too (core/prove/proveTable.ts,
// the same proof the editor runs): a refutation is an error like any other. Exit 0 when no file
// has errors, 1 when some has, 2 on usage or file errors.
import { analyse, applySeverities, type Analysis } from '../../core/analysis';
import { proveTable } from '../../core/prove';
import type { Diagnostic } from '../../core/text/diagnostic';
import { SOLVER_CHOICES, type SolverChoice, solverFor } from '../solvers';
import { type Progress, progressLine } from '../progress';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { loadSeverityConfig } from '../config';
import { readSource } from '../readSource';
import { renderDiagnostic, toJson, type JsonDiagnostic } from '../render';
import { resolve } from 'node:path';

export const checkCommand = defineCommand({
  name: 'check',
  summary: 'report problems in control tables',
  operands: 'FILE...',
  options: [
    { name: 'json', help: 'print the diagnostics as JSON data (per file: errors, warnings, diagnostics)' },
    { name: 'config', value: 'FILE', help: 'severities per code from a JSON file: { "severities": { "step-gap": "off" } } or the editor settings form' },
    { name: 'no-proof', help: 'skip the proof that the table implements RV32I (run by default on a file without errors; see `phasewright prove`)' },
    { name: 'solver', value: 'auto|z3|wasm', help: 'which z3 decides the proof (as for `phasewright prove`); auto by default' },
  ],
  exitCodes: [
    [0, 'no file has errors (warnings may remain)'],
    [1, 'some file has errors'],
    [2, 'usage error, a file that cannot be read, or a bad --config file'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length === 0) {
      io.err(`phasewright check: ${parsed.errors[0] ?? 'give at least one file'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const configPath = parsed.options.get('config');
    const config = typeof configPath === 'string' ? loadSeverityConfig(resolve(io.cwd, configPath)) : { ok: true as const, severities: undefined };
    if (!config.ok) {
      io.err(`phasewright check: ${config.reason}\n`);
      return 2;
    }
    const solverOption = parsed.options.get('solver') ?? 'auto';
    if (typeof solverOption !== 'string' || !(SOLVER_CHOICES as readonly string[]).includes(solverOption)) {
      io.err(`phasewright check: --solver takes ${SOLVER_CHOICES.join(', ')}\n`);
      return 2;
    }
    const proving = !parsed.options.has('no-proof');
    const json = parsed.options.has('json');
    const jsonOut: { files: { file: string; errors: number; warnings: number; shown: number; diagnostics: JsonDiagnostic[] }[] } = { files: [] };
    const totals = { errors: 0, warnings: 0, shown: 0, all: 0 };
    let ioFailure = false;
    for (const file of parsed.positionals) {
      const source = readSource(resolve(io.cwd, file));
      if (!source.ok) {
        io.err(`phasewright check: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
        ioFailure = true;
        continue;
      }
      const structural = analyse(source.text, { severities: config.severities });
      const analysis = proving && structural.counts.error === 0 ? await withProof(structural, solverFor(solverOption as SolverChoice), config.severities, progressLine(io, `proving ${file}`)) : structural;
      // The counts include what the cap left out, so a flooded file still says how bad it is.
      const { error: fileErrors, warning: warnings, info } = analysis.counts;
      totals.errors += fileErrors;
      totals.warnings += warnings;
      totals.shown += analysis.diagnostics.length;
      totals.all += fileErrors + warnings + info;
      if (json) {
        jsonOut.files.push({ file, errors: fileErrors, warnings, shown: analysis.diagnostics.length, diagnostics: analysis.diagnostics.map((d) => toJson(file, analysis, d)) });
      } else {
        for (const d of analysis.diagnostics) io.out(renderDiagnostic(file, analysis, d) + '\n');
        if (analysis.truncated) io.out(`${file}: ${analysis.diagnostics.length} shown of ${fileErrors + warnings + info} diagnostics (errors first); fix these and check again\n`);
      }
    }
    if (json) io.out(JSON.stringify(jsonOut, null, 2) + '\n');
    else if (!ioFailure || totals.errors) io.err(summaryLine(totals, parsed.positionals.length));
    if (ioFailure) return 2;
    return totals.errors ? 1 : 0;
  },
});

/** The analysis with the proof's diagnostics added (at the configured severities), sorted and counted as analyse does. */
async function withProof(analysis: Analysis, solver: ReturnType<typeof solverFor>, severities: Parameters<typeof applySeverities>[1], progress: Progress): Promise<Analysis> {
  // On a terminal, a progress line names the instruction being proved (a large machine takes seconds).
  const proof = await proveTable(analysis.machine, solver, { onProgress: (done, total, mnemonic) => progress.update(done, total, mnemonic) });
  progress.finish();
  const added: Diagnostic[] = applySeverities(proof?.diagnostics ?? [], severities);
  if (!added.length) return analysis;
  const diagnostics = [...analysis.diagnostics, ...added].sort((a, b) => a.span.start - b.span.start);
  const counts = { ...analysis.counts };
  for (const d of added) counts[d.severity]++;
  return { ...analysis, diagnostics, counts };
}

function count(n: number, one: string): string {
  return `${n} ${one}${n === 1 ? '' : 's'}`;
}

/** `2 errors, 1 warning in 3 files`, `no errors, 1 warning in 1 file`; with a cap, how many were shown. */
export function summaryLine(totals: { errors: number; warnings: number; shown: number; all: number }, files: number): string {
  const found = totals.errors || totals.warnings ? `${totals.errors ? count(totals.errors, 'error') : 'no errors'}, ${count(totals.warnings, 'warning')}` : 'no errors or warnings';
  const capped = totals.shown < totals.all ? ` (${totals.shown} shown of ${totals.all})` : '';
  return `${found} in ${count(files, 'file')}${capped}\n`;
}
