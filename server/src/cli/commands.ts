// Command dispatch and the overview usage text. Each command lives in its own module under
// commands/ and declares its operands, options and exit codes once (help.ts derives its usage
// line and help page from them); `phasewright help CMD` and `phasewright CMD --help` print that
// page, and an unknown command suggests the closest name.
import type { Io } from './io';
import { VERSION } from './version';
import { closest } from '../core/text/suggest';
import { type Command, asksForHelp, commandHelp } from './help';
import { checkCommand } from './commands/check';
import { explainCommand } from './commands/explain';
import { lspCommand } from './commands/lsp';
import { debugCommand } from './commands/debug';
import { traceCommand } from './commands/trace';
import { buildCommand } from './commands/build';
import { diffCommand } from './commands/diff';
import { runCommand as runProgramCommand } from './commands/run';
import { diagramCommand } from './commands/diagram';
import { budgetCommand } from './commands/budget';
import { fitCommand } from './commands/fit';
import { compileCommand } from './commands/compile';
import { proveCommand } from './commands/prove';

export type { Command } from './help';

export const commands: readonly Command[] = [checkCommand, explainCommand, buildCommand, diffCommand, budgetCommand, fitCommand, diagramCommand, runProgramCommand, proveCommand, compileCommand, lspCommand, debugCommand, traceCommand];

export function usage(): string {
  const lines = ['Phasewright: control tables for microcoded RV32I processors built from discrete logic.', '', 'Usage:'];
  for (const c of commands) lines.push(`  phasewright ${c.usage}`, `      ${c.summary}`);
  lines.push('  phasewright help [COMMAND]', '      this overview, or one command\'s usage, options and exit codes (also: COMMAND --help)');
  lines.push(
    '',
    'Exit codes: 0 success, 1 problems found in the table, 2 usage, lookup or file errors;',
    '`diff` exits 1 when the tables differ, and `run` with the program\'s own exit code',
    '(`phasewright help COMMAND` lists each command\'s codes).',
  );
  return lines.join('\n') + '\n';
}

/** The command of that name, or a one-line error that suggests the closest one. */
function lookup(name: string, io: Io): Command | undefined {
  const command = commands.find((c) => c.name === name);
  if (command) return command;
  const guess = closest(name, [...commands.map((c) => c.name), 'help']);
  io.err(`phasewright: unknown command '${name}'${guess ? `; did you mean '${guess}'?` : ''} (run 'phasewright help' for the list)\n`);
  return undefined;
}

export async function runCommand(argv: string[], io: Io): Promise<number> {
  const [name, ...rest] = argv;
  if (!name) {
    io.err(usage());
    return 2;
  }
  if (name === '--help' || name === '-h' || name === 'help') {
    if (rest.length === 0) {
      io.out(usage());
      return 0;
    }
    const command = lookup(rest[0], io);
    if (!command) return 2;
    io.out(commandHelp(command));
    return 0;
  }
  if (name === '--version' || name === '-v') {
    io.out(`phasewright ${VERSION}\n`);
    return 0;
  }
  const command = lookup(name, io);
  if (!command) return 2;
  if (asksForHelp(rest)) {
    io.out(commandHelp(command));
    return 0;
  }
  return command.run(rest, io);
}

export { VERSION } from './version';
