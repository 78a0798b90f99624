// A small argument parser: `--flag`, `--name value`, `--name=value`, positionals. Unknown
// options are an error the command reports with its usage line, never a crash.

export interface ParsedArgs {
  positionals: string[];
  options: Map<string, string | true>;
  errors: string[];
}

export interface OptionSpec {
  /** Options that take a value. */
  values?: string[];
  /** Options that are plain switches. */
  flags?: string[];
}

export function parseArgs(args: string[], spec: OptionSpec): ParsedArgs {
  const result: ParsedArgs = { positionals: [], options: new Map(), errors: [] };
  const values = new Set(spec.values ?? []);
  const flags = new Set(spec.flags ?? []);
  for (let i = 0; i < args.length; i++) {
    const arg = args[i];
    if (arg === '--') {
      result.positionals.push(...args.slice(i + 1));
      break;
    }
    if (!arg.startsWith('--') || arg === '-') {
      result.positionals.push(arg);
      continue;
    }
    const eq = arg.indexOf('=');
    const name = arg.slice(2, eq < 0 ? undefined : eq);
    if (flags.has(name)) {
      if (eq >= 0) result.errors.push(`--${name} takes no value`);
      result.options.set(name, true);
    } else if (values.has(name)) {
      const value = eq >= 0 ? arg.slice(eq + 1) : args[++i];
      if (value === undefined) result.errors.push(`--${name} needs a value`);
      else result.options.set(name, value);
    } else {
      result.errors.push(`unknown option --${name}`);
    }
  }
  return result;
}
