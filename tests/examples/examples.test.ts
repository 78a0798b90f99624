// The bundled examples: the demo machine checks clean, and every fault example produces
// exactly its own diagnostic code (its file name) and nothing else. Every code in the
// catalogue has a fault example and a section in docs/diagnostics.md, except the expression
// codes listed below, whose examples wait for the notation of part definitions.
import { describe, expect, it } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { analyse } from '../../server/src/core/analysis';
import { catalogue } from '../../server/src/core/checks/catalogue';

const dir = new URL('../../examples/faults/', import.meta.url);
const faults = readdirSync(dir).filter((f) => f.endsWith('.pwt')).sort();

/**
 * Codes of the expression checker (server/src/core/parts/expr). Expressions stand in part
 * definitions, which have no notation in a .pwt file yet, so no file can produce these codes;
 * docs/diagnostics.md shows each on an expression instead. Remove a code here when its fault
 * example is added (the test fails while both exist).
 */
const awaitingFaultExample = ['expr-name', 'expr-slice', 'expr-syntax', 'expr-value', 'expr-width'];

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
    const withExample = faults.map((f) => f.replace(/\.pwt$/, ''));
    for (const code of awaitingFaultExample) expect(withExample, `${code} has a fault example now: drop it from awaitingFaultExample`).not.toContain(code);
    expect([...withExample, ...awaitingFaultExample].sort()).toEqual(catalogue.map((c) => c.code).sort());
    expect(documented.sort()).toEqual(catalogue.map((c) => c.code).sort());
  });
});
