// The command line's help, read as a user reads it: `phasewright help CMD`, `CMD --help` and
// `CMD -h` print the same page (usage, options, exit codes); the usage line and the options
// section list the same options, and the command accepts every one of them; an unknown command
// suggests the closest; usage and lookup errors exit 2, table problems 1.
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';

const root = join(__dirname, '../..');

async function run(...args: string[]) {
  const io = memoryIo(root);
  const code = await runCommand(args, io);
  return { code, out: io.stdout, err: io.stderr };
}

/** The command names the overview lists, read from its text. */
async function listedCommands(): Promise<string[]> {
  const overview = (await run('help')).out;
  return [...overview.matchAll(/^ {2}phasewright (\S+)/gm)].map((m) => m[1]).filter((name) => name !== 'help');
}

describe('help', () => {
  it('lists every command in the overview, with `help` itself', async () => {
    const r = await run('help');
    expect(r.code).toBe(0);
    expect(await listedCommands()).toEqual(['check', 'explain', 'build', 'diff', 'budget', 'fit', 'diagram', 'run', 'prove', 'compile', 'lsp', 'debug', 'trace']);
    expect(r.out).toContain('  phasewright help [COMMAND]\n');
  });

  it('prints one page per command the same three ways, each with usage, options and exit codes', async () => {
    for (const name of await listedCommands()) {
      const page = await run('help', name);
      expect(page.code, name).toBe(0);
      expect(page.out, name).toMatch(new RegExp(`^usage: phasewright ${name}\\b`));
      expect(page.out, name).toContain('\nOptions:\n');
      expect(page.out, name).toMatch(/\nExit codes:\n(?: +\S+ {2}.+\n)+$/);
      expect((await run(name, '--help')).out, name).toBe(page.out);
      expect((await run(name, '-h')).out, name).toBe(page.out);
    }
  });

  it('lists the same options in the usage line and the options section, and the command accepts each', async () => {
    for (const name of await listedCommands()) {
      const page = (await run('help', name)).out;
      const usageLine = page.split('\n')[0];
      const section = page.slice(page.indexOf('Options:'), page.indexOf('Exit codes:'));
      const inUsage = [...usageLine.matchAll(/(?<![\w-])--?([a-zA-Z][\w-]*)/g)].map((m) => m[1]).filter((o) => o !== '-');
      const inSection = [...section.matchAll(/^ {2}(?:-\w, )?--([\w-]+)/gm)].map((m) => m[1]).filter((o) => o !== 'help');
      // The usage line may write an option by its one-letter alias (-o); the section names both.
      const shortToLong = new Map([...section.matchAll(/^ {2}-(\w), --([\w-]+)/gm)].map((m) => [m[1], m[2]]));
      expect(inUsage.map((o) => shortToLong.get(o) ?? o).sort(), name).toEqual(inSection.sort());
      for (const option of inSection) {
        const r = await run(name, `--${option}`, '--definitely-not-an-option');
        // The first unknown option reported must be the made-up one, not this one.
        expect(r.err, `${name} --${option}`).not.toContain(`unknown option --${option}`);
      }
    }
  });

  it('shows every option of diagram, fit and run in their usage lines', async () => {
    const overview = (await run('help')).out;
    expect(overview).toContain('phasewright diagram FILE --class NAME [--guard IN=BITS,...] [--loop-count N] [--all] [--theme light|dark|auto] -o FILE.svg');
    expect(overview).toMatch(/phasewright fit FILE --device gal16v8\|gal22v10 .*\[--keep-fill\] \[--vectors N\] \[--mode MODE\]/);
    expect(overview).toMatch(/phasewright run FILE PROGRAM .*\[--force\] \[--config FILE\]/);
  });

  it('documents each command\'s exit codes, diff\'s 1 for tables that differ among them', async () => {
    expect((await run('help', 'diff')).out).toContain('  1  the tables differ (the chips to re-program are listed)\n');
    expect((await run('help', 'check')).out).toContain('  1  some file has errors\n');
    expect((await run('help', 'run')).out).toMatch(/0\.\.255 {2}the program's own exit code/);
  });

  it('suggests the closest command for an unknown one, in one line, exit 2', async () => {
    const r = await run('chek', 'examples/halyard-32.pwt');
    expect(r).toEqual({ code: 2, out: '', err: "phasewright: unknown command 'chek'; did you mean 'check'? (run 'phasewright help' for the list)\n" });
    expect((await run('help', 'biuld')).err).toContain("did you mean 'build'?");
    expect((await run('help', 'biuld')).code).toBe(2);
  });
});

describe('exit codes', () => {
  it('usage and lookup errors exit 2, table problems 1', async () => {
    expect((await run('build', 'examples/halyard-32.pwt', '--store', 'nosuch', '--out', 'tests/.tmp/cli-help')).code).toBe(2);
    expect((await run('diagram', 'examples/halyard-32.pwt', '--class', 'NOSUCH', '-o', 'tests/.tmp/cli-help/x.svg')).code).toBe(2);
    expect((await run('explain', 'no-such-code')).code).toBe(2);
    expect((await run('check', 'examples/faults/guard-gap.pwt')).code).toBe(1);
    expect((await run('build', 'examples/faults/guard-gap.pwt', '--out', 'tests/.tmp/cli-help')).code).toBe(1);
    // A table whose problems are not the budget's is still a table problem for `budget`.
    const budget = await run('budget', 'examples/faults/guard-gap.pwt');
    expect(budget.code).toBe(1);
    expect(budget.err).toContain('error(s) besides the budget');
  });
});
