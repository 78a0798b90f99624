// `phasewright diagram` as a user runs it: the SVG file it writes (atomically, read back) is
// the core's drawing for the class and guard asked for; bad classes, guards, themes and paths
// get a one-line reason and exit 2, and nothing is left behind.
import { existsSync, mkdirSync, readFileSync, readdirSync, rmSync, symlinkSync } from 'node:fs';
import { join } from 'node:path';
import { beforeEach, describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { analyse } from '../../server/src/core/analysis';
import { parseGuardChoice } from '../../server/src/core/diagram/guardChoice';
import { timingDiagram } from '../../server/src/core/diagram/timing';
import { findClass } from '../../server/src/core/diagram/timingModel';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/cli-diagram');

async function run(...args: string[]) {
  const io = memoryIo(root);
  const code = await runCommand(args, io);
  return { code, out: io.stdout, err: io.stderr };
}

beforeEach(() => {
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(tmp, { recursive: true });
});

describe('phasewright diagram', () => {
  it('writes the SVG of the class and guard asked for, and says what it drew', async () => {
    const r = await run('diagram', 'examples/halyard-32.pwt', '--class', 'BRANCH', '--guard', 'taken=1', '-o', 'tests/.tmp/cli-diagram/branch.svg', '--theme', 'light');
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^wrote tests\/\.tmp\/cli-diagram\/branch\.svg \(\d+ bytes\): class BRANCH, 4 steps, 12 strobes, 3 fields, 3 buses; taken=1 \(beq\)\n$/);
    const machine = analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8')).machine;
    const choice = parseGuardChoice(machine, 'taken=1');
    if (!choice.ok) throw new Error(choice.reason);
    const expected = timingDiagram(machine, findClass(machine, 'BRANCH')!, choice.choice, { theme: 'light' }).svg;
    expect(readFileSync(join(tmp, 'branch.svg'), 'utf8')).toBe(expected);
    // Only the target is left in the folder: no temporary file.
    expect(readdirSync(tmp)).toEqual(['branch.svg']);
  });

  it('draws a table with errors but says so', async () => {
    const r = await run('diagram', 'examples/faults/bus-contention.pwt', '--class', 'OP', '-o', 'tests/.tmp/cli-diagram/c.svg');
    expect(r.code).toBe(0);
    expect(r.err).toContain('note: examples/faults/bus-contention.pwt has 1 error(s)');
    expect(readFileSync(join(tmp, 'c.svg'), 'utf8')).toContain('a.oe + b.oe');
  });

  it('refuses what it cannot draw with a reason and exit 2, writing nothing', async () => {
    const cases: [string[], RegExp][] = [
      [['--class', 'NOPE'], /has no class named 'NOPE'; its classes are LUI, AUIPC, JAL/],
      [['--class', 'OP', '--guard', 'funct3=1011'], /--guard: '1011' is not a 3-bit value for funct3/],
      [['--class', 'OP', '--theme', 'neon'], /unknown theme 'neon'/],
      [['--class', 'OP', '--colour'], /unknown option --colour/],
    ];
    for (const [extra, message] of cases) {
      const r = await run('diagram', 'examples/halyard-32.pwt', ...extra, '-o', 'tests/.tmp/cli-diagram/x.svg');
      expect(r.code, extra.join(' ')).toBe(2);
      expect(r.err).toMatch(message);
    }
    const noOut = await run('diagram', 'examples/halyard-32.pwt', '--class', 'OP');
    expect(noOut.code).toBe(2);
    expect(noOut.err).toContain('name the SVG file to write with -o FILE.svg');
    const noFile = await run('diagram', 'examples/missing.pwt', '--class', 'OP', '-o', 'tests/.tmp/cli-diagram/x.svg');
    expect(noFile.code).toBe(2);
    expect(noFile.err).toContain('examples/missing.pwt: no such file');
    expect(existsSync(join(tmp, 'x.svg'))).toBe(false);
  });

  it('will not write through a symbolic link planted at the target', async () => {
    symlinkSync(join(tmp, 'elsewhere.svg'), join(tmp, 'link.svg'));
    const r = await run('diagram', 'examples/halyard-32.pwt', '--class', 'LUI', '-o', 'tests/.tmp/cli-diagram/link.svg');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/cannot write/);
    expect(existsSync(join(tmp, 'elsewhere.svg'))).toBe(false);
  });

  it('is listed in the usage text', async () => {
    const r = await run('--help');
    expect(r.out).toContain('phasewright diagram FILE --class NAME [--guard IN=BITS,...] [--all] [--theme light|dark|auto] -o FILE.svg');
  });
});
