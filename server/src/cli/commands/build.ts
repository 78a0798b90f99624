// `phasewright build FILE [--out DIR] [--format LIST] [--store NAME] [--force] [--config FILE]`:
// writes the control-store images. Exit 0 on success, 1 when the table has errors (nothing
// written) or an output could not be written safely, 2 on usage, lookup or input file errors.
import { resolve } from 'node:path';
import { parseArgs } from '../args';
import { buildImages, describeBuild } from '../buildImages';
import { defineCommand } from '../help';
import { loadSeverityConfig } from '../config';
import { readSource } from '../readSource';
import { buildFormats, type BuildFormat } from '../../core/encode/plan';
import { OutputError } from '../output/safeWriter';
import { ManifestError } from '../output/manifest';
import { progressLine } from '../progress';

export const buildCommand = defineCommand({
  name: 'build',
  summary: 'write control-store images (HEX, S-record, binary, $readmemh, listing)',
  operands: 'FILE',
  options: [
    { name: 'out', value: 'DIR', help: 'the folder to write into (default out); its manifest lists what this tool wrote there' },
    { name: 'format', value: 'LIST', help: `comma-separated formats: ${buildFormats.join(', ')} (default: all)` },
    { name: 'store', value: 'NAME', help: 'build one store only (default: every store)' },
    { name: 'force', help: 'write images of a table with errors; they are marked untrusted and must not be programmed' },
    { name: 'config', value: 'FILE', help: 'severities per code from a JSON file, as for check' },
  ],
  exitCodes: [
    [0, 'images written (with --force: although the table has errors)'],
    [1, 'the table has errors or cannot be built (nothing written), or an output could not be written safely'],
    [2, 'usage error, a file that cannot be read, an unknown format or store, or a bad --config file'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length !== 1) {
      io.err(`phasewright build: ${parsed.errors[0] ?? 'give one .pwt file'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const file = parsed.positionals[0];
    const formatsOption = parsed.options.get('format');
    let formats: BuildFormat[] | undefined;
    if (typeof formatsOption === 'string') {
      formats = formatsOption.split(',').map((f) => f.trim()).filter(Boolean) as BuildFormat[];
      const bad = formats.find((f) => !buildFormats.includes(f));
      if (bad || formats.length === 0) {
        io.err(`phasewright build: unknown format '${bad ?? ''}'; choose from ${buildFormats.join(', ')}\n`);
        return 2;
      }
    }
    const configPath = parsed.options.get('config');
    const config = typeof configPath === 'string' ? loadSeverityConfig(resolve(io.cwd, configPath)) : { ok: true as const, severities: undefined };
    if (!config.ok) {
      io.err(`phasewright build: ${config.reason}\n`);
      return 2;
    }
    const source = readSource(resolve(io.cwd, file), undefined, file);
    if (!source.ok) {
      io.err(`phasewright build: ${source.reason}\n`);
      return 2;
    }
    const outOption = parsed.options.get('out');
    const outDir = typeof outOption === 'string' ? outOption : 'out';
    const store = parsed.options.get('store');
    const progress = progressLine(io, 'build');
    try {
      const result = buildImages({
        text: source.text,
        sourcePath: file,
        outDir: resolve(io.cwd, outDir),
        formats,
        stores: typeof store === 'string' ? [store] : undefined,
        force: parsed.options.has('force'),
        severities: config.severities,
        progress: (done, total, detail) => progress.update(done, total, detail),
      });
      progress.finish();
      if (!result.ok) {
        io.err(`phasewright build: ${result.reason}\n`);
        return result.lookup ? 2 : 1;
      }
      io.out(describeBuild(result, outDir));
      return 0;
    } catch (err) {
      progress.finish();
      if (err instanceof OutputError || err instanceof ManifestError) {
        io.err(`phasewright build: ${err.message}\n`);
        return 1;
      }
      throw err;
    }
  },
});
