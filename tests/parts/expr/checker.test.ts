// The width checker: correct expressions check clean with the right width, and each problem is
// reported once, with its code, at the exact span, saying both widths where widths disagree.
import { describe, expect, it } from 'vitest';
import { checkElementIndex, checkExpression, namesUsed, parseExpression, scopeOf, selectCovers, type NameInfo, type SelectExpr } from '../../../server/src/core/parts/expr';

const BASE = 40;

const fields: [string, NameInfo][] = [
  ['a', { width: 8 }],
  ['b', { width: 8 }],
  ['h', { width: 16 }],
  ['c', { width: 1 }],
  ['w', { width: 64 }],
  ['cnt.zero', { width: 1 }],
  ['op', { width: 3 }],
  ['fn', { width: 2, values: new Map([['add', 0], ['sub', 1], ['xor', 2]]) }],
  ['ir', { width: 32 }],
  ['addr', { width: 32 }],
  // Arrays: 32 registers of 32 bits, 5 of 8 bits, and the byte memory.
  ['r', { width: 32, elements: 32 }],
  ['q', { width: 8, elements: 5 }],
  ['m', { width: 8, elements: 'memory' }],
];
const scope = scopeOf(new Map(fields));

function check(text: string, expectedWidth?: number) {
  const parsed = parseExpression(text, BASE);
  expect(parsed.diagnostics, text).toEqual([]);
  return checkExpression(parsed.expr!, scope, expectedWidth);
}

/** The problems of `text` as "code @ the text they cover: message". */
function problems(text: string, expectedWidth?: number): string[] {
  return check(text, expectedWidth).diagnostics.map((d) => {
    expect(d.severity).toBe('error');
    return `${d.code} @${text.slice(d.span.start - BASE, d.span.end - BASE)}: ${d.message}`;
  });
}

describe('expression checker', () => {
  it.each([
    ['a + b', 8],
    ['a + 1', 8],
    ['1 + a', 8],
    ['a - -1', 8],
    ['{a, b[3:0], 0b00}', 14],
    ['{h, a, a} == 0', 1],
    ['rep(c, 24)', 24],
    ['sext(a, 32)', 32],
    ['zext(a, 8)', 8],
    ['carry(a, b)', 1],
    ['carry(h, 0x1234, c)', 1],
    ['borrow(a, 255)', 1],
    ['a << 3', 8],
    ['a >>> op', 8],
    ['w >> a', 64],
    ['w << 100', 64],
    ['a <s b', 1],
    ['c ? a : 0', 8],
    ['cnt.zero ? 0x00ff : h', 16],
    ['select fn { add: a + b, sub: a - b, xor: a ^ b }', 8],
    ['select fn { add: a + b, else: 0 }', 8],
    ['select op { 0: a, 0b111: b, else: 3 }', 8],
    ['select op[1:0] { 0: c, 1: ~c }', 1],
    ['(a + b)[7]', 1],
    ['0xff[3:0]', 4],
    ['{1, 0}', 2],
  ])('%s checks clean, %i bits', (text, width) => {
    const expected = text === '{1, 0}' ? undefined : width;
    if (expected === undefined) {
      expect(problems(text)).toEqual([
        'expr-width @1: `1` has no width here: nothing around it gives one; write it in hex or binary (e.g. 0b1), whose digits give the width',
        'expr-width @0: `0` has no width here: nothing around it gives one; write it in hex or binary (e.g. 0b0), whose digits give the width',
      ]);
      return;
    }
    expect(check(text)).toEqual({ width, diagnostics: [] });
    expect(check(text, width)).toEqual({ width, diagnostics: [] });
  });

  it('a decimal literal alone takes the width its place expects', () => {
    expect(check('12', 8)).toEqual({ width: 8, diagnostics: [] });
    expect(check('c ? 1 : 2', 4)).toEqual({ width: 4, diagnostics: [] });
    expect(check('select fn { add: 1, else: 2 }', 3)).toEqual({ width: 3, diagnostics: [] });
    expect(problems('12')).toEqual(['expr-width @12: `12` has no width here: nothing around it gives one; write it in hex or binary (e.g. 0b1100), whose digits give the width']);
  });

  it('expr-width: operands of different widths, naming both widths', () => {
    expect(problems('a + h')).toEqual(['expr-width @h: `h` is 16 bits wide, but 8 bits are needed here (the width of `a`, the other operand of +); make the widths equal, e.g. with a slice, zext or sext']);
    expect(problems('a == 0x1ff')).toEqual(['expr-width @0x1ff: `0x1ff` is 12 bits wide, but 8 bits are needed here (the width of `a`, the other operand of ==); make the widths equal, e.g. with a slice, zext or sext']);
    expect(problems('a ? b : c')).toEqual([
      'expr-width @a: `a` is 8 bits wide, but 1 bits are needed here (a condition is one bit); make the widths equal, e.g. with a slice, zext or sext',
      'expr-width @c: `c` is 1 bits wide, but 8 bits are needed here (the width of `b`, the other choice of ?:); make the widths equal, e.g. with a slice, zext or sext',
    ]);
    expect(problems('select fn { add: a, sub: h, else: c }')).toEqual([
      'expr-width @h: `h` is 16 bits wide, but 8 bits are needed here (the width of `a`, another arm of the select); make the widths equal, e.g. with a slice, zext or sext',
      'expr-width @c: `c` is 1 bits wide, but 8 bits are needed here (the width of `a`, another arm of the select); make the widths equal, e.g. with a slice, zext or sext',
    ]);
    expect(problems('carry(a, b, op)')).toEqual(['expr-width @op: `op` is 3 bits wide, but 1 bits are needed here (a carry-in is one bit); make the widths equal, e.g. with a slice, zext or sext']);
    expect(problems('a + b', 16)).toEqual(['expr-width @a + b: `a + b` is 8 bits wide, but 16 bits are needed here (the width expected where the expression is used); make the widths equal, e.g. with a slice, zext or sext']);
    expect(problems('{a, 3}')).toEqual(['expr-width @3: `3` has no width here: nothing around it gives one; write it in hex or binary (e.g. 0b11), whose digits give the width']);
    expect(problems('sext(a, 4)')).toEqual(['expr-width @4: sext cannot shrink: `a` already has 8 bits, more than 4; take a slice [3:0] to keep fewer']);
    expect(problems('rep(a, 0)')).toEqual(['expr-width @0: rep needs a count of at least 1; 0 copies have no bits']);
    expect(problems('rep(w, 100)')).toEqual(['expr-width @rep(w, 100): `rep(w, 100)` would be 6400 bits wide, more than the 4096 an expression may have']);
  });

  it('expr-slice: a bit beyond the operand, or the range written low first', () => {
    expect(problems('a[8]')).toEqual(['expr-slice @8: bit 8 is outside `a`, which has 8 bits (7..0)']);
    expect(problems('h[16:8]')).toEqual(['expr-slice @16: bit 16 is outside `h`, which has 16 bits (15..0)']);
    expect(problems('a[0:7]')).toEqual(['expr-slice @0:7: the high bit comes first: write [7:0], not [0:7]']);
    expect(problems('(a + b)[3:0][4]')).toEqual(['expr-slice @4: bit 4 is outside `(a + b)[3:0]`, which has 4 bits (3..0)']);
  });

  it('expr-name: an unknown name, with the closest known one as the suggestion and the fix', () => {
    const r = check('cnt.zeor ? a : b');
    expect(r.diagnostics).toEqual([
      {
        code: 'expr-name',
        severity: 'error',
        span: { start: BASE, end: BASE + 8 },
        message: '`cnt.zeor` is not a known signal, port or field; did you mean `cnt.zero`?',
        fixes: [{ title: 'Replace with `cnt.zero`', edits: [{ span: { start: BASE, end: BASE + 8 }, newText: 'cnt.zero' }], preferred: true }],
      },
    ]);
    expect(r.width).toBe(8);
    expect(problems('a + quux')).toEqual(['expr-name @quux: `quux` is not a known signal, port or field']);
    // A scope that cannot list its names still reports the name, without a suggestion.
    const plain = checkExpression(parseExpression('aa', 0).expr!, (n) => (n === 'a' ? { width: 1 } : undefined));
    expect(plain.diagnostics.map((d) => d.message)).toEqual(['`aa` is not a known signal, port or field']);
  });

  it('expr-value: select keys the selector lacks, missing arms, repeats, and literals too large', () => {
    expect(problems('select fn { add: a, sbu: b, xor: a }')).toEqual(['expr-value @sbu: `fn` has no value `sbu`; its values are add, sub, xor; did you mean `sub`?']);
    expect(problems('select fn { add: a, sub: b }')).toEqual(['expr-value @select fn: `select fn` has no arm for xor and no `else`; add the arm or an `else` arm']);
    expect(problems('select fn { add: a }')).toEqual(['expr-value @select fn: `select fn` has no arm for sub, xor and no `else`; add the arms or an `else` arm']);
    expect(problems('select fn { 0: a, else: b }')).toEqual(['expr-value @0: `fn` is a field with named values; key its arms by name (add, sub, xor)']);
    expect(problems('select op { add: a, else: b }')).toEqual(['expr-value @add: `op` has no value names; key its arms by number (or give the selector a field with named values)']);
    expect(problems('select op { 8: a, else: b }')).toEqual(['expr-value @8: `8` does not fit the 3-bit selector `op` (at most 7); this arm would never be chosen']);
    const twice = check('select op { 1: a, 0b001: b, else: a }').diagnostics;
    expect(twice.map((d) => [d.code, d.message, d.related?.[0].message])).toEqual([['expr-value', '`0b001` is listed twice in this select (code 1); the second arm would never be chosen', 'first listed here']]);
    expect(problems('a + 256')).toEqual(['expr-value @256: `256` does not fit in 8 bits (at most 255)']);
    expect(problems('c ? 2 : 0', 1)).toEqual(['expr-value @2: `2` does not fit in 1 bit (at most 1)']);
    expect(problems('a == 255')).toEqual([]);
  });

  it('reports a problem once: what depends on an unknown width stays quiet', () => {
    expect(problems('(quux + 1) + 2')).toEqual(['expr-name @quux: `quux` is not a known signal, port or field']);
    expect(problems('{a[9], 0}')).toEqual([
      'expr-slice @9: bit 9 is outside `a`, which has 8 bits (7..0)',
      'expr-width @0: `0` has no width here: nothing around it gives one; write it in hex or binary (e.g. 0b0), whose digits give the width',
    ]);
  });

  it.each([
    ['r[ir[19:15]]', 32],
    ['r[a]', 32],
    ['r[w]', 32],
    ['r[3]', 32],
    ['r[31][7:0]', 8],
    ['r[ir[24:20]] + r[ir[19:15]]', 32],
    ['q[1 + 1]', 8],
    ['q[(4)]', 8],
    ['m[addr]', 8],
    ['m[addr + 1]', 8],
    ['{m[addr + 1], m[addr]}', 16],
    ['m[0]', 8],
    ['m[(5)]', 8],
    ['m[r[ir[19:15]] + 4]', 8],
  ])('array read %s checks clean, %i bits', (text, width) => {
    expect(check(text)).toEqual({ width, diagnostics: [] });
  });

  it('arrays: one index, an element the array has, a 32-bit memory address; not used whole; no computed index elsewhere', () => {
    expect(problems('r[7:0]')).toEqual(['expr-slice @7:0: an array element is read with one index: `r[7]` is element 7; slice the element after it, e.g. `r[0][7:0]`, if you meant its bits']);
    expect(problems('r[32]')).toEqual(['expr-slice @32: element 32 is outside `r`, which has 32 elements (31..0)']);
    expect(problems('q[(5)]')).toEqual(['expr-slice @5: element 5 is outside `q`, which has 5 elements (4..0)']);
    expect(problems('m[0x1_0000_0000]')).toEqual(['expr-slice @0x1_0000_0000: element 4294967296 is outside the memory `m`, whose byte addresses are 32 bits']);
    expect(problems('a[b]')).toEqual(['expr-slice @b: `a` is not an array: only register arrays and the memory take a computed index; a bit is chosen by a number, e.g. `[0]`']);
    expect(problems('(a + b)[c]')).toEqual(['expr-slice @c: `a + b` is not an array: only register arrays and the memory take a computed index; a bit is chosen by a number, e.g. `[0]`']);
    expect(problems('r + 1')).toEqual(['expr-width @r: `r` is an array of 32 elements of 32 bits, not one value: read one element with an index, e.g. `r[i]`']);
    expect(problems('m')).toEqual(['expr-width @m: `m` is the byte memory, not one value: read one element with an index, e.g. `m[addr]`']);
    expect(problems('m[a]')).toEqual(['expr-width @a: `a` is 8 bits wide, but 32 bits are needed here (a memory index is a 32-bit byte address); make the widths equal, e.g. with a slice, zext or sext']);
    expect(problems('r[ir[19:15]]', 8)).toEqual(['expr-width @r[ir[19:15]]: `r[ir[19:15]]` is 32 bits wide, but 8 bits are needed here (the width expected where the expression is used); make the widths equal, e.g. with a slice, zext or sext']);
    // An unknown name is the one problem reported.
    expect(problems('q[quux]')).toEqual(['expr-name @quux: `quux` is not a known signal, port or field']);
    expect(problems('zz[a]')).toEqual(['expr-name @zz: `zz` is not a known signal, port or field']);
  });

  it('checkElementIndex holds an assignment\'s index to the rules of an index in an expression', () => {
    const index = (text: string, array: string) => {
      const r = checkElementIndex(parseExpression(text, BASE).expr!, scope, array);
      return { width: r.width, problems: r.diagnostics.map((d) => `${d.code} @${text.slice(d.span.start - BASE, d.span.end - BASE)}`) };
    };
    expect(index('ir[11:7]', 'r')).toEqual({ width: 5, problems: [] });
    expect(index('3', 'q')).toEqual({ width: 3, problems: [] });
    expect(index('addr + 3', 'm')).toEqual({ width: 32, problems: [] });
    expect(index('40', 'r')).toEqual({ width: undefined, problems: ['expr-slice @40'] });
    expect(index('a', 'm')).toEqual({ width: 8, problems: ['expr-width @a'] });
    expect(() => index('a', 'a')).toThrow(/not an array/);
  });

  it('namesUsed lists each name read once, in order', () => {
    expect(namesUsed(parseExpression('select fn { add: a + b, else: a } ^ rep(c, 8) ^ cnt.zero', 0).expr!)).toEqual(['fn', 'a', 'b', 'c', 'cnt.zero']);
    expect(namesUsed(parseExpression('0x1f', 0).expr!)).toEqual([]);
    expect(namesUsed(parseExpression('{m[addr + 1], r[ir[19:15]][7:0]}', 0).expr!)).toEqual(['m', 'addr', 'r', 'ir']);
  });

  it('selectCovers says which codes a select takes to an arm (the simulator faults on the others)', () => {
    const values = new Map([['add', 0], ['sub', 1], ['xor', 2]]);
    const s = parseExpression('select fn { add: a, sub: b, xor: a }', 0).expr as SelectExpr;
    expect([0, 1, 2, 3].map((c) => selectCovers(s, c, values))).toEqual([true, true, true, false]);
    const n = parseExpression('select op { 0: a, 5: b }', 0).expr as SelectExpr;
    expect([0n, 1n, 5n].map((c) => selectCovers(n, c))).toEqual([true, false, true]);
    const e = parseExpression('select op { 0: a, else: b }', 0).expr as SelectExpr;
    expect(selectCovers(e, 6)).toBe(true);
  });
});
