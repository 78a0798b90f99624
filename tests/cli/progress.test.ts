// Progress for long work: one line on stderr, rewritten in place, only when stderr is a terminal
// (never in piped or captured output), throttled, and cleared before results are printed; drawn
// by `phasewright run` on a long program and by the benchmarks' measuring loops.
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { progressLine } from '../../server/src/cli/progress';
import { timeMedian, useProgressIo, withProgress } from '../../bench/stats';
import { ins } from '../sim/support';

const root = join(__dirname, '../..');
const erase = '\r\x1b[K';

function terminal() {
  const io = memoryIo(root);
  io.errIsTty = true;
  return io;
}

describe('progressLine', () => {
  it('draws nothing when stderr is not a terminal', () => {
    const io = memoryIo(root);
    const line = progressLine(io, 'work');
    line.update(1, 2);
    line.finish();
    expect(io.stderr).toBe('');
  });

  it('rewrites one line on a terminal, at most every 200 ms, and clears it at the end', () => {
    const io = terminal();
    let now = 1000;
    const line = progressLine(io, 'work', () => now);
    line.update(1, 4, 'steps');
    now += 50;
    line.update(2, 4, 'steps'); // too soon: not drawn
    now += 200;
    line.update(3, 4);
    line.update(7);
    line.finish();
    expect(io.stderr).toBe(`${erase}work: 25% (1/4) steps${erase}work: 75% (3/4)${erase}`);
  });
});

describe('progress of long work', () => {
  it('phasewright run shows it on a terminal only, and clears it before the summary', async () => {
    const dir = join(root, 'tests/.tmp/cli-progress');
    mkdirSync(dir, { recursive: true });
    // `jal x0, 0`: a loop forever, stopped by the step limit after more than one chunk of steps.
    const spin = Buffer.alloc(4);
    spin.writeUInt32LE(ins('jal', { rd: 0, imm: 0 }) >>> 0);
    writeFileSync(join(dir, 'spin.bin'), spin);
    const args = ['run', 'examples/halyard-32.pwt', 'tests/.tmp/cli-progress/spin.bin', '--load-address', '0x10000', '--max-steps', '8000004'];
    const shown = terminal();
    expect(await runCommand(args, shown)).toBe(124);
    expect(shown.stderr).toMatch(/^\r\x1b\[Krunning: \d+ instructions retired\r\x1b\[K/);
    expect(shown.stderr).toContain('phasewright run: stopped after the step limit');
    const piped = memoryIo(root);
    expect(await runCommand(args, piped)).toBe(124);
    expect(piped.stderr).not.toContain('\x1b[');
    expect(piped.stderr.startsWith('phasewright run: stopped after the step limit')).toBe(true);
  });

  it('the benchmarks show it while they measure, on a terminal only', () => {
    const shown = terminal();
    useProgressIo(shown);
    timeMedian(() => undefined, 2, 1, 'analysing');
    expect(shown.stderr).toBe(`${erase}bench: 0% (0/3) analysing${erase}`);
    withProgress('fuzzing', (update) => update(5, 10));
    const piped = memoryIo(root);
    useProgressIo(piped);
    timeMedian(() => undefined, 2, 1, 'analysing');
    withProgress('fuzzing', (update) => update(5, 10));
    expect(piped.stderr).toBe('');
  });
});
