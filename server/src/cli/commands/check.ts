// `phasewright check FILE... [--json] [--config FILE]`: analyses each file and prints its
// diagnostics. Exit 0 when no file has errors, 1 when some has, 2 on usage or file errors.
import { analyse, errorCount } from '../../core/analysis';
import { parseArgs } from '../args';
import type { Command } from '../commands';
import { loadSeverityConfig } from '../config';
import { readSource } from '../readSource';
import { renderDiagnostic, toJson, type JsonDiagnostic } from '../render';
import { resolve } from 'node:path';

export const checkCommand: Command = {
  name: 'check',
  summary: 'report problems in control tables',
  usage: 'check FILE... [--json] [--config FILE]',
  async run(args, io) {
    const parsed = parseArgs(args, { flags: ['json'], values: ['config'] });
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
    const json = parsed.options.has('json');
    const jsonOut: { files: { file: string; errors: number; warnings: number; diagnostics: JsonDiagnostic[] }[] } = { files: [] };
    let errors = 0;
    let ioFailure = false;
    for (const file of parsed.positionals) {
      const source = readSource(resolve(io.cwd, file));
      if (!source.ok) {
        io.err(`phasewright check: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
        ioFailure = true;
        continue;
      }
      const analysis = analyse(source.text, { severities: config.severities });
      const fileErrors = errorCount(analysis.diagnostics);
      errors += fileErrors;
      const warnings = analysis.diagnostics.filter((d) => d.severity === 'warning').length;
      if (json) {
        jsonOut.files.push({ file, errors: fileErrors, warnings, diagnostics: analysis.diagnostics.map((d) => toJson(file, analysis, d)) });
      } else {
        for (const d of analysis.diagnostics) io.out(renderDiagnostic(file, analysis, d) + '\n');
        if (analysis.truncated) io.out(`${file}: ${analysis.truncated} more diagnostic(s) not shown\n`);
      }
    }
    if (json) io.out(JSON.stringify(jsonOut, null, 2) + '\n');
    else if (!ioFailure || errors) {
      const files = parsed.positionals.length;
      io.err(errors ? `${errors} error(s) in ${files} file(s)\n` : `no errors in ${files} file(s)\n`);
    }
    if (ioFailure) return 2;
    return errors ? 1 : 0;
  },
};
