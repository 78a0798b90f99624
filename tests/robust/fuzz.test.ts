// Property and fuzz tests of the core on hostile input: the parser never throws and keeps
// every span inside the text; the analyser terminates on token soup, long lines, huge numbers,
// deep bracket runs, every Unicode plane, CRLF and lone CR. Seeded, so a failure reproduces;
// the corpus sizes are printed so CI logs show how much ran.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { analyse } from '../../server/src/core/analysis';
import { parse } from '../../server/src/core/syntax/parser';
import { scan } from '../../server/src/core/syntax/scanner';
import { checkInvariants, soupArb } from './corpus';

const demo = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');

describe('fuzzing the analyser', () => {
  it('keeps its invariants on 100 000 cases of token soup (seeded)', () => {
    let cases = 0;
    fc.assert(
      fc.property(soupArb, (text) => {
        cases++;
        checkInvariants(text);
      }),
      { numRuns: 100_000, seed: 20261202 },
    );
    console.log(`fuzz: token soup, ${cases} cases, 0 failures`);
    expect(cases).toBe(100_000);
  }, 300_000);

  it('keeps its invariants on 1 000 random edits of the demo (seeded)', () => {
    let cases = 0;
    const edit = fc.record({ at: fc.nat(demo.length), cut: fc.nat(200), insert: fc.oneof(soupArb, fc.string({ maxLength: 30 }), fc.constantFrom('', '\n', demo.slice(0, 400))) });
    fc.assert(
      fc.property(fc.array(edit, { minLength: 1, maxLength: 4 }), (edits) => {
        cases++;
        let text = demo;
        for (const e of edits) {
          const at = Math.min(e.at, text.length);
          text = text.slice(0, at) + e.insert + text.slice(Math.min(text.length, at + e.cut));
        }
        checkInvariants(text);
      }),
      { numRuns: 1_000, seed: 7 },
    );
    console.log(`fuzz: demo edits, ${cases} cases, 0 failures`);
  }, 300_000);

  it('survives hostile shapes: long lines, huge numbers, bracket runs, every Unicode plane, NUL', () => {
    const hostile: [string, string][] = [
      ['a 10 000-character line', 'bus ' + 'a'.repeat(10_000) + ' 32\n'],
      ['a 10 000-character step', 'class OP opcode=0110011\n  0: ' + Array.from({ length: 2000 }, (_, i) => `s${i}`).join(', ') + '\n'],
      ['a huge number', 'bus b ' + '9'.repeat(5000) + '\nword ' + '9'.repeat(400) + ' as 4 x 8\n'],
      ['a run of open braces', 'field f 2 ' + '{'.repeat(20_000) + '\n'],
      ['a run of brackets', 'strobe s clock b -> x' + '['.repeat(20_000) + '\n'],
      ['a run of arrows and ranges', '->'.repeat(5000) + '..'.repeat(5000)],
      ['unterminated quotes', '"'.repeat(999) + '\nbus "'.repeat(100)],
      ['every Unicode plane', Array.from({ length: 17 }, (_, plane) => String.fromCodePoint(plane * 0x10000 + 0x41)).join(' ') + ' é 中 😀 \u200b'],
      ['lone surrogates', 'bus \ud800 32\nbus b \udc00\n\ud83d'],
      ['NUL and control characters', 'bus\u0000b 32\u0001\u0007\u001b[31m\n'],
      ['only newlines of every kind', '\r\n\r\r\n\n\r'.repeat(1000)],
    ];
    for (const [what, text] of hostile) {
      const start = Date.now();
      expect(() => checkInvariants(text), what).not.toThrow();
      expect(Date.now() - start, `${what} took too long`).toBeLessThan(20_000);
    }
  });

  it('gives the same diagnostics, at the same lines and columns, for LF, CRLF and lone-CR files', () => {
    const broken = demo.replace('pc.oe, four.oe, alu.fn=add, alu.oe, x.rd.ck\n', 'pc.oe, four.oe, x.rs1.oe, alu.fn=add, alu.oe, x.rd.ck\n').replace('strobe done', 'strobe done2 end\nstrobe done');
    const positions = (text: string) => {
      const a = analyse(text);
      return a.diagnostics.map((d) => `${a.lines.position(d.span.start).line}:${a.lines.position(d.span.start).col} ${d.code}`);
    };
    const lf = positions(broken);
    expect(lf.length).toBeGreaterThan(1);
    expect(positions(broken.replace(/\n/g, '\r\n'))).toEqual(lf);
    expect(positions(broken.replace(/\n/g, '\r'))).toEqual(lf);
  });

  it('scans and parses a 2 MB file of repeated demo text without throwing', () => {
    const big = demo.repeat(Math.ceil(2_000_000 / demo.length));
    expect(scan(big).map((t) => t.text).join('')).toBe(big);
    const { tree } = parse(big);
    expect(tree.decls.length).toBeGreaterThan(1000);
  });
});
