// Builds control-store images for a source file: analyse, refuse on errors unless forced,
// plan, write safely (atomic, read back, manifest), and describe the result. Shared by
// `phasewright build`, `npm run demo` and the language server's `phasewright.build` command.
import { basename, extname } from 'node:path';
import { analyse, errorCount, type SeverityConfig } from '../core/analysis';
import { planBuild, type BuildFormat, type StoreSummary } from '../core/encode/plan';
import { writeOutputSet, type OutputSetReport, type OutputSpec } from './output/outputSet';
import { VERSION } from './version';

export interface BuildRequest {
  /** The source text and its path as the user named it. */
  text: string;
  sourcePath: string;
  outDir: string;
  formats?: BuildFormat[];
  stores?: string[];
  force?: boolean;
  severities?: SeverityConfig;
  /** Hears the progress of the writing: files done of all, and what is being written. */
  progress?: (done: number, total: number, detail: string) => void;
  /** How long to wait for another run's lock on the output folder. */
  lockWaitMs?: number;
}

export type BuildResult =
  | { ok: true; forced: boolean; errors: number; stores: StoreSummary[]; report: OutputSetReport }
  /** `lookup`: the request names something the table does not have (a usage error, exit 2). */
  | { ok: false; reason: string; errors: number; lookup?: true };

export function buildImages(request: BuildRequest): BuildResult {
  const analysis = analyse(request.text, { severities: request.severities });
  const errors = errorCount(analysis.diagnostics);
  if (errors > 0 && !request.force) {
    return {
      ok: false,
      errors,
      reason: `${request.sourcePath} has ${errors} error(s); no images were written. Fix them (\`phasewright check ${request.sourcePath}\`) or pass --force to write images of a table with errors.`,
    };
  }
  const known = analysis.machine.stores.map((s) => s.name);
  for (const name of request.stores ?? []) {
    if (!known.includes(name)) return { ok: false, errors, lookup: true, reason: `no store named '${name}'; the file has ${known.join(', ') || 'no stores'}` };
  }
  const stem = basename(request.sourcePath, extname(request.sourcePath)) || 'table';
  const plan = planBuild(analysis.machine, { stem, source: basename(request.sourcePath), formats: request.formats, stores: request.stores });
  if (plan.problems.length) return { ok: false, errors, reason: `cannot build: ${plan.problems.join('; ')}` };
  if (plan.files.length === 0) return { ok: false, errors, reason: 'the file declares no store to build (a `word` and an `address` layout)' };
  const files: OutputSpec[] = plan.files.map((f) =>
    f.kind === 'image'
      ? { name: f.name, format: f.format, store: f.store, chip: f.chip, image: f.image, options: f.options }
      : { name: f.name, format: f.format, store: f.store, chunks: f.chunks },
  );
  const report = writeOutputSet({ folder: request.outDir, command: 'build', sourceFile: basename(request.sourcePath), version: VERSION, files, progress: request.progress, lockWaitMs: request.lockWaitMs });
  return { ok: true, forced: errors > 0, errors, stores: plan.stores, report };
}

/** The summary people read after a build: stores, chips, address bits, words, files and checksums. */
export function describeBuild(result: Extract<BuildResult, { ok: true }>, outDir: string): string {
  const lines: string[] = [];
  if (result.forced) lines.push(`WARNING: built with --force although the table has ${result.errors} error(s); do not program these images into chips.`);
  for (const s of result.stores) {
    const chips = s.chipWidths.length;
    lines.push(
      `store ${s.store}: ${s.addressBits} address lines (${2 ** s.addressBits} words), ${s.wordBits}-bit word on ${chips} chip${chips > 1 ? 's' : ''} of ${[...new Set(s.chipWidths)].join('/')} bits${s.chipName ? ` (${s.chipName})` : ''}; ${s.usedWords} words from the table, ${s.fillWords} fill`,
    );
  }
  lines.push(`wrote ${result.report.files.length} files to ${outDir}:`);
  const width = Math.max(...result.report.files.map((f) => f.entry.name.length));
  for (const f of result.report.files) {
    const sum = f.entry.sum16 ? `sum ${f.entry.sum16}` : '';
    lines.push(`  ${f.entry.name.padEnd(width)}  ${String(f.sizeBytes).padStart(7)} bytes  ${sum.padEnd(8)}  sha256 ${f.sha256.slice(0, 16)}`);
  }
  const left = result.report.leftInPlace;
  if (left.length) {
    lines.push(`left in place: ${left.length} file${left.length > 1 ? 's' : ''} an earlier build of this table made and this one does not (Phasewright deletes nothing; remove ${left.length > 1 ? 'them' : 'it'} if no longer needed):`);
    for (const name of left) lines.push(`  ${name}`);
  }
  for (const w of result.report.warnings) lines.push(`  note: ${w}`);
  lines.push(`manifest: ${outDir}/phasewright-manifest.json (sizes, SHA-256, 16-bit sums). "sum" is the 16-bit byte sum of the chip's data, as device programmers show it.`);
  lines.push('Caution: check every image against the chips\' data sheets before programming; a wrong image can enable two drivers onto one bus.');
  return lines.join('\n') + '\n';
}
