// The bundled examples: the demo machine checks clean, and every fault example produces
// exactly its own diagnostic code (its file name) and nothing else. Every code in the
// catalogue has a fault example and a section in docs/diagnostics.md (the proof's in faults/proof/).
import { describe, expect, it } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { analyse } from '../../server/src/core/analysis';
import { catalogue } from '../../server/src/core/checks/catalogue';

const dir = new URL('../../examples/faults/', import.meta.url);
const faults = readdirSync(dir).filter((f) => f.endsWith('.pwt')).sort();

describe('examples', () => {
  it('the demo machine has no diagnostics at all', () => {
    const a = analyse(readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8'));
    expect(a.diagnostics).toEqual([]);
  });

  it.each(readdirSync(new URL('../../examples/', import.meta.url)).filter((f) => f.endsWith('.pwt')))('the example machine %s has no diagnostics at all', (file) => {
    const a = analyse(readFileSync(new URL(`../../examples/${file}`, import.meta.url), 'utf8'));
    expect(a.diagnostics).toEqual([]);
  });

  it.each(faults)('%s produces exactly its own code', (file) => {
    const code = file.replace(/\.pwt$/, '');
    const a = analyse(readFileSync(new URL(file, dir), 'utf8'));
    expect([...new Set(a.diagnostics.map((d) => d.code))]).toEqual([code]);
  });

  it('every catalogue code has a fault example and a section in docs/diagnostics.md', () => {
    const doc = readFileSync(new URL('../../docs/diagnostics.md', import.meta.url), 'utf8');
    const documented = [...doc.matchAll(/^## `([a-z0-9-]+)`/gm)].map((m) => m[1]);
    // The proof's codes have their examples in faults/proof/ (tests/prove/tableProof.test.ts proves them).
    const proofFaults = readdirSync(new URL('proof/', dir)).filter((f) => f.endsWith('.pwt'));
    const withExample = [...faults, ...proofFaults].map((f) => f.replace(/\.pwt$/, ''));
    expect(withExample.sort()).toEqual(catalogue.map((c) => c.code).sort());
    expect(documented.sort()).toEqual(catalogue.map((c) => c.code).sort());
  });
});
