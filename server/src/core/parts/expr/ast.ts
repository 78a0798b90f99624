// The expression form over bit vectors: the tree the parser builds and every other reader
// (checker, evaluator, compiler, printer) walks. Widths are not stored here; the checker infers
// them (a decimal literal takes its width from where it stands). Parentheses leave no node.
import type { Span } from '../../text/span';

export type BinaryOp =
  | '+' | '-' | '&' | '|' | '^'
  | '<<' | '>>' | '>>>'
  | '==' | '!=' | '<' | '<=' | '>' | '>=' | '<s' | '<=s' | '>s' | '>=s';

export type UnaryOp = '~' | '-';

/** A signal, port or field, possibly dotted (`cnt.zero`). */
export interface NameExpr { kind: 'name'; name: string; span: Span }

/**
 * A literal. Hex and binary literals carry their width in their digits (4 per hex digit, 1 per
 * binary digit); a decimal literal has none and takes the width of its context.
 */
export interface NumberExpr { kind: 'number'; value: bigint; radix: 2 | 10 | 16; width?: number; span: Span }

/**
 * `x[hi:lo]`, or `x[bit]` when hi === lo. When x names a register array or the memory, `x[n]`
 * is element n instead (the checker knows which; its Resolution lists such reads).
 */
export interface SliceExpr { kind: 'slice'; operand: Expr; hi: number; lo: number; hiSpan: Span; loSpan: Span; span: Span }

/**
 * `a[i]` with an index that is not a bare number: element i of the register array or memory
 * `a`, chosen at run time. Only arrays take such an index (the checker says so for anything else).
 */
export interface IndexExpr { kind: 'index'; operand: Expr; index: Expr; span: Span }

/** `{a, b, c}`: the first item is the most significant. */
export interface ConcatExpr { kind: 'concat'; items: Expr[]; span: Span }

/** `rep(x, count)`: `count` copies of x side by side. */
export interface RepExpr { kind: 'rep'; operand: Expr; count: number; countSpan: Span; span: Span }

/** `sext(x, width)` / `zext(x, width)`. */
export interface ExtendExpr { kind: 'extend'; signed: boolean; operand: Expr; width: number; widthSpan: Span; span: Span }

/** `carry(a, b[, cin])`: the carry out of a + b (+ cin); `borrow(a, b[, bin])`: the borrow out of a - b (- bin). */
export interface CarryExpr { kind: 'carry' | 'borrow'; left: Expr; right: Expr; carryIn?: Expr; span: Span }

export interface UnaryExpr { kind: 'unary'; op: UnaryOp; operand: Expr; span: Span }

export interface BinaryExpr { kind: 'binary'; op: BinaryOp; left: Expr; right: Expr; opSpan: Span; span: Span }

/** `c ? a : b`. */
export interface CondExpr { kind: 'cond'; cond: Expr; then: Expr; otherwise: Expr; span: Span }

/** An arm key of a select: a value name of the selecting field, or a number for a plain signal. */
export type SelectKey = NameExpr | NumberExpr;

export interface SelectArm { key: SelectKey; value: Expr; span: Span }

/**
 * `select s { key: value, ..., else: value }`. `head` covers `select s`, where a missing arm is
 * reported.
 */
export interface SelectExpr { kind: 'select'; selector: Expr; arms: SelectArm[]; otherwise?: Expr; head: Span; span: Span }

export type Expr =
  | NameExpr | NumberExpr | SliceExpr | IndexExpr | ConcatExpr | RepExpr | ExtendExpr | CarryExpr
  | UnaryExpr | BinaryExpr | CondExpr | SelectExpr;

/** The direct sub-expressions of `expr` (select keys are not expressions and are left out). */
export function children(expr: Expr): Expr[] {
  switch (expr.kind) {
    case 'name':
    case 'number':
      return [];
    case 'slice':
    case 'rep':
    case 'extend':
    case 'unary':
      return [expr.operand];
    case 'index':
      return [expr.operand, expr.index];
    case 'concat':
      return expr.items;
    case 'carry':
    case 'borrow':
      return expr.carryIn ? [expr.left, expr.right, expr.carryIn] : [expr.left, expr.right];
    case 'binary':
      return [expr.left, expr.right];
    case 'cond':
      return [expr.cond, expr.then, expr.otherwise];
    case 'select':
      return [expr.selector, ...expr.arms.map((a) => a.value), ...(expr.otherwise ? [expr.otherwise] : [])];
  }
}

/**
 * Every name the expression reads, each once, in order of first appearance (for dependency
 * analysis); an array whose element it reads counts as read.
 */
export function namesUsed(expr: Expr): string[] {
  const seen = new Set<string>();
  const visit = (e: Expr): void => {
    if (e.kind === 'name') seen.add(e.name);
    for (const c of children(e)) visit(c);
  };
  visit(expr);
  return [...seen];
}
