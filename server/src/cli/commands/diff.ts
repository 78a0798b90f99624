// `phasewright diff OLD.pwt NEW.pwt [--all]`: which chips' images change between two versions
// of a table, at which addresses, and what changed there. Exit 0 when identical, 1 when not,
// 2 on usage or file errors or when either table has errors.
import { resolve } from 'node:path';
import { analyse, errorCount } from '../../core/analysis';
import { diffTables } from '../../core/encode/diff';
import { toHex } from '../../core/model/numbers';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { readSource } from '../readSource';

const shownPerChip = 40;

export const diffCommand = defineCommand({
  name: 'diff',
  summary: 'compare the images of two versions of a table, chip by chip',
  operands: 'OLD.pwt NEW.pwt',
  options: [{ name: 'all', help: `list every changed address (default: the first ${shownPerChip} per chip)` }],
  exitCodes: [
    [0, 'identical: no chip needs re-programming'],
    [1, 'the tables differ (the chips to re-program are listed)'],
    [2, 'usage error, a file that cannot be read, or a table with errors (nothing compared)'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length !== 2) {
      io.err(`phasewright diff: ${parsed.errors[0] ?? 'give the old and the new .pwt file'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const machines = [];
    for (const file of parsed.positionals) {
      const source = readSource(resolve(io.cwd, file));
      if (!source.ok) {
        io.err(`phasewright diff: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
        return 2;
      }
      const analysis = analyse(source.text);
      const errors = errorCount(analysis.diagnostics);
      if (errors) {
        io.err(`phasewright diff: ${file} has ${errors} error(s); run \`phasewright check ${file}\` first\n`);
        return 2;
      }
      machines.push(analysis.machine);
    }
    const diff = diffTables(machines[0], machines[1]);
    const reprogram: string[] = [];
    for (const store of diff.stores) {
      if (store.incompatible) {
        io.out(`store ${store.store}: ${store.incompatible}\n`);
        reprogram.push(`every chip of store ${store.store}`);
        continue;
      }
      for (const chip of store.chips) {
        if (chip.changed === 0) {
          io.out(`store ${store.store} chip ${chip.chip}: unchanged\n`);
          continue;
        }
        reprogram.push(`chip ${chip.chip} of store ${store.store}`);
        io.out(`store ${store.store} chip ${chip.chip}: ${chip.changed} address${chip.changed > 1 ? 'es' : ''} changed\n`);
        const shown = parsed.options.has('all') ? chip.addresses : chip.addresses.slice(0, shownPerChip);
        for (const a of shown) io.out(`  0x${toHex(a.address, 4)}  ${a.where.padEnd(22)} ${a.inputs}  ${a.changes.join(', ')}\n`);
        if (shown.length < chip.addresses.length) io.out(`  ... ${chip.addresses.length - shown.length} more (use --all)\n`);
      }
    }
    io.out(diff.identical ? 'identical: no chip needs re-programming\n' : `re-program: ${reprogram.join('; ')}\n`);
    return diff.identical ? 0 : 1;
  },
});
