// The reference evaluator: the definition of what every operator computes, on BigInt values
// masked to each node's width. It is written for clarity, not speed; compile.ts is the fast path
// and a property test holds the two equal.
import type { Expr, SelectExpr } from './ast';
import { resolveForRun, type NameInfo, type Resolution, type Scope } from './check';

export interface RunOptions {
  /** The value names of control fields, for selects keyed by name. */
  values?: (name: string) => ReadonlyMap<string, number> | undefined;
  /** Called when a select without `else` meets a code none of its arms lists (its value is then 0). */
  onUncovered?: (select: SelectExpr, code: bigint) => void;
}

export interface EvaluateOptions extends RunOptions {
  /** The width the expression's place gives (for a bare decimal literal). */
  expectedWidth?: number;
}

/** The scope an expression runs in: widths from `widthOf`, value names from `values`. */
export function runScope(widthOf: (name: string) => number, values?: RunOptions['values']): Scope {
  return (name: string): NameInfo => {
    const info: NameInfo = { width: widthOf(name) };
    const v = values?.(name);
    if (v) info.values = v;
    return info;
  };
}

const mask = (v: bigint, width: number) => BigInt.asUintN(width, v);
const signed = (v: bigint, width: number) => BigInt.asIntN(width, v);

/**
 * Whether a select takes `code` to one of its arms (or to `else`). Without `values`, arms keyed
 * by name match nothing. The simulator can use it to fault on a code the table never names.
 */
export function selectCovers(select: SelectExpr, code: number | bigint, values?: ReadonlyMap<string, number>): boolean {
  if (select.otherwise) return true;
  const c = BigInt(code);
  return select.arms.some((a) => (a.key.kind === 'number' ? a.key.value === c : values?.get(a.key.name) !== undefined && BigInt(values.get(a.key.name)!) === c));
}

/**
 * Evaluates `expr` with every name's value from `env` (masked to its width from `widthOf`).
 * The result is masked to the expression's width. Throws when the expression does not check.
 */
export function evaluate(expr: Expr, env: (name: string) => bigint, widthOf: (name: string) => number, options: EvaluateOptions = {}): bigint {
  const r = resolveForRun(expr, runScope(widthOf, options.values), options.expectedWidth);
  return evaluateResolved(expr, r, env, options.onUncovered);
}

export function evaluateResolved(expr: Expr, r: Resolution, env: (name: string) => bigint, onUncovered?: RunOptions['onUncovered']): bigint {
  const width = (e: Expr) => r.widths.get(e)!;
  const ev = (e: Expr): bigint => {
    const w = width(e);
    switch (e.kind) {
      case 'name':
        return mask(env(e.name), w);
      case 'number':
        return e.value;
      case 'slice':
        return mask(ev(e.operand) >> BigInt(e.lo), w);
      case 'concat':
        return e.items.reduce((acc, item) => (acc << BigInt(width(item))) | ev(item), 0n);
      case 'rep': {
        const v = ev(e.operand);
        let acc = 0n;
        for (let i = 0; i < e.count; i++) acc = (acc << BigInt(width(e.operand))) | v;
        return acc;
      }
      case 'extend': {
        const v = ev(e.operand);
        return e.signed ? mask(signed(v, width(e.operand)), w) : v;
      }
      case 'carry': {
        const sum = ev(e.left) + ev(e.right) + (e.carryIn ? ev(e.carryIn) : 0n);
        return sum >> BigInt(width(e.left));
      }
      case 'borrow': {
        const a = ev(e.left);
        const b = ev(e.right) + (e.carryIn ? ev(e.carryIn) : 0n);
        return a < b ? 1n : 0n;
      }
      case 'unary':
        return e.op === '~' ? mask(~ev(e.operand), w) : mask(-ev(e.operand), w);
      case 'binary': {
        const a = ev(e.left);
        const b = ev(e.right);
        const ow = width(e.left);
        const bit = (x: boolean) => (x ? 1n : 0n);
        switch (e.op) {
          case '+': return mask(a + b, w);
          case '-': return mask(a - b, w);
          case '&': return a & b;
          case '|': return a | b;
          case '^': return a ^ b;
          // Amounts of the width or more shift every bit out (RISC-V SLL/SRL/SRA take only the
          // low five bits instead; this form is a plain shifter, and a kind can slice the amount).
          case '<<': return b >= BigInt(w) ? 0n : mask(a << b, w);
          case '>>': return b >= BigInt(w) ? 0n : a >> b;
          case '>>>': return mask(signed(a, w) >> (b >= BigInt(w) ? BigInt(w - 1) : b), w);
          case '==': return bit(a === b);
          case '!=': return bit(a !== b);
          case '<': return bit(a < b);
          case '<=': return bit(a <= b);
          case '>': return bit(a > b);
          case '>=': return bit(a >= b);
          case '<s': return bit(signed(a, ow) < signed(b, ow));
          case '<=s': return bit(signed(a, ow) <= signed(b, ow));
          case '>s': return bit(signed(a, ow) > signed(b, ow));
          case '>=s': return bit(signed(a, ow) >= signed(b, ow));
        }
        break;
      }
      case 'cond':
        return ev(e.cond) ? ev(e.then) : ev(e.otherwise);
      case 'select': {
        const code = ev(e.selector);
        const arm = e.arms.find((a) => r.codes.get(a) === code);
        if (arm) return ev(arm.value);
        if (e.otherwise) return ev(e.otherwise);
        onUncovered?.(e, code);
        return 0n;
      }
    }
    throw new Error(`unknown expression node ${(e as Expr).kind}`);
  };
  return ev(expr);
}
