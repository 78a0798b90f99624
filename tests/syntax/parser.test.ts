// The scanner and parser: exact spans, lossless tokens, recovery at line and declaration
// boundaries, and no exceptions on any input.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { parse } from '../../server/src/core/syntax/parser';
import { scan } from '../../server/src/core/syntax/scanner';
import { T, tokenNames } from '../../server/src/core/syntax/tokens';
import { analyse } from '../../server/src/core/analysis';
import { dedent } from '../support/annotated';

const demo = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');

/** Every span-like object in the tree, with its path, for bounds checks. */
function spans(node: unknown, path = 'tree', out: { path: string; start: number; end: number }[] = []) {
  if (!node || typeof node !== 'object') return out;
  const obj = node as Record<string, unknown>;
  if (typeof obj.start === 'number' && typeof obj.end === 'number') out.push({ path, start: obj.start, end: obj.end });
  for (const [k, v] of Object.entries(obj)) spans(v, `${path}.${k}`, out);
  return out;
}

describe('scanner', () => {
  it('gives back the input exactly when token texts are concatenated', () => {
    for (const text of [demo, 'a\r\nb\rc\n', '"unterminated\n#c\n  0..2 -> x.rs1.oe 1-0 - ~ é 😀']) {
      expect(scan(text).map((t) => t.text).join('')).toBe(text);
    }
  });

  it('tells names, numbers, patterns, ranges and arrows apart', () => {
    const kinds = scan('x.rs1.oe OP-IMM 0x1F 1-0 - 0..2 a->b 101 1.8').filter((t) => t.kind !== T.Whitespace).map((t) => `${tokenNames[t.kind]}:${t.text}`);
    expect(kinds).toEqual([
      'name:x.rs1.oe', 'name:OP-IMM', 'number:0x1F', 'bit pattern:1-0', 'bit pattern:-', 'number:0', "'..':..", 'number:2',
      'name:a', "'->':->", 'name:b', 'number:101', 'number:1.8', 'end of file:',
    ]);
  });
});

describe('parser', () => {
  it('parses the demo with no errors and every span inside the text', () => {
    const { tree, errors } = parse(demo);
    expect(errors).toEqual([]);
    expect(tree.decls.length).toBe(53);
    for (const s of spans(tree)) {
      expect(s.start, s.path).toBeGreaterThanOrEqual(0);
      expect(s.end, s.path).toBeLessThanOrEqual(demo.length);
      expect(s.start, s.path).toBeLessThanOrEqual(s.end);
    }
  });

  it('keeps exact spans on names and literals', () => {
    const text = 'strobe pc.oe enable pc -> left active low "Drives left."\n';
    const decl = parse(text).tree.decls[0];
    expect(decl.kind).toBe('strobe');
    if (decl.kind !== 'strobe') return;
    expect(text.slice(decl.name!.span.start, decl.name!.span.end)).toBe('pc.oe');
    expect(text.slice(decl.target!.span.start, decl.target!.span.end)).toBe('left');
    expect(decl.level!.text).toBe('low');
    expect(decl.description!.value).toBe('Drives left.');
  });

  it('recovers at the next line so later declarations are still read', () => {
    const text = dedent(`
      bus left 32 @@ junk
      part ??? register
      strobe good enable pc -> left
      class OP opcode=0110011
        2: a, b c, d;e
        3 x, y
      bus right 32
    `);
    const { tree, errors } = parse(text);
    expect(errors.map((e) => text.slice(e.span.start, e.span.end) + ' | ' + e.message)).toEqual([
      "@ | expected `keeper`, a `name=value` figure or a description in quotes, found the character '@', which the notation does not use",
      "? | expected a part name after `part`, e.g. `part pc counter 32`, found the character '?', which the notation does not use",
      "c | expected ',' between the strobes of a step, found 'c'",
      "; | expected ',' between the strobes of a step, found the character ';', which the notation does not use",
      "x | expected ':' after the step number, e.g. `2: alu.oe`, found 'x'",
    ]);
    expect(tree.decls.map((d) => d.kind)).toEqual(['bus', 'part', 'strobe', 'class', 'bus']);
    const cls = tree.decls[3];
    if (cls.kind !== 'class') throw new Error('expected a class');
    expect(cls.body.map((s) => (s.kind === 'step' ? s.actions.map((a) => a.target.name.text).join(' ') : 'use'))).toEqual(['a b c d e', 'x y']);
  });

  it('continues a step after a trailing comma onto the next line', () => {
    const { tree, errors } = parse('class OP opcode=0110011\n  2: a, b,\n     c, d\n  3: e\n');
    expect(errors).toEqual([]);
    const cls = tree.decls[0];
    if (cls.kind !== 'class') throw new Error('expected a class');
    expect(cls.body.map((s) => (s.kind === 'step' ? s.actions.length : 0))).toEqual([4, 1]);
  });

  it('reports an unclosed field brace and goes on with the next declaration', () => {
    const { tree, errors } = parse('field f 2 { a=0\nbus b 8\n');
    expect(errors.map((e) => e.message)).toEqual(['this list of field values has no closing `}`']);
    expect(tree.decls.map((d) => d.kind)).toEqual(['field', 'bus']);
  });

  it('never throws and keeps spans in bounds on random edits of the demo', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: demo.length }), fc.integer({ min: 0, max: 40 }), fc.string({ maxLength: 12 }), (at, cut, insert) => {
        const text = demo.slice(0, at) + insert + demo.slice(Math.min(demo.length, at + cut));
        const result = analyse(text);
        for (const d of result.diagnostics) {
          expect(d.span.start).toBeGreaterThanOrEqual(0);
          expect(d.span.end).toBeLessThanOrEqual(text.length);
        }
      }),
      { numRuns: 300, seed: 42 },
    );
  });
});
