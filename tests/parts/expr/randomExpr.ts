// Seeded random expression trees that check clean, for the compiled-versus-evaluated and the
// print-and-parse-back properties (and the benchmark). Every tree is built over the inputs
// below (and, when asked, reads elements of the arrays below); a decimal literal is placed only
// where its context gives it a width.
import type { Expr } from '../../../server/src/core/parts/expr';
import { seededRandom } from '../../logic/randomTables';

export const WIDTHS = [1, 2, 3, 5, 8, 16, 31, 32, 33, 40, 64] as const;

/** One input per width (`n8` has 8 bits) and the field `fn` with three named values of its four codes. */
export const INPUTS = [...WIDTHS.map((w) => `n${w}`), 'fn'];
export const FIELD_VALUES: ReadonlyMap<string, number> = new Map([['add', 0], ['sub', 1], ['and', 2]]);
export const valuesOf = (name: string) => (name === 'fn' ? FIELD_VALUES : undefined);

/** Arrays a tree may read: register arrays of several sizes and element widths, and a byte memory. */
export const ARRAYS: readonly { name: string; width: number; elements: number | 'memory' }[] = [
  { name: 'regs', width: 32, elements: 32 },
  { name: 'five', width: 8, elements: 5 },
  { name: 'wide', width: 40, elements: 3 },
  { name: 'bit', width: 1, elements: 1 },
  { name: 'mem', width: 8, elements: 'memory' },
];
const arrayNamed = new Map(ARRAYS.map((a) => [a.name, a]));
export const elementsOf = (name: string) => arrayNamed.get(name)?.elements;
export const widthOf = (name: string): number => arrayNamed.get(name)?.width ?? (name === 'fn' ? 2 : Number(name.slice(1)));

const NO_SPAN = { start: 0, end: 0 };

export class ExprGenerator {
  readonly random: () => number;

  /** With `arrays`, trees also read elements of ARRAYS (their callers must give an element reader). */
  constructor(seed: number, private readonly options: { arrays?: boolean } = {}) {
    this.random = seededRandom(seed);
  }

  int(n: number): number {
    return Math.floor(this.random() * n);
  }

  pick<T>(list: readonly T[]): T {
    return list[this.int(list.length)];
  }

  /** A value of `width` bits, often an edge: 0, 1, all ones, the sign bit, or just below it. */
  value(width: number): bigint {
    const all = (1n << BigInt(width)) - 1n;
    const sign = 1n << BigInt(width - 1);
    const choice = this.int(7);
    if (choice === 0) return 0n;
    if (choice === 1) return 1n & all;
    if (choice === 2) return all;
    if (choice === 3) return sign;
    if (choice === 4) return sign - 1n;
    let v = 0n;
    for (let i = 0; i < width; i += 16) v = (v << 16n) | BigInt(this.int(65536));
    return v & all;
  }

  private number(width: number, context: boolean): Expr {
    const value = this.value(width);
    if (context && this.int(2) === 0) return { kind: 'number', value, radix: 10, span: NO_SPAN };
    if (width % 4 === 0 && this.int(2) === 0) return { kind: 'number', value, radix: 16, width, span: NO_SPAN };
    return { kind: 'number', value, radix: 2, width, span: NO_SPAN };
  }

  /**
   * A tree of `width` bits at most `depth` deep. With `context` the place gives the width, so the
   * tree may take it from there (decimal literals); without, it has a width of its own.
   */
  expr(width: number, depth: number, context: boolean): Expr {
    const leaf = (): Expr => (WIDTHS.includes(width as never) && this.int(3) > 0 ? { kind: 'name', name: `n${width}`, span: NO_SPAN } : this.number(width, context));
    if (depth <= 0) return leaf();
    const d = depth - 1;
    const span = NO_SPAN;
    switch (this.int(this.options.arrays ? 16 : 14)) {
      case 0:
        return leaf();
      case 1: {
        const wider = WIDTHS.filter((w) => w >= width);
        const ow = this.pick(wider);
        const lo = this.int(ow - width + 1);
        return { kind: 'slice', operand: this.expr(ow, d, false), hi: lo + width - 1, lo, hiSpan: span, loSpan: span, span };
      }
      case 2: {
        if (width < 2) return leaf();
        const first = 1 + this.int(width - 1);
        return { kind: 'concat', items: [this.expr(first, d, false), this.expr(width - first, d, false)], span };
      }
      case 3: {
        const divisors = [1, 2, 3, 4, 8].filter((n) => width % n === 0 && n > 1);
        if (!divisors.length) return leaf();
        const count = this.pick(divisors);
        return { kind: 'rep', operand: this.expr(width / count, d, false), count, countSpan: span, span };
      }
      case 4: {
        const narrower = WIDTHS.filter((w) => w <= width);
        return { kind: 'extend', signed: this.int(2) === 0, operand: this.expr(this.pick(narrower), d, false), width, widthSpan: span, span };
      }
      case 5: {
        if (width !== 1) return leaf();
        const ow = this.pick(WIDTHS);
        const carryIn = this.int(2) ? this.expr(1, d, true) : undefined;
        return { kind: this.int(2) ? 'carry' : 'borrow', left: this.expr(ow, d, false), right: this.expr(ow, d, true), carryIn, span };
      }
      case 6:
        return { kind: 'unary', op: this.pick(['~', '-'] as const), operand: this.expr(width, d, context), span };
      case 7:
      case 8: {
        const op = this.pick(['+', '-', '&', '|', '^'] as const);
        const [left, right] = this.pair(width, d, context);
        return { kind: 'binary', op, left, right, opSpan: span, span };
      }
      case 9: {
        const op = this.pick(['<<', '>>', '>>>'] as const);
        const amount: Expr = this.int(2) ? { kind: 'number', value: BigInt(this.int(width + 3)), radix: 10, span } : this.expr(this.pick(WIDTHS), d, false);
        return { kind: 'binary', op, left: this.expr(width, d, context), right: amount, opSpan: span, span };
      }
      case 10: {
        if (width !== 1) return leaf();
        const op = this.pick(['==', '!=', '<', '<=', '>', '>=', '<s', '<=s', '>s', '>=s'] as const);
        const ow = this.pick(WIDTHS);
        const [left, right] = this.pair(ow, d, false);
        return { kind: 'binary', op, left, right, opSpan: span, span };
      }
      case 11: {
        const [then, otherwise] = this.pair(width, d, context);
        return { kind: 'cond', cond: this.expr(1, d, true), then, otherwise, span };
      }
      case 12:
      case 13:
        return this.select(width, d, context);
      default:
        return this.elementRead(width, d);
    }
  }

  /**
   * An element of a random array, at a fixed element (`five[3]`) or a computed index of any
   * width (past a register array's end now and then), sliced or zero-extended to `width`.
   */
  private elementRead(width: number, depth: number): Expr {
    const span = NO_SPAN;
    const array = this.pick(ARRAYS);
    const operand: Expr = { kind: 'name', name: array.name, span };
    let read: Expr;
    if (this.int(4) === 0) {
      const at = array.elements === 'memory' ? Number(this.value(32)) : this.int(array.elements);
      read = { kind: 'slice', operand, hi: at, lo: at, hiSpan: span, loSpan: span, span };
    } else {
      let index = array.elements === 'memory' ? this.expr(32, depth, true) : this.expr(this.pick(WIDTHS), depth, false);
      // A constant index must name an element; a computed one may run past the end.
      if (index.kind === 'number' && array.elements !== 'memory') index = { ...index, value: index.value % BigInt(array.elements) };
      read = { kind: 'index', operand, index, span };
    }
    if (array.width === width) return read;
    if (array.width < width) return { kind: 'extend', signed: this.int(2) === 0, operand: read, width, widthSpan: span, span };
    const lo = this.int(array.width - width + 1);
    return { kind: 'slice', operand: read, hi: lo + width - 1, lo, hiSpan: span, loSpan: span, span };
  }

  /** Two operands that must share `width`: without context the first has a width of its own. */
  private pair(width: number, depth: number, context: boolean): [Expr, Expr] {
    const left = this.expr(width, depth, context);
    return [left, this.expr(width, depth, true)];
  }

  private select(width: number, depth: number, context: boolean): Expr {
    const span = NO_SPAN;
    const byField = this.int(2) === 0;
    const withElse = this.int(2) === 0;
    let keys: Expr[];
    let selector: Expr;
    if (byField) {
      selector = { kind: 'name', name: 'fn', span };
      const names = [...FIELD_VALUES.keys()].filter((_, i) => !withElse || i !== 1);
      keys = names.map((name) => ({ kind: 'name', name, span }));
    } else {
      selector = this.expr(3, depth, false);
      keys = [0, 3, 5, 6].filter(() => this.int(3) > 0).map((v) => ({ kind: 'number', value: BigInt(v), radix: 10, span }));
      if (!keys.length) keys = [{ kind: 'number', value: 7n, radix: 2, width: 3, span }];
    }
    const arms = keys.map((key, i) => ({ key: key as never, value: this.expr(width, depth, context || i > 0), span }));
    const otherwise = withElse ? this.expr(width, depth, true) : undefined;
    return { kind: 'select', selector, arms, otherwise, head: span, span };
  }
}
