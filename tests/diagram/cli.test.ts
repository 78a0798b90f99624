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

  it('draws a sequencer machine\'s loop for --loop-count: the file holds step 3 four times, the way out last', async () => {
    const r = await run('diagram', 'examples/windlass-32.pwt', '--class', 'OP', '--guard', 'funct3=001', '--loop-count', '3', '-o', 'tests/.tmp/cli-diagram/sll.svg', '--theme', 'light');
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(
      /^wrote tests\/\.tmp\/cli-diagram\/sll\.svg \(\d+ bytes\): class OP, 7 steps \(loop count 3: step 3 repeats 3 times; shz from the loop, not --guard\), 14 strobes, 3 fields, 3 buses; funct3=001 f7b5=0 shz=0 \(sll\)\n/,
    );
    expect(r.out).toContain('note: In the loop of step 3 the loop count (3) sets shz: shz=0 while it repeats, shz=1 on the way out.\n');
    const svg = readFileSync(join(tmp, 'sll.svg'), 'utf8');
    expect([...svg.matchAll(/data-col="(\d+)" data-step="(\d+)"/g)].map((m) => Number(m[2]))).toEqual([0, 1, 2, 3, 3, 3, 3]);
    expect([...svg.matchAll(/data-step="3" data-visit="(\d+)"/g)].map((m) => Number(m[1]))).toEqual([1, 2, 3, 4]);
    expect(svg).toContain('>step 3 (4th)<');
    // The way out: the else alternative, which writes rd from t (t.oe drives result, x.rd.ck loads it).
    expect(svg.match(/data-col="6" data-step="3" data-visit="4">step 3 \(4th\)<\/text>\n<text [^>]*>else</)).not.toBeNull();
    expect(svg).toMatch(/data-row="bus" data-name="result" data-drivers="alu\.oe mem\.rd alu\.oe alu\.oe alu\.oe alu\.oe t\.oe"/);
    expect(svg).toContain('step 3 repeats 3 times (shz=0), then leaves (shz=1)');
    // The default loop count is 2, and the summary says it is the default.
    const byDefault = await run('diagram', 'examples/windlass-32.pwt', '--class', 'OP', '--guard', 'funct3=001', '-o', 'tests/.tmp/cli-diagram/sll2.svg');
    expect(byDefault.out).toContain('class OP, 6 steps (loop count 2, the default: step 3 repeats 2 times;');
    expect([...readFileSync(join(tmp, 'sll2.svg'), 'utf8').matchAll(/data-step="(\d+)"/g)].map((m) => Number(m[1]))).toEqual([0, 1, 2, 3, 3, 3]);
    expect(readdirSync(tmp).sort()).toEqual(['sll.svg', 'sll2.svg']);
  });

  it('refuses a loop count that is not a whole number from 0 to 64, and says --loop-count does nothing without a sequencer', async () => {
    for (const bad of ['-1', '65', '2.5', 'x']) {
      const r = await run('diagram', 'examples/windlass-32.pwt', '--class', 'OP', '--loop-count', bad, '-o', 'tests/.tmp/cli-diagram/x.svg');
      expect(r.code, bad).toBe(2);
      expect(r.err).toContain('--loop-count: the loop count is a whole number from 0 to 64');
    }
    expect(existsSync(join(tmp, 'x.svg'))).toBe(false);
    const plain = await run('diagram', 'examples/halyard-32.pwt', '--class', 'OP', '--loop-count', '3', '-o', 'tests/.tmp/cli-diagram/op.svg');
    expect(plain.code).toBe(0);
    expect(plain.out).toContain('note: --loop-count has no effect: examples/halyard-32.pwt has no sequencer part');
    expect(plain.out).toMatch(/class OP, 3 steps, /);
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
    expect(r.out).toContain('phasewright diagram FILE --class NAME [--guard IN=BITS,...] [--loop-count N] [--all] [--theme light|dark|auto] -o FILE.svg');
  });
});
