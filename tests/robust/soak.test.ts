// A short seeded soak of the language server in CI (the 10 000-edit run is
// `npm run bench:robust`): no crash, no internal error, every response well-formed, the last
// diagnostics equal a fresh analysis, memory growth within 20% of the start.
import { beforeAll, describe, expect, it } from 'vitest';
import { ensureBuilt } from '../lsp/support/client';
import { percentile, soak } from './soak';

beforeAll(async () => {
  await ensureBuilt();
}, 120_000);

describe('language-server soak', () => {
  it('survives 3 000 random edits with hover, completion and formatting in between (seeded)', async () => {
    const r = await soak({ edits: 3000, seed: 42 });
    console.log(
      `soak: ${r.edits} edits, ${r.requests} requests, 0 crashes, p99 response ${percentile(r.responseMs, 99).toFixed(1)} ms, ` +
        `heap ${(r.heapBeforeBytes / 1e6).toFixed(1)} -> ${(r.heapAfterBytes / 1e6).toFixed(1)} MB, RSS ${(r.rssOpenBytes / 1e6).toFixed(0)} at open, ${(r.rssBeforeBytes / 1e6).toFixed(0)} after warm-up -> ${(r.rssAfterBytes / 1e6).toFixed(0)} MB`,
    );
    expect(r.crashed).toBe(false);
    expect(r.internalErrors).toEqual([]);
    expect(r.malformed).toEqual([]);
    expect(r.finalDetail).toBe('');
    expect(r.finalMatches).toBe(true);
    // Growth from the baseline taken after the warm-up edits (see soak.ts), after a full collection.
    expect(r.heapAfterBytes).toBeLessThanOrEqual(r.heapBeforeBytes * 1.2);
    expect(r.rssAfterBytes).toBeLessThanOrEqual(r.rssBeforeBytes * 1.2);
  }, 300_000);
});
