// A small argument parser: `--flag`, `--name value`, `--name=value`, `-x value` for an option
// with a one-letter alias, positionals. It reads the same option list the command's help
// prints (cli/help.ts), so the two cannot disagree. Unknown options are an error the command
// reports with its usage line, never a crash.

/** One option of a command, as the parser and the help both read it. */
export interface OptionDef {
  /** The long name without `--`. */
  name: string;
  /** The value's placeholder in the help (`FILE`, `DIR`, `N`); absent for a plain switch. */
  value?: string;
  /** A one-letter alias (`o` for `-o`). */
  short?: string;
  /** Shown without brackets in the usage line: the command needs it. */
  required?: boolean;
  /** Options sharing a group are alternatives: the usage line shows `(--a | --b)`. */
  oneOf?: string;
  /** What it does, for the help. */
  help: string;
}

export interface ParsedArgs {
  positionals: string[];
  options: Map<string, string | true>;
  errors: string[];
}

export function parseArgs(args: string[], spec: readonly OptionDef[]): ParsedArgs {
  const result: ParsedArgs = { positionals: [], options: new Map(), errors: [] };
  const byName = new Map(spec.map((o) => [o.name, o]));
  const byShort = new Map(spec.filter((o) => o.short).map((o) => [o.short!, o]));
  let i = 0;
  /** Records an option; one that takes a value takes the inline one or the next argument. */
  const take = (option: OptionDef, inline: string | undefined) => {
    if (!option.value) {
      if (inline !== undefined) result.errors.push(`--${option.name} takes no value`);
      result.options.set(option.name, true);
      return;
    }
    const value = inline ?? args[++i];
    if (value === undefined) result.errors.push(`--${option.name} needs a value`);
    else result.options.set(option.name, value);
  };
  for (; i < args.length; i++) {
    const arg = args[i];
    if (arg === '--') {
      result.positionals.push(...args.slice(i + 1));
      break;
    }
    const short = /^-([A-Za-z])$/.exec(arg)?.[1];
    if (short !== undefined) {
      const option = byShort.get(short);
      if (option) take(option, undefined);
      else result.errors.push(`unknown option -${short}`);
      continue;
    }
    if (!arg.startsWith('--') || arg === '-') {
      result.positionals.push(arg);
      continue;
    }
    const eq = arg.indexOf('=');
    const name = arg.slice(2, eq < 0 ? undefined : eq);
    const option = byName.get(name);
    if (option) take(option, eq >= 0 ? arg.slice(eq + 1) : undefined);
    else result.errors.push(`unknown option --${name}`);
  }
  return result;
}
