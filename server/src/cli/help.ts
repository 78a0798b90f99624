// What a command is and how its help reads: each command module declares its operands, its
// options (the one list the argument parser also reads) and its exit codes once, and this file
// derives the usage line (`check FILE... [--json] [--config FILE]`) and the help page
// (`phasewright help check`, `phasewright check --help`) from them.
//
// Deliberately not here: dispatch (commands.ts) and parsing (args.ts).
import type { OptionDef } from './args';
import type { Io } from './io';

/** An exit code and what it means for this command (`'0..255'` for a range). */
export type ExitCode = readonly [code: number | string, meaning: string];

export interface CommandSpec {
  name: string;
  /** One line, lower case, no full stop: what the command does. */
  summary: string;
  /** The operands as the usage line shows them: `FILE...`, `OLD.pwt NEW.pwt`. */
  operands: string;
  options: readonly OptionDef[];
  /** What the usage line shows after the options: `[-- FLAGS...]`. */
  trailing?: string;
  exitCodes: readonly ExitCode[];
  /** Further paragraphs for the help page. */
  details?: readonly string[];
  run(this: Command, args: string[], io: Io): Promise<number>;
}

export interface Command extends CommandSpec {
  /** The usage line without the program name, derived from the operands and options. */
  readonly usage: string;
}

/** A command with its usage line derived from its own option list. */
export function defineCommand(spec: CommandSpec): Command {
  return { ...spec, usage: usageLine(spec) };
}

/** The option as the usage line writes it: `--out DIR`, `-o FILE.svg`, `--all`. */
function optionText(option: OptionDef): string {
  const flag = option.short ? `-${option.short}` : `--${option.name}`;
  return option.value ? `${flag} ${option.value}` : flag;
}

export function usageLine(spec: Pick<CommandSpec, 'name' | 'operands' | 'options' | 'trailing'>): string {
  const parts = [spec.name];
  if (spec.operands) parts.push(spec.operands);
  const groups = new Set<string>();
  for (const option of spec.options) {
    if (option.oneOf) {
      if (groups.has(option.oneOf)) continue;
      groups.add(option.oneOf);
      const members = spec.options.filter((o) => o.oneOf === option.oneOf).map(optionText).join(' | ');
      parts.push(option.required ? `(${members})` : `[${members}]`);
      continue;
    }
    parts.push(option.required ? optionText(option) : `[${optionText(option)}]`);
  }
  if (spec.trailing) parts.push(spec.trailing);
  return parts.join(' ');
}

/** The help page of one command: usage, summary, options, details and exit codes. */
export function commandHelp(command: Command): string {
  const lines = [`usage: phasewright ${command.usage}`, '', `${command.summary[0].toUpperCase()}${command.summary.slice(1)}.`];
  const rows = command.options.map((o) => [`${o.short ? `-${o.short}, ` : ''}--${o.name}${o.value ? ` ${o.value}` : ''}`, o.help]);
  rows.push(['-h, --help', 'print this help']);
  const width = Math.max(...rows.map((r) => r[0].length));
  lines.push('', 'Options:', ...rows.map(([left, right]) => `  ${left.padEnd(width)}  ${right}`));
  for (const paragraph of command.details ?? []) lines.push('', paragraph);
  const codeWidth = Math.max(...command.exitCodes.map(([code]) => String(code).length));
  lines.push('', 'Exit codes:', ...command.exitCodes.map(([code, meaning]) => `  ${String(code).padStart(codeWidth)}  ${meaning}`));
  return lines.join('\n') + '\n';
}

/** Whether the arguments ask for help (`-h` or `--help` before any `--`). */
export function asksForHelp(args: readonly string[]): boolean {
  for (const arg of args) {
    if (arg === '--') return false;
    if (arg === '-h' || arg === '--help') return true;
  }
  return false;
}
