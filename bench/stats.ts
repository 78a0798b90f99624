// Small helpers shared by the benchmarks: timing, medians and percentiles, aligned printing, and
// a progress line on stderr while a measurement runs (drawn only when stderr is a terminal, by
// the CLI's own progressLine, and cleared when the measurement ends, before anything is printed).
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { type Io, nodeIo } from '../server/src/cli/io';
import { type Progress, progressLine } from '../server/src/cli/progress';

let progress: Progress | undefined;

/** Where the progress line goes (the terminal by default; tests pass their own Io). */
export function useProgressIo(io: Io): void {
  progress?.finish();
  progress = progressLine(io, 'bench');
}

function line(): Progress {
  return (progress ??= progressLine(nodeIo(), 'bench'));
}

export function nowMs(): number {
  return Number(process.hrtime.bigint()) / 1e6;
}

export function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

export function percentile(values: number[], p: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))];
}

/** Median time of `fn` over `runs` runs after `warmup` unmeasured runs; `label` names it in the progress line. */
export function timeMedian(fn: () => void, runs: number, warmup = 3, label = 'measuring'): number {
  for (let i = 0; i < warmup; i++) {
    line().update(i, warmup + runs, label);
    fn();
  }
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    line().update(warmup + i, warmup + runs, label);
    const start = nowMs();
    fn();
    times.push(nowMs() - start);
  }
  line().finish();
  return median(times);
}

/**
 * Runs `work` with a progress callback for a long measurement that is not a `timeMedian` loop;
 * the line is cleared when it returns, so what the benchmark prints next starts clean.
 */
export function withProgress<T>(label: string, work: (update: (done: number, total?: number) => void) => T): T {
  try {
    return work((done, total) => line().update(done, total, label));
  } finally {
    line().finish();
  }
}

export function row(label: string, value: string, target = ''): void {
  console.log(`  ${label.padEnd(46)} ${value.padStart(14)}${target ? `   (target ${target})` : ''}`);
}

/** A count in millions, for instructions per second. */
export function millions(n: number): string {
  return `${(n / 1e6).toFixed(2)} M`;
}

/**
 * The path of tests/programs/NAME built as an RV32I ELF (tests/programs/build.mjs, which needs the
 * cross compiler); exits with one line saying so when it cannot be built.
 */
export function builtProgram(bench: string, name: string): string {
  const root = process.cwd(); // the benchmarks run from the repository's top (npm run bench)
  try {
    return execFileSync(process.execPath, [join(root, 'tests/programs/build.mjs'), name], { encoding: 'utf8' }).trim().split('\n').pop()!;
  } catch (err) {
    console.log(`${bench}: cannot build tests/programs/${name}.c (is gcc-riscv64-unknown-elf installed?): ${(err as Error).message}`);
    process.exit(1);
  }
}
