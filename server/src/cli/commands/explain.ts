// `phasewright explain CODE`: the long explanation of a diagnostic code from the catalogue.
import { catalogue, codeInfo } from '../../core/checks/catalogue';
import { closest } from '../../core/text/suggest';
import { parseArgs } from '../args';
import { defineCommand } from '../help';

export const explainCommand = defineCommand({
  name: 'explain',
  summary: 'explain a diagnostic code (without one: list every code)',
  operands: '[CODE]',
  options: [],
  exitCodes: [
    [0, 'explained (or listed)'],
    [2, 'usage error, or no diagnostic code of that name'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length > 1) {
      io.err(`phasewright explain: ${parsed.errors[0] ?? 'give one code'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const code = parsed.positionals[0];
    if (!code) {
      io.out('Diagnostic codes:\n' + catalogue.map((c) => `  ${c.code.padEnd(22)} ${c.severity.padEnd(8)} ${c.title}`).join('\n') + '\n');
      return 0;
    }
    const info = codeInfo(code);
    if (!info) {
      const guess = closest(code, catalogue.map((c) => c.code));
      io.err(`phasewright explain: no diagnostic code '${code}'${guess ? `; did you mean '${guess}'?` : ''} (run 'phasewright explain' for the list)\n`);
      return 2;
    }
    io.out(`${info.code} (${info.severity} by default): ${info.title}\n\n${wrap(info.explanation, 78)}\n`);
    return 0;
  },
});

function wrap(text: string, width: number): string {
  const out: string[] = [];
  let line = '';
  for (const word of text.split(/\s+/)) {
    if (line && line.length + 1 + word.length > width) {
      out.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) out.push(line);
  return out.join('\n');
}
