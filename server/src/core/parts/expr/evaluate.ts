// The reference evaluator: the definition of what every operator computes, on BigInt values
// masked to each node's width. It is written for clarity, not speed; compile.ts is the fast path
// and a property test holds the two equal.
import type { Expr, IndexExpr, SelectExpr } from './ast';
import { resolveForRun, type ElementRead, type NameInfo, type Resolution, type Scope } from './check';

export interface RunOptions {
  /** The value names of control fields, for selects keyed by name. */
  values?: (name: string) => ReadonlyMap<string, number> | undefined;
  /** Called when a select without `else` meets a code none of its arms lists (its value is then 0). */
  onUncovered?: (select: SelectExpr, code: bigint) => void;
  /**
   * Which names are arrays: a register array's element count, or `memory` for the byte memory
   * (the width of an array is its elements' width). An array is read only through `element`.
   */
  elements?: (name: string) => number | 'memory' | undefined;
  /**
   * Reads element `index` of `array` from the caller's storage (the simulator owns it); the value
   * is masked to the element width. `index` is below the count for a register array (a read past
   * the last element never gets here) and a 32-bit byte address for the memory. Required when an
   * expression reads an array.
   */
  element?: (array: string, index: number) => number | bigint;
  /** Called when a computed index reaches past a register array's last element (the read gives 0). */
  onOutOfRange?: (read: IndexExpr, index: bigint) => void;
}

export interface EvaluateOptions extends RunOptions {
  /** The width the expression's place gives (for a bare decimal literal). */
  expectedWidth?: number;
}

/** The scope an expression runs in: widths from `widthOf`, value names from `values`, arrays from `elements`. */
export function runScope(widthOf: (name: string) => number, options: Pick<RunOptions, 'values' | 'elements'>): Scope {
  return (name: string): NameInfo => {
    const info: NameInfo = { width: widthOf(name) };
    const v = options.values?.(name);
    if (v) info.values = v;
    const elements = options.elements?.(name);
    if (elements !== undefined) info.elements = elements;
    return info;
  };
}

/** Refuses to run an expression that reads an array when nothing can read its elements. */
export function needsElementReader(r: Resolution, options: RunOptions): void {
  if (r.reads.size && !options.element) {
    const [first] = r.reads.values();
    throw new Error(`cannot run an expression that reads the array \`${first.array}\` without an \`element\` reader`);
  }
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
  const r = resolveForRun(expr, runScope(widthOf, options), options.expectedWidth);
  needsElementReader(r, options);
  return evaluateResolved(expr, r, env, options);
}

export function evaluateResolved(expr: Expr, r: Resolution, env: (name: string) => bigint, options: RunOptions = {}): bigint {
  const width = (e: Expr) => r.widths.get(e)!;
  /** Element `index` of `read`'s array: 0 past a register array's last element, the caller told. */
  const element = (read: ElementRead, index: bigint, node: Expr): bigint => {
    if (read.elements !== 'memory' && index >= BigInt(read.elements)) {
      options.onOutOfRange?.(node as IndexExpr, index);
      return 0n;
    }
    return mask(BigInt(options.element!(read.array, Number(index))), width(node));
  };
  const ev = (e: Expr): bigint => {
    const w = width(e);
    switch (e.kind) {
      case 'name':
        return mask(env(e.name), w);
      case 'number':
        return e.value;
      case 'slice': {
        const read = r.reads.get(e);
        return read ? element(read, BigInt(e.lo), e) : mask(ev(e.operand) >> BigInt(e.lo), w);
      }
      case 'index':
        return element(r.reads.get(e)!, ev(e.index), e);
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
        options.onUncovered?.(e, code);
        return 0n;
      }
    }
    throw new Error(`unknown expression node ${(e as Expr).kind}`);
  };
  return ev(expr);
}
