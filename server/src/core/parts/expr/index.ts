// The expression language over bit vectors (docs/expressions.md): parse, check widths, name
// uses, evaluate (the definition), compile (the fast path), print. Pure: no Node, no editor.
export type {
  BinaryOp, BinaryExpr, CarryExpr, ConcatExpr, CondExpr, Expr, ExtendExpr, IndexExpr, NameExpr, NumberExpr,
  RepExpr, SelectArm, SelectExpr, SelectKey, SliceExpr, UnaryExpr, UnaryOp,
} from './ast';
export { children, namesUsed } from './ast';
export { parseExpression } from './parser';
export { ADDRESS_WIDTH, checkElementIndex, checkExpression, bitsFor, MAX_WIDTH, resolveExpression, scopeOf, type ElementRead, type NameInfo, type Resolution, type Scope } from './check';
export { evaluate, selectCovers, type EvaluateOptions, type RunOptions } from './evaluate';
export { compileExpressions, expressionSource, type CompiledExpressions, type InlineBinding } from './compile';
export { formatExpression } from './format';
