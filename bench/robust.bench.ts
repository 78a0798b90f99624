// Robustness figures (`npm run bench:robust`): fuzz cases run against the analyser and the
// failures found (must be 0), then a language-server soak of 10 000 random edits of the demo
// with hover, completion and formatting between them: edits, crashes (must be 0), the p99
// response time during the soak, and the server's memory at open, after the warm-up and at
// the end.
import fc from 'fast-check';
import { checkInvariants, soupArb } from '../tests/robust/corpus';
import { percentile, soak } from '../tests/robust/soak';
import { row, withProgress } from './stats';

async function main(): Promise<void> {
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
  if (failures || r.crashed || r.malformed.length || r.internalErrors.length || !r.finalMatches) process.exitCode = 1;
}

void main();
