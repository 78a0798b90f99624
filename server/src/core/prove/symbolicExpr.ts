// An expression of the project's expression language (parts/expr) evaluated over terms instead
// of numbers: the same walk as evaluate.ts (the reference evaluator), node by node, with the
// checker's Resolution for every node's width and every select key's code. The RV32I semantics
// (isa/semantics.ts) and the library kinds' definitions (parts/library/standard.ts) become solver
// terms this way, with nothing restated.
import type { Expr } from '../parts/expr/ast';
import { resolveExpression, type Scope, type Resolution } from '../parts/expr/check';
import type { Term, Terms } from './term';

export interface SymbolicEnv {
  /** The term a name stands for (its width must be the name's width in the scope). */
  readonly name: (name: string) => Term;
  /** Element `index` of array `array` (a register array or the byte memory). */
  readonly element?: (array: string, index: Term) => Term;
}

/** Checks `expr` in `scope` (at `expectedWidth`) and evaluates it over terms; throws when it does not check (the callers' expressions are the tool's own). */
export function symbolic(T: Terms, expr: Expr, scope: Scope, env: SymbolicEnv, expectedWidth?: number): Term {
  const r = resolveExpression(expr, scope, expectedWidth);
  if (r.diagnostics.length) throw new Error(`cannot run an expression symbolically: ${r.diagnostics[0].message} [${r.diagnostics[0].code}]`);
  return symbolicResolved(T, expr, r, env);
}

export function symbolicResolved(T: Terms, expr: Expr, r: Resolution, env: SymbolicEnv): Term {
  const width = (e: Expr) => {
    const w = r.widths.get(e);
    if (w === undefined) throw new Error('an expression node without a width');
    return w;
  };
  const element = (array: string, index: Term, node: Expr, count: number | 'memory'): Term => {
    if (!env.element) throw new Error(`the expression reads the array \`${array}\`, which the prover has no reader for`);
    // Past a register array's last element the read gives 0 (evaluate.ts).
    const value = env.element(array, index);
    if (count === 'memory' || 2 ** index.w <= count) return value;
    return T.ite(T.compare('bvult', index, T.const(index.w, count)), value, T.const(width(node), 0));
  };
  const ev = (e: Expr): Term => {
    const w = width(e);
    switch (e.kind) {
      case 'name': {
        const t = env.name(e.name);
        if (t.w !== w) throw new Error(`\`${e.name}\` is ${w} bits in the expression and ${t.w} bits as a term`);
        return t;
      }
      case 'number':
        return T.const(w, e.value);
      case 'slice': {
        const read = r.reads.get(e);
        if (read) return element(read.array, T.const(32, e.lo), e, read.elements);
        return T.extract(ev(e.operand), e.hi, e.lo);
      }
      case 'index': {
        const read = r.reads.get(e)!;
        return element(read.array, ev(e.index), e, read.elements);
      }
      case 'concat':
        return T.concat(e.items.map(ev));
      case 'rep':
        return T.concat(Array.from({ length: e.count }, () => ev(e.operand)));
      case 'extend':
        return T.extend(e.signed, ev(e.operand), w);
      case 'carry': {
        const lw = width(e.left);
        const wide = (x: Term) => T.extend(false, x, lw + 2);
        const sum = T.add(T.add(wide(ev(e.left)), wide(ev(e.right))), e.carryIn ? wide(ev(e.carryIn)) : T.const(lw + 2, 0));
        // a + b + cin < 2^(lw+1): the carry is bit lw.
        return T.extend(false, T.extract(sum, lw, lw), w);
      }
      case 'borrow': {
        const lw = width(e.left);
        const wide = (x: Term) => T.extend(false, x, lw + 2);
        const b = T.add(wide(ev(e.right)), e.carryIn ? wide(ev(e.carryIn)) : T.const(lw + 2, 0));
        return T.compare('bvult', wide(ev(e.left)), b);
      }
      case 'unary':
        return e.op === '~' ? T.not(ev(e.operand)) : T.neg(ev(e.operand));
      case 'binary': {
        const a = ev(e.left);
        const b = ev(e.right);
        switch (e.op) {
          case '+': return T.add(a, b);
          case '-': return T.sub(a, b);
          case '&': return T.and(a, b);
          case '|': return T.or(a, b);
          case '^': return T.xor(a, b);
          case '<<': return T.shift('bvshl', a, amount(T, b, w));
          case '>>': return T.shift('bvlshr', a, amount(T, b, w));
          case '>>>': return T.shift('bvashr', a, amount(T, b, w));
          case '==': return T.eq(a, b);
          case '!=': return T.not(T.eq(a, b));
          case '<': return T.compare('bvult', a, b);
          case '<=': return T.compare('bvule', a, b);
          case '>': return T.compare('bvult', b, a);
          case '>=': return T.compare('bvule', b, a);
          case '<s': return T.compare('bvslt', a, b);
          case '<=s': return T.compare('bvsle', a, b);
          case '>s': return T.compare('bvslt', b, a);
          case '>=s': return T.compare('bvsle', b, a);
        }
        break;
      }
      case 'cond': {
        // A known condition reads only the side it takes (no array reads of the other side).
        const c = T.bool(ev(e.cond));
        if (c.k === 'const') return ev(c.v ? e.then : e.otherwise);
        return T.ite(c, ev(e.then), ev(e.otherwise));
      }
      case 'select': {
        // The arms as a chain of tests on the selector, the first arm outermost; no arm and no
        // `else` gives 0 (evaluate.ts). A known selector (a control fixed by the step's field
        // code, a choice setting) evaluates only the arm it takes, as the hardware reads it.
        const selector = ev(e.selector);
        if (selector.k === 'const') {
          const arm = e.arms.find((a) => r.codes.get(a) === selector.v);
          return arm ? ev(arm.value) : e.otherwise ? ev(e.otherwise) : T.const(w, 0);
        }
        let result = e.otherwise ? ev(e.otherwise) : T.const(w, 0);
        for (const arm of [...e.arms].reverse()) result = T.ite(T.eq(selector, T.const(selector.w, r.codes.get(arm)!)), ev(arm.value), result);
        return result;
      }
    }
    throw new Error(`unknown expression node ${(e as Expr).kind}`);
  };
  return ev(expr);
}

/** A shift amount brought to the shifted width (SMT-LIB shifts take both operands at one width). */
function amount(T: Terms, b: Term, w: number): Term {
  if (b.w === w) return b;
  if (b.w < w) return T.extend(false, b, w);
  // A wider amount: anything at or above w shifts everything out, like w itself.
  const big = T.compare('bvult', T.const(b.w, w - 1), b);
  return T.ite(big, T.const(w, w), T.extract(b, w - 1, 0));
}
