// Robustness figures (`npm run bench:robust`): fuzz cases run against the analyser and the
// failures found (must be 0), then a language-server soak of 10 000 random edits of the demo
// with hover, completion and formatting between them: edits, crashes (must be 0), the p99
// response time during the soak, and the server's memory at open, after the warm-up and at
// the end. Then the inputs that used to cost quadratic time, at doubling sizes, with the
// growth ratio of each doubling (target: at most 2.5x the time for 2x the input): decode maps
// of overlapping, distinct and scattered rows (the whole analysis), and ELF files whose symbols
// point into one unterminated name table (parsing). `ROBUST_PART=growth npm run bench:robust`
// runs only that last part.
import fc from 'fast-check';
import { analyse } from '../server/src/core/analysis';
import { CheckContext } from '../server/src/core/checks/context';
import { mapOverlap } from '../server/src/core/checks/mapOverlap';
import { encodeMachine } from '../server/src/core/encode/encoder';
import { listingChunks } from '../server/src/core/encode/listing';
import { readFileSync } from 'node:fs';
import { parseElf } from '../server/src/core/isa/elf';
import { bigMapTable, store24Table, unterminatedSymbolsElf, type MapRowKind } from '../tests/support/hostile';
import { checkInvariants, soupArb } from '../tests/robust/corpus';
import { percentile, soak } from '../tests/robust/soak';
import { nowMs, row, timeMedian, withProgress } from './stats';

/**
 * Time per run of `run`: runs it, each time after a full collection (so one run does not pay
 * for the garbage of the one before), until 200 ms of runs have passed, three times over, and
 * keeps the fastest mean; short runs measured one at a time on a shared machine are mostly noise.
 */
function steadyMs(run: () => void): number {
  const gc = (globalThis as { gc?: () => void }).gc;
  let best = Infinity;
  for (let trial = 0; trial < 3; trial++) {
    let spent = 0;
    let runs = 0;
    do {
      gc?.();
      const start = nowMs();
      run();
      spent += nowMs() - start;
      runs++;
    } while (spent < 200);
    best = Math.min(best, spent / runs);
  }
  return best;
}

/**
 * Times `run` at each size and prints the time and the ratio to the size before. The figure
 * held against the target is the growth per doubling over the whole range (the geometric mean
 * of the steps): a single step on a shared machine can be off by a factor of two either way.
 */
function growth(label: string, sizes: number[], unit: string, prepare: (size: number) => () => void): number {
  console.log(`  ${label}`);
  const times: number[] = [];
  for (const size of sizes) {
    const run = prepare(size);
    run();
    const ms = steadyMs(run);
    const ratio = times.length ? `  x${(ms / times[times.length - 1]!).toFixed(2)}` : '';
    row(`  ${size.toLocaleString('en')} ${unit}`, `${ms.toFixed(1)} ms${ratio.padStart(8)}`);
    times.push(ms);
  }
  const perDoubling = (times[times.length - 1]! / times[0]!) ** (1 / (sizes.length - 1));
  row('  growth per doubling, over the range', `x${perDoubling.toFixed(2)}`, '<= 2.5');
  return perDoubling;
}

function quadraticCases(): number {
  let worst = 0;
  console.log('inputs that used to be quadratic, at doubling sizes');
  for (const kind of ['overlapping', 'distinct', 'scattered'] as MapRowKind[]) {
    worst = Math.max(worst, growth(`map-overlap check, decode map of ${kind} rows`, [6000, 12000, 24000, 48000, 96000], 'rows', (n) => {
      const { machine, text } = analyse(bigMapTable(n, kind));
      return () => mapOverlap.run(new CheckContext(machine, text));
    }));
    // The whole analysis too, for what a user waits for (other checks included).
    const whole = analyse(bigMapTable(48000, kind));
    row(`  whole analysis at 48,000 rows`, `${timeMedian(() => void analyse(whole.text), 3, 1).toFixed(1)} ms`);
  }
  worst = Math.max(worst, growth('ELF parse, symbols naming one unterminated name table', [16384, 32768, 65536, 131072], 'symbols', (n) => {
    const bytes = unterminatedSymbolsElf(n, 16 * n);
    return () => void parseElf(bytes);
  }));
  // The listing, made chunk by chunk, of the demo with more and more address lines.
  const demo = readFileSync('examples/halyard-32.pwt', 'utf8');
  worst = Math.max(worst, growth('listing of a store, chunk by chunk', [16, 17, 18, 19], 'address lines', (bits) => {
    const extra = bits - 13;
    const { machine } = analyse(store24Table(demo).replace('address 24', `address ${bits}`).replace('ir[25:15] 13..23', `ir[${14 + extra}:15] 13..${12 + extra}`));
    const encoded = encodeMachine(machine);
    return () => {
      let chars = 0;
      for (const chunk of listingChunks(machine, encoded, encoded.stores[0]!, { source: 'bench.pwt' })) chars += chunk.length;
      if (chars === 0) throw new Error('empty listing');
    };
  }));
  return worst;
}

async function main(): Promise<void> {
  if (process.env.ROBUST_PART === 'growth') {
    if (quadraticCases() > 2.5) process.exitCode = 1;
    return;
  }
  let cases = 0;
  let failures = 0;
  const started = Date.now();
  const numRuns = 200_000;
  const details = withProgress('fuzzing', (update) =>
    fc.check(
      fc.property(soupArb, (text) => {
        if (++cases % 1000 === 0) update(cases, numRuns);
        checkInvariants(text);
      }),
      { numRuns, seed: 777 },
    ),
  );
  if (details.failed) failures++;
  console.log('fuzzing the analyser with token soup (seeded)');
  row('cases run', cases.toLocaleString('en'));
  row('failures', String(failures), '0');
  row('time', `${((Date.now() - started) / 1000).toFixed(1)} s`);
  if (details.failed) console.log(`  first failure: ${JSON.stringify(details.counterexample)}: ${details.errorInstance}`);

  const r = await soak({ edits: 10_000, seed: 20261202 });
  console.log('language-server soak over stdio (demo, random edits, pastes, undo storms)');
  row('edits', r.edits.toLocaleString('en'));
  row('requests (hover, completion, formatting)', r.requests.toLocaleString('en'));
  row('crashes', r.crashed ? '1' : '0', '0');
  row('internal errors logged', String(r.internalErrors.length), '0');
  row('malformed responses', String(r.malformed.length), '0');
  row('final diagnostics equal a fresh analysis', r.finalMatches ? 'yes' : `NO: ${r.finalDetail}`);
  row('response time p50', `${percentile(r.responseMs, 50).toFixed(1)} ms`);
  row('response time p99', `${percentile(r.responseMs, 99).toFixed(1)} ms`);
  row('RSS at open', `${(r.rssOpenBytes / 1e6).toFixed(0)} MB`);
  row('RSS after warm-up (baseline)', `${(r.rssBeforeBytes / 1e6).toFixed(0)} MB`);
  row('RSS at the end', `${(r.rssAfterBytes / 1e6).toFixed(0)} MB`);
  row('RSS growth from the baseline', `${((r.rssAfterBytes / r.rssBeforeBytes - 1) * 100).toFixed(1)} %`, '<= 20 %');
  row('live heap, baseline -> end', `${(r.heapBeforeBytes / 1e6).toFixed(1)} -> ${(r.heapAfterBytes / 1e6).toFixed(1)} MB`);
  const worstGrowth = quadraticCases();
  if (failures || r.crashed || r.malformed.length || r.internalErrors.length || !r.finalMatches || worstGrowth > 2.5) process.exitCode = 1;
}

void main();
