// Small helpers shared by the benchmarks: timing, medians and percentiles, aligned printing.

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

/** Median time of `fn` over `runs` runs after `warmup` unmeasured runs. */
export function timeMedian(fn: () => void, runs: number, warmup = 3): number {
  for (let i = 0; i < warmup; i++) fn();
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    const start = nowMs();
    fn();
    times.push(nowMs() - start);
  }
  return median(times);
}

export function row(label: string, value: string, target = ''): void {
  console.log(`  ${label.padEnd(46)} ${value.padStart(14)}${target ? `   (target ${target})` : ''}`);
}
