// Command dispatch and the usage text. Each command lives in its own module under commands/.
import type { Io } from './io';
import { VERSION } from './version';
import { checkCommand } from './commands/check';
import { explainCommand } from './commands/explain';
import { lspCommand } from './commands/lsp';
import { buildCommand } from './commands/build';
import { diffCommand } from './commands/diff';
import { runCommand as runProgramCommand } from './commands/run';
import { diagramCommand } from './commands/diagram';
import { budgetCommand } from './commands/budget';
import { fitCommand } from './commands/fit';

export interface Command {
  name: string;
  summary: string;
  usage: string;
  run(args: string[], io: Io): Promise<number>;
}

const commands: Command[] = [checkCommand, explainCommand, buildCommand, diffCommand, budgetCommand, fitCommand, lspCommand, diagramCommand, runProgramCommand];

export function usage(): string {
  const lines = ['Phasewright: control tables for microcoded RV32I processors built from discrete logic.', '', 'Usage:'];
  for (const c of commands) lines.push(`  phasewright ${c.usage}`, `      ${c.summary}`);
  lines.push('', 'Exit codes: 0 success, 1 problems found in the table, 2 usage or file errors;', '`run` exits with the program\'s own exit code (see docs/simulator.md for the others).');
  return lines.join('\n') + '\n';
}

export async function runCommand(argv: string[], io: Io): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    io.out(usage());
    return name ? 0 : 2;
  }
  if (name === '--version' || name === '-v') {
    io.out(`phasewright ${VERSION}\n`);
    return 0;
  }
  const command = commands.find((c) => c.name === name);
  if (!command) {
    io.err(`phasewright: unknown command '${name}'\n\n${usage()}`);
    return 2;
  }
  return command.run(rest, io);
}

export function registerCommand(command: Command): void {
  commands.push(command);
}

export { VERSION } from './version';
