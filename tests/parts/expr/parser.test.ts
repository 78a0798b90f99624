// The expression parser: trees with exact absolute spans, precedence and associativity as
// docs/expressions.md states them, literals and their widths, syntax errors at the exact token
// with recovery inside brackets, and a seeded fuzz (random strings and random edits of valid
// expressions) on which it never throws and every span stays inside the text.
import { describe, expect, it } from 'vitest';
import { formatExpression, parseExpression, type Expr } from '../../../server/src/core/parts/expr';
import { children } from '../../../server/src/core/parts/expr';
import { seededRandom } from '../../logic/randomTables';
import { ExprGenerator, WIDTHS } from './randomExpr';

const BASE = 100;

/** A tree as text: each node with its kind, its operator or name, and its span relative to BASE. */
function dump(e: Expr): string {
  const at = `@${e.span.start - BASE}-${e.span.end - BASE}`;
  const kids = children(e).map(dump).join(' ');
  switch (e.kind) {
    case 'name': return `${e.name}${at}`;
    case 'number': return `${e.value}${e.width === undefined ? '' : `'${e.width}`}${at}`;
    case 'slice': return `(slice ${e.hi}:${e.lo}${at} ${kids})`;
    case 'binary': return `(${e.op}${at} ${kids})`;
    case 'unary': return `(${e.op}u${at} ${kids})`;
    case 'select': return `(select${at} head${e.head.start - BASE}-${e.head.end - BASE} ${e.arms.map((a) => formatExpression(a.key)).join('/')} ${kids})`;
    case 'rep': return `(rep*${e.count}${at} ${kids})`;
    case 'extend': return `(${e.signed ? 's' : 'z'}ext${e.width}${at} ${kids})`;
    default: return `(${e.kind}${at} ${kids})`;
  }
}

function tree(text: string): string {
  const r = parseExpression(text, BASE);
  expect(r.diagnostics, text).toEqual([]);
  return dump(r.expr!);
}

/** The syntax errors of `text` as "message @ the marked text". */
function errors(text: string): string[] {
  const r = parseExpression(text, BASE);
  expect(r.expr).toBeUndefined();
  for (const d of r.diagnostics) expect(d.code).toBe('expr-syntax');
  return r.diagnostics.map((d) => `${d.message} @${d.span.start - BASE}-${d.span.end - BASE}`);
}

describe('expression parser', () => {
  it('gives every node its exact absolute span; parentheses count in the span around them', () => {
    expect(tree('a + b')).toBe('(+@0-5 a@0-1 b@4-5)');
    expect(tree('(a + b)[3:0]')).toBe('(slice 3:0@0-12 (+@1-6 a@1-2 b@5-6))');
    expect(tree('(a) + b')).toBe('(+@0-7 a@1-2 b@6-7)');
    expect(tree('  cnt.zero ? ir.rd : 0x1f ')).toBe('(cond@2-25 cnt.zero@2-10 ir.rd@13-18 31\'8@21-25)');
    expect(tree('{a, b[3:0], 0b00}')).toBe('(concat@0-17 a@1-2 (slice 3:0@4-10 b@4-5) 0\'2@12-16)');
    expect(tree('rep(x, 24)')).toBe('(rep*24@0-10 x@4-5)');
    expect(tree('sext(x[11:0], 32)')).toBe('(sext32@0-17 (slice 11:0@5-12 x@5-6))');
    expect(tree('carry(a, b, c)')).toBe('(carry@0-14 a@6-7 b@9-10 c@12-13)');
    expect(tree('select fn { add: a + b, else: a }')).toBe('(select@0-33 head0-9 add fn@7-9 (+@17-22 a@17-18 b@21-22) a@30-31)');
  });

  it('reads a bracketed number as a slice and anything else as an index (only arrays take one; the checker says)', () => {
    expect(tree('r[ir[19:15]]')).toBe('(index@0-12 r@0-1 (slice 19:15@2-11 ir@2-4))');
    expect(tree('m[addr + 1]')).toBe('(index@0-11 m@0-1 (+@2-10 addr@2-6 1@9-10))');
    expect(tree('m[3]')).toBe('(slice 3:3@0-4 m@0-1)');
    // A number in parentheses is an index expression, so format keeps its parentheses.
    expect(tree('m[(3)]')).toBe('(index@0-6 m@0-1 3@3-4)');
    expect(formatExpression(parseExpression('m[(3)]', 0).expr!)).toBe('m[(3)]');
    expect(tree('r[i][7:0]')).toBe('(slice 7:0@0-9 (index@0-4 r@0-1 i@2-3))');
    expect(tree('-r[i]')).toBe('(-u@0-5 (index@1-5 r@1-2 i@3-4))');
  });

  it('binds as documented: ?: loosest, then | ^ & == comparisons shifts + -, unary, slices; binary levels left-associative', () => {
    expect(tree('a | b ^ c & d')).toBe('(|@0-13 a@0-1 (^@4-13 b@4-5 (&@8-13 c@8-9 d@12-13)))');
    expect(tree('a == b < c')).toBe('(==@0-10 a@0-1 (<@5-10 b@5-6 c@9-10))');
    expect(tree('a < b << c')).toBe('(<@0-10 a@0-1 (<<@4-10 b@4-5 c@9-10))');
    expect(tree('a << b + c')).toBe('(<<@0-10 a@0-1 (+@5-10 b@5-6 c@9-10))');
    expect(tree('a - b - c')).toBe('(-@0-9 (-@0-5 a@0-1 b@4-5) c@8-9)');
    expect(tree('-a[3]')).toBe('(-u@0-5 (slice 3:3@1-5 a@1-2))');
    expect(tree('~-a')).toBe('(~u@0-3 (-u@1-3 a@2-3))');
    expect(tree('c ? a : d ? b : e')).toBe('(cond@0-17 c@0-1 a@4-5 (cond@8-17 d@8-9 b@12-13 e@16-17))');
    expect(tree('a | b ? c : d')).toBe('(cond@0-13 (|@0-5 a@0-1 b@4-5) c@8-9 d@12-13)');
  });

  it('reads the signed comparisons and the three shifts; `<s` only when no name character follows', () => {
    expect(tree('a <s b')).toBe('(<s@0-6 a@0-1 b@5-6)');
    expect(tree('a<=s b')).toBe('(<=s@0-6 a@0-1 b@5-6)');
    expect(tree('a >=s b')).toBe('(>=s@0-7 a@0-1 b@6-7)');
    expect(tree('a >s b')).toBe('(>s@0-6 a@0-1 b@5-6)');
    expect(tree('a<sb')).toBe('(<@0-4 a@0-1 sb@2-4)');
    expect(tree('a >>> b >> c << d')).toBe('(<<@0-17 (>>@0-12 (>>>@0-7 a@0-1 b@6-7) c@11-12) d@16-17)');
  });

  it('reads literals with their widths: decimal none, hex 4 bits a digit, binary 1, `_` between digits', () => {
    expect(tree('12')).toBe('12@0-2');
    expect(tree('0x1f')).toBe("31'8@0-4");
    expect(tree('0X00_1F')).toBe("31'16@0-7");
    expect(tree('0b0101')).toBe("5'4@0-6");
    expect(tree('1_000')).toBe('1000@0-5');
    expect(tree('18446744073709551615')).toBe('18446744073709551615@0-20');
  });

  it('reports each syntax problem at its exact token', () => {
    expect(errors('a +')).toEqual(['expected a name, a number, `(`, `{`, `~` or `-`, found the end of the expression @3-3']);
    expect(errors('a = b')).toEqual(['unexpected a lone `=`; compare with `==` @2-3']);
    expect(errors('a * b')).toEqual(['unexpected `*`: there is no multiplication; shift or add instead @2-3']);
    expect(errors('a b')).toEqual(['expected an operator or the end of the expression, found `b` @2-3']);
    expect(errors('(a + b')).toEqual(['expected `)` to close `(`, found the end of the expression @6-6']);
    expect(errors('a[7:]')).toEqual(['expected a bit number, found `]` @4-5']);
    expect(errors('a[x:0]')).toEqual(['a bit range takes two numbers, `[hi:lo]`; only a single index may be computed @2-3']);
    expect(errors('r[i + 1')).toEqual(['expected `]` to close the index, found the end of the expression @7-7']);
    expect(errors('r[]')).toEqual(['expected a name, a number, `(`, `{`, `~` or `-`, found `]` @2-3']);
    expect(errors('0x')).toEqual(['`0x` is not a number: expected hex digits after 0x @0-2']);
    expect(errors('0b102')).toEqual(['`0b102` is not a number: expected only 0 and 1 after 0b @0-5']);
    expect(errors('12abc')).toEqual(['`12abc` is not a number: expected decimal digits (or 0x.. hex, 0b.. binary) @0-5']);
    expect(errors('{}')).toEqual(['an empty concatenation `{}` has no bits; list at least one item @0-2']);
    expect(errors('mux(a, b)')).toEqual(['`mux` is not a function; the functions are rep, sext, zext, carry, borrow @0-3']);
    expect(errors('sext(a)')).toEqual(['`sext` takes a value and a width: sext(x, 32) @0-7']);
    expect(errors('rep(a, b)')).toEqual(['the count of `rep` must be a number @7-8']);
    expect(errors('carry(a)')).toEqual(['`carry` takes two operands and an optional carry-in: carry(a, b) or carry(a, b, cin) @0-8']);
    expect(errors('select fn { add a }')).toEqual(['expected `:` after `add`, found `a` @16-17']);
    expect(errors('select fn { else: a }')).toEqual(['a select needs at least one keyed arm @0-21']);
    expect(errors('select fn { add: a, else: b, else: c }')).toEqual(['a select has one `else` arm only @29-33']);
    expect(errors('a ? b')).toEqual(['expected `:` between the two choices of `?`, found the end of the expression @5-5']);
    expect(errors('a . b')).toEqual(['unexpected character `.` @2-3']);
  });

  it('goes on after a broken item in brackets and reports the later problems too', () => {
    expect(errors('{a, +, b} + (c * d)')).toEqual([
      'expected a name, a number, `(`, `{`, `~` or `-`, found `+` @4-5',
      'unexpected `*`: there is no multiplication; shift or add instead @15-16',
    ]);
    expect(errors('select fn { add: a +, sub: = b, else: c d }')).toEqual([
      'expected a name, a number, `(`, `{`, `~` or `-`, found `,` @20-21',
      'unexpected a lone `=`; compare with `==` @27-28',
      'expected `,` or `}`, found `d` @40-41',
    ]);
    expect(errors('rep({a, (b}, 2)')).toEqual(['expected `)` to close `(`, found `}` @10-11']);
  });

  it('refuses nesting too deep to walk instead of overflowing the stack', () => {
    expect(errors('('.repeat(5000) + 'a' + ')'.repeat(5000))).toEqual(['brackets are nested more than 200 deep @200-201']);
    expect(errors('-'.repeat(5000) + 'a')).toEqual(['brackets are nested more than 200 deep @200-201']);
    const chain = Array.from({ length: 1500 }, () => 'a').join(' + ');
    expect(errors(chain)[0]).toMatch(/^the expression is nested more than 1000 levels deep; split it @0-/);
  });

  it('never throws on 20 000 seeded random strings; spans stay inside the text; a tree comes exactly when there is no error', () => {
    const random = seededRandom(99);
    const alphabet = ['a', 'b', 'fn', 'x.y', ' ', '0', '1', '7', '0x', '0b', 'f', '_', '(', ')', '[', ']', '{', '}', ',', ':', '?', '+', '-', '~', '&', '|', '^', '<', '>', '=', '!', 's', '.', 'select', 'else', 'rep', 'sext', 'carry', '\n', '#', 'é', '\ud83d'];
    for (let i = 0; i < 20_000; i++) {
      const n = Math.floor(random() * 14);
      let text = '';
      for (let k = 0; k < n; k++) text += alphabet[Math.floor(random() * alphabet.length)];
      checkInvariants(text);
    }
  });

  it('never throws on 5 000 seeded random edits of valid expressions', () => {
    const gen = new ExprGenerator(5);
    const random = seededRandom(6);
    const pieces = ['(', ')', '{', '}', ',', ':', '[', ']', '?', '<s', '>>>', ' ', '0x', 'select', '~', '-', '1'];
    for (let i = 0; i < 5000; i++) {
      let text = formatExpression(gen.expr(gen.pick(WIDTHS), 3, true));
      for (let k = 0; k < 1 + Math.floor(random() * 3); k++) {
        const at = Math.floor(random() * (text.length + 1));
        const cut = Math.floor(random() * 4);
        text = text.slice(0, at) + (random() < 0.5 ? pieces[Math.floor(random() * pieces.length)] : '') + text.slice(at + cut);
      }
      checkInvariants(text);
    }
  });
});

function checkInvariants(text: string): void {
  let r: ReturnType<typeof parseExpression>;
  expect(() => (r = parseExpression(text, BASE)), JSON.stringify(text)).not.toThrow();
  r = r!;
  for (const d of r.diagnostics) {
    expect(d.span.start >= BASE && d.span.start <= d.span.end && d.span.end <= BASE + text.length, JSON.stringify(text)).toBe(true);
  }
  expect(r.expr === undefined, JSON.stringify(text)).toBe(r.diagnostics.length > 0);
  if (r.expr) {
    // What parses prints back to text that parses to the same print.
    const printed = formatExpression(r.expr);
    expect(formatExpression(parseExpression(printed, 0).expr!), JSON.stringify(text)).toBe(printed);
  }
}
