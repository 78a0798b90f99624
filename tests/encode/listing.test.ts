// The listing of a store whose address lines carry another store's field (an entry-point
// decoder): it shows what the hardware reaches, not only what the table laid. A word no step's
// address lines form is `unreached`, not labelled with that step; a fill word a step does reach
// gets its own line naming the step. A design whose steps set the field the hardware forms has
// neither. Both are read from the burned words of the decoder store.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { chunkChars, listingChunks } from '../../server/src/core/encode/listing';
import { readFileSync } from 'node:fs';
import { planBuild } from '../../server/src/core/encode/plan';
import { entryDecoderFixed, entryDecoderTable } from '../support/fixtures';
import { store24Table } from '../support/hostile';

// `allowed`: the error codes the table is known to have (the broken decoder table is reported
// by entry-unreachable, and the listing must still show what the hardware would do).
function mainListing(text: string, stores?: string[], allowed: string[] = []): string[] {
  const analysis = analyse(text);
  const errors = analysis.diagnostics.filter((d) => d.severity === 'error');
  expect([...new Set(errors.map((d) => d.code))]).toEqual(allowed);
  const plan = planBuild(analysis.machine, { stem: 't', source: 't.pwt', formats: ['list'], stores });
  const file = plan.files.find((f) => f.name === 't.main.lst')!;
  expect(file.kind).toBe('text');
  return [...(file.kind === 'text' ? file.chunks() : [])].join('').split('\n').filter((line) => line.startsWith('  0x'));
}

describe('the listing of a store addressed through another store\'s field', () => {
  it('marks the fetch word nothing reaches and names the steps that find the fill word', () => {
    const broken = (stores?: string[]) => mainListing(entryDecoderTable, stores, ['entry-unreachable']);
    expect(broken()).toEqual([
      '  0x0000  step=0 entry=00  fill: step 0 of phase fetch in class OP forms this address and finds the fill word here (the table put its word at another address)',
      '  0x0001  step=1 entry=00  OP         06     a.oe b.ck done',
      '  0x0002  step=0 entry=01  fill: step 0 of phase fetch in class SUBTRACT forms this address and finds the fill word here (the table put its word at another address)',
      '  0x0003  step=1 entry=01  SUBTRACT   04     a.oe done',
      '  0x0004-0x0005  fill (2 words)',
      '  0x0006  step=0 entry=11  unreached  02     a.oe b.ck  (laid for step 0 of phase fetch in class SUBTRACT, whose address lines form another address)',
      '  0x0007  fill (1 word)',
    ]);
    // The same when only the main store is built: the decoder store is still read.
    expect(broken(['main'])).toEqual(broken());
  });

  it('labels every word with its step when the steps set the field the hardware forms', () => {
    const lines = mainListing(entryDecoderFixed);
    expect(lines.some((line) => line.includes('unreached') || line.includes('fill:'))).toBe(false);
    expect(lines).toEqual([
      '  0x0000  step=0 entry=00  OP         02     a.oe b.ck',
      '  0x0001  step=1 entry=00  OP         06     a.oe b.ck done',
      '  0x0002  step=0 entry=01  SUBTRACT   02     a.oe b.ck',
      '  0x0003  step=1 entry=01  SUBTRACT   04     a.oe done',
      '  0x0004-0x0007  fill (4 words)',
    ]);
  });

  it('comes in chunks of whole lines, about a megabyte each, for a large store', () => {
    const demo = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');
    const { machine } = analyse(store24Table(demo).replace('address 24', 'address 18').replace('ir[25:15] 13..23', 'ir[20:16] 13..17'));
    const encoded = encodeMachine(machine);
    const chunks = [...listingChunks(machine, encoded, encoded.stores[0], { source: 't.pwt' })];
    expect(chunks.length).toBeGreaterThan(3);
    for (const chunk of chunks) {
      expect(chunk.endsWith('\n')).toBe(true);
      expect(chunk.length).toBeLessThan(chunkChars + 1000);
    }
    const lines = chunks.join('').split('\n');
    // Every address is on a line, alone or in a fill run: the runs and lines cover 0..2^18-1 once.
    let next = 0;
    for (const line of lines.filter((l) => l.startsWith('  0x'))) {
      const [from, to] = line.trim().split(/\s+/)[0].split('-').map((h) => parseInt(h, 16));
      expect(from).toBe(next);
      next = (to ?? from) + 1;
    }
    expect(next).toBe(2 ** 18);
  });
});
