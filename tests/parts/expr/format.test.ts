// The printer: the fewest parentheses precedence needs, literals in their own radix and width,
// and the round trip parse(format(e)) == e (spans aside) on seeded random trees.
import { describe, expect, it } from 'vitest';
import { formatExpression, parseExpression, type Expr } from '../../../server/src/core/parts/expr';
import { ExprGenerator, WIDTHS } from './randomExpr';

/** The tree without its source positions, for structural comparison. */
function shape(e: unknown): unknown {
  if (Array.isArray(e)) return e.map(shape);
  if (e && typeof e === 'object') {
    return Object.fromEntries(Object.entries(e).filter(([k, v]) => v !== undefined && k !== 'head' && !/span$/i.test(k)).map(([k, v]) => [k, shape(v)]));
  }
  return e;
}

const reprint = (text: string) => formatExpression(parseExpression(text, 0).expr!);

describe('expression printer', () => {
  it('prints with the fewest parentheses that keep the meaning', () => {
    expect(reprint('(a + b) + c')).toBe('a + b + c');
    expect(reprint('a + (b + c)')).toBe('a + (b + c)');
    expect(reprint('a - (b - c)')).toBe('a - (b - c)');
    expect(reprint('(a | b) & c')).toBe('(a | b) & c');
    expect(reprint('a | (b & c)')).toBe('a | b & c');
    expect(reprint('(a << 2) + 1')).toBe('(a << 2) + 1');
    expect(reprint('-(a + b)')).toBe('-(a + b)');
    expect(reprint('- -a')).toBe('--a');
    expect(reprint('(a + b)[3:0]')).toBe('(a + b)[3:0]');
    expect(reprint('(-a)[3]')).toBe('(-a)[3]');
    expect(reprint('a[3:3]')).toBe('a[3]');
    expect(reprint('(c ? a : b) ? d : e')).toBe('(c ? a : b) ? d : e');
    expect(reprint('c ? (d ? a : b) : (e ? f : g)')).toBe('c ? d ? a : b : e ? f : g');
    expect(reprint('select (a ^ b) { 0: x, else: y } + 1')).toBe('select (a ^ b) { 0: x, else: y } + 1');
    expect(reprint('select fn {else: a, add: b,}')).toBe('select fn { add: b, else: a }');
  });

  it('prints literals in the radix and width they were written in', () => {
    expect(reprint('0x00_1F')).toBe('0x001f');
    expect(reprint('0b0001')).toBe('0b0001');
    expect(reprint('1_000')).toBe('1000');
    expect(reprint('{carry(a, b, c), borrow(a, b), rep(x, 0x3), sext(y, 32), zext(y, 33)}')).toBe('{carry(a, b, c), borrow(a, b), rep(x, 3), sext(y, 32), zext(y, 33)}');
  });

  it('prints element reads: a computed index in brackets, a number index in parentheses (a bare number is a slice)', () => {
    expect(reprint('r[ir[19:15]]')).toBe('r[ir[19:15]]');
    expect(reprint('m[(addr + 1)]')).toBe('m[addr + 1]');
    expect(reprint('m[(3)]')).toBe('m[(3)]');
    expect(reprint('(r[i])[7:0]')).toBe('r[i][7:0]');
    expect(reprint('(a + b)[c]')).toBe('(a + b)[c]');
  });

  it.each([
    ['', {}],
    [' reading arrays', { arrays: true }],
  ])('parses its own print back to the same tree, on 3 000 seeded random trees%s', (_label, options) => {
    const gen = new ExprGenerator(42, options);
    for (let i = 0; i < 3000; i++) {
      const expr: Expr = gen.expr(gen.pick(WIDTHS), 1 + gen.int(5), true);
      const text = formatExpression(expr);
      const back = parseExpression(text, 0);
      expect(back.diagnostics, text).toEqual([]);
      expect(shape(back.expr), text).toEqual(shape(expr));
    }
  });
});
