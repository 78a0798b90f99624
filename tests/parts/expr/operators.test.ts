// Every operator, on random and edge values (0, 1, all ones, the sign bit and the value below it)
// at widths 1, 8, 31, 32, 33 and 64, through both the reference evaluator and the compiled fast
// path, against an independent reference written here from the operators' definitions with plain
// BigInt arithmetic (+ - * and floor division only; bits are read as digits in base 2, so the
// bitwise operators are not checked against themselves).
//
// Definitions: two's-complement arithmetic (wrap modulo 2^w, the sign bit weighs -2^(w-1)),
// common practice, no source. Shifts and signed comparisons mirror the RISC-V Unprivileged ISA
// specification, chapter "RV32I Base Integer Instruction Set", section "Integer Computational
// Instructions": SLL/SRL shift in zeros, SRA copies the sign bit down, SLT/SLTU compare as signed
// / unsigned. There the amount is the low 5 bits of rs2; here (the project's own definition,
// issue 14) an amount of the width or more shifts everything out: 0, or all sign bits for >>>.
import { describe, expect, it } from 'vitest';
import { compileExpressions, evaluate, parseExpression, scopeOf } from '../../../server/src/core/parts/expr';
import { checkExpression } from '../../../server/src/core/parts/expr';
import { seededRandom } from '../../logic/randomTables';

const TEST_WIDTHS = [1, 8, 31, 32, 33, 64];

const pow2 = (n: number | bigint) => 2n ** BigInt(n);
const mod = (x: bigint, w: number) => ((x % pow2(w)) + pow2(w)) % pow2(w);
/** Floor division (BigInt `/` truncates toward zero). */
const floorDiv = (a: bigint, b: bigint) => (a % b !== 0n && a < 0n !== b < 0n ? a / b - 1n : a / b);
const toSigned = (x: bigint, w: number) => (x >= pow2(w - 1) ? x - pow2(w) : x);
const bitOf = (x: bigint, i: number) => (x / pow2(i)) % 2n;
const bitwise = (a: bigint, b: bigint, w: number, f: (x: bigint, y: bigint) => bigint) => {
  let r = 0n;
  for (let i = 0; i < w; i++) r += f(bitOf(a, i), bitOf(b, i)) * pow2(i);
  return r;
};
const b = (x: boolean) => (x ? 1n : 0n);

/** The reference for `a OP b` with both operands of width w. */
const BINARY: Record<string, (a: bigint, b: bigint, w: number) => bigint> = {
  '+': (x, y, w) => mod(x + y, w),
  '-': (x, y, w) => mod(x - y, w),
  '&': (x, y, w) => bitwise(x, y, w, (p, q) => p * q),
  '|': (x, y, w) => bitwise(x, y, w, (p, q) => p + q - p * q),
  '^': (x, y, w) => bitwise(x, y, w, (p, q) => (p + q) % 2n),
  '==': (x, y) => b(x === y),
  '!=': (x, y) => b(x !== y),
  '<': (x, y) => b(x < y),
  '<=': (x, y) => b(x <= y),
  '>': (x, y) => b(x > y),
  '>=': (x, y) => b(x >= y),
  '<s': (x, y, w) => b(toSigned(x, w) < toSigned(y, w)),
  '<=s': (x, y, w) => b(toSigned(x, w) <= toSigned(y, w)),
  '>s': (x, y, w) => b(toSigned(x, w) > toSigned(y, w)),
  '>=s': (x, y, w) => b(toSigned(x, w) >= toSigned(y, w)),
  // With the amount n: multiplying by 2^n and wrapping leaves 0 once n >= w; floor division by
  // 2^n leaves 0 (or -1, all sign bits, for a negative value) once n >= w, so no case is special.
  '<<': (x, n, w) => mod(x * pow2(n), w),
  '>>': (x, n) => floorDiv(x, pow2(n)),
  '>>>': (x, n, w) => mod(floorDiv(toSigned(x, w), pow2(n)), w),
  'carry': (x, y, w) => b(x + y >= pow2(w)),
  'borrow': (x, y) => b(x - y < 0n),
};

function edgeValues(w: number): bigint[] {
  return [...new Set([0n, 1n, pow2(w) - 1n, pow2(w - 1), pow2(w - 1) - 1n, 2n % pow2(w)])];
}

function randomValue(random: () => number, w: number): bigint {
  let v = 0n;
  for (let i = 0; i < w; i += 8) v = v * 256n + BigInt(Math.floor(random() * 256));
  return mod(v, w);
}

/** Pairs of operands: all pairs of edge values and `n` random pairs. */
function pairs(w: number, n: number, random: () => number, wb = w): [bigint, bigint][] {
  const out: [bigint, bigint][] = [];
  for (const x of edgeValues(w)) for (const y of edgeValues(wb)) out.push([x, y]);
  for (let i = 0; i < n; i++) out.push([randomValue(random, w), randomValue(random, wb)]);
  return out;
}

/** Runs `text` over names of the given widths both ways and returns [evaluated, compiled]. */
function run(text: string, names: Record<string, number>, values: Record<string, bigint>, expectedWidth?: number): [bigint, bigint] {
  const expr = parseExpression(text, 0).expr!;
  expect(expr, text).toBeDefined();
  const widthOf = (n: string) => names[n];
  const evaluated = evaluate(expr, (n) => values[n], widthOf, { expectedWidth });
  const inputs = Object.keys(names);
  const [compiled] = compileExpressions([{ name: 'out', expr, width: expectedWidth }], inputs, widthOf)(inputs.map((n) => values[n]));
  return [evaluated, BigInt(compiled)];
}

describe('operators against the definitions', () => {
  const random = seededRandom(314159);

  for (const w of TEST_WIDTHS) {
    it(`binary operators, comparisons, carry and borrow at width ${w}`, () => {
      for (const op of Object.keys(BINARY)) {
        if (op === '<<' || op === '>>' || op === '>>>') continue;
        const text = op === 'carry' || op === 'borrow' ? `${op}(a, b)` : `a ${op} b`;
        for (const [x, y] of pairs(w, 60, random)) {
          const want = BINARY[op](x, y, w);
          expect(run(text, { a: w, b: w }, { a: x, b: y }), `${text} with a=${x} b=${y} (${w} bits)`).toEqual([want, want]);
        }
      }
    });

    it(`carry and borrow with a carry-in at width ${w}`, () => {
      for (const [x, y] of pairs(w, 40, random)) {
        for (const c of [0n, 1n]) {
          const carry = b(x + y + c >= pow2(w));
          const borrow = b(x - y - c < 0n);
          expect(run('carry(a, b, c)', { a: w, b: w, c: 1 }, { a: x, b: y, c }), `carry ${x} ${y} ${c}`).toEqual([carry, carry]);
          expect(run('borrow(a, b, c)', { a: w, b: w, c: 1 }, { a: x, b: y, c }), `borrow ${x} ${y} ${c}`).toEqual([borrow, borrow]);
        }
      }
    });

    it(`shifts at width ${w}, by amounts below, at and above the width, constant or from an operand`, () => {
      const amounts = [0, 1, w - 1, w, w + 1, 2 * w + 5, 63, 64, 127];
      for (const op of ['<<', '>>', '>>>']) {
        for (const x of [...edgeValues(w), randomValue(random, w), randomValue(random, w)]) {
          for (const n of amounts) {
            const want = BINARY[op](x, BigInt(n), w);
            expect(run(`a ${op} ${n}`, { a: w }, { a: x }), `a ${op} ${n} with a=${x} (${w} bits)`).toEqual([want, want]);
            // The amount as a 7-bit operand, and as a 40-bit (BigInt) operand.
            for (const aw of [7, 40].filter((aw) => BigInt(n) < pow2(aw))) expect(run(`a ${op} n`, { a: w, n: aw }, { a: x, n: BigInt(n) }), `a ${op} n (${aw} bits) n=${n} a=${x}`).toEqual([want, want]);
          }
        }
      }
    });

    it(`unary operators, slices, extension, replication and concatenation at width ${w}`, () => {
      for (const [x, y] of pairs(w, 40, random, 5)) {
        const not = pow2(w) - 1n - x;
        const neg = mod(pow2(w) - x, w);
        expect(run('~a', { a: w }, { a: x })).toEqual([not, not]);
        expect(run('-a', { a: w }, { a: x })).toEqual([neg, neg]);
        const lo = Math.floor(w / 3);
        const hi = w - 1 - Math.floor(w / 4);
        const slice = floorDiv(x, pow2(lo)) % pow2(hi - lo + 1);
        expect(run(`a[${hi}:${lo}]`, { a: w }, { a: x })).toEqual([slice, slice]);
        const top = bitOf(x, w - 1);
        expect(run(`a[${w - 1}]`, { a: w }, { a: x })).toEqual([top, top]);
        for (const t of [w, w + 1, 32, 33, 64].filter((t) => t >= w)) {
          const sext = mod(toSigned(x, w), t);
          expect(run(`sext(a, ${t})`, { a: w }, { a: x }), `sext(${x}, ${t})`).toEqual([sext, sext]);
          expect(run(`zext(a, ${t})`, { a: w }, { a: x })).toEqual([x, x]);
        }
        const cat = x * pow2(5) + y;
        expect(run('{a, b}', { a: w, b: 5 }, { a: x, b: y })).toEqual([cat, cat]);
        const catLit = (y * pow2(w) + x) * 4n + 2n;
        expect(run('{b, a, 0b10}', { a: w, b: 5 }, { a: x, b: y })).toEqual([catLit, catLit]);
        let rep = 0n;
        for (let i = 0; i < 3; i++) rep = rep * pow2(w) + x;
        expect(run('rep(a, 3)', { a: w }, { a: x })).toEqual([rep, rep]);
      }
    });

    it(`conditional, select and literals at width ${w}`, () => {
      const values: ReadonlyMap<string, number> = new Map([['add', 0], ['sub', 1], ['pass', 3]]);
      const expr = parseExpression('select fn { add: a + b, sub: a - b, pass: a }', 0).expr!;
      const widths: Record<string, number> = { a: w, b: w, fn: 2 };
      const run2 = compileExpressions([{ name: 'y', expr }], ['a', 'b', 'fn'], (n) => widths[n], { values: () => values });
      for (const [x, y] of pairs(w, 20, random)) {
        for (const c of [0n, 1n]) {
          const want = c ? x : y;
          expect(run('c ? a : b', { a: w, b: w, c: 1 }, { a: x, b: y, c })).toEqual([want, want]);
        }
        for (const [code, want] of [[0n, mod(x + y, w)], [1n, mod(x - y, w)], [3n, x], [2n, 0n]] as const) {
          const env: Record<string, bigint> = { a: x, b: y, fn: code };
          expect(evaluate(expr, (n) => env[n], (n) => widths[n], { values: () => values })).toBe(want);
          expect(BigInt(run2([x, y, code])[0])).toBe(want);
        }
        // A decimal literal takes the other operand's width; all ones written in decimal fits exactly.
        const allOnes = pow2(w) - 1n;
        expect(run(`a ^ ${allOnes}`, { a: w }, { a: x })).toEqual([allOnes - x, allOnes - x]);
        expect(run('a + -1', { a: w }, { a: x })).toEqual([mod(x - 1n, w), mod(x - 1n, w)]);
      }
      expect(checkExpression(parseExpression(`a ^ ${pow2(w)}`, 0).expr!, scopeOf(new Map([['a', { width: w }]]))).diagnostics.map((d) => d.code)).toEqual(['expr-value']);
    });
  }
});
