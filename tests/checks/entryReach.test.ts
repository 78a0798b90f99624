// entry-unreachable: with a decoder store feeding the main store's address, every step an RV32I
// instruction reaches must stand where the board's address points (the decoder's encoded word,
// not the table's own field values). It fires on a fetch phase that does not set the entry
// field and on a class step that leaves it out; it is silent when every step sets it, directly
// or through a decode map, and on one-store machines.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { analyse } from '../../server/src/core/analysis';
import { expectDiagnostics } from '../support/annotated';
import { chainedStoreTable } from '../support/fixtures';

const root = join(__dirname, '../..');
const fault = readFileSync(join(root, 'examples/faults/entry-unreachable.pwt'), 'utf8');
const codes = (text: string) => analyse(text).diagnostics.map((d) => d.code);

describe('entry-unreachable', () => {
  it('fires on a fetch phase that does not set the entry field, at the phase step, naming the use', () => {
    const a = analyse(fault);
    const d = a.diagnostics.filter((x) => x.code === 'entry-unreachable');
    expect(d).toHaveLength(1);
    const line = a.lines.position(d[0].span.start);
    expect(a.text.split('\n')[line.line]).toBe('  0: a.oe, b.ck');
    expect(a.text.slice(d[0].span.start, d[0].span.end)).toBe('0');
    expect(d[0].message).toBe(
      'step 0 of phase fetch never runs as written for add (class OP): store main is addressed at 0x4 on the board, where the fill word (every strobe idle) stands, not this step\'s word (`a.oe` differs); the decoder gives `entry` = op (01), but this step does not set `entry`, so its word stands at the idle code none (00). Set the field in this step too (a decode map gives each class its own value), so the step\'s word stands where the decoder points',
    );
    expect(d[0].related?.map((r) => a.text.slice(r.span.start, r.span.end))).toEqual(['use fetch']);
    // Nothing else flags it: this is the table that checked clean and built without fetching.
    expect(codes(fault)).toEqual(['entry-unreachable']);
  });

  it('is silent when the fetch phase sets the entry through a decode map on the opcode', () => {
    const fixed = fault
      .replace('phase fetch\n  0: a.oe, b.ck', 'map entry_of (opcode) -> entry\n  01100 op   00010 sub\nphase fetch\n  0: entry=entry_of, a.oe, b.ck');
    expect(codes(fixed)).toEqual([]);
  });

  it('is silent when every step sets the entry, and fires at a class step that leaves it out', () => {
    expect(codes(chainedStoreTable)).toEqual([]);
    expectDiagnostics(
      chainedStoreTable.replace('  1: entry=op, a.oe, b.ck, done', '  1: a.oe, b.ck, done\n# ^ entry-unreachable: step 1 of class OP never runs as written for add'),
      ['entry-unreachable'],
    );
  });

  it('does not run on one-store machines (their words stand where the table says)', () => {
    const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
    expect(codes(demo)).toEqual([]);
  });
});
