// Prints an expression in the syntax the parser reads, with the fewest parentheses precedence
// needs, so hover can show a definition and fitted equations read like hand-written ones.
// parseExpression(formatExpression(e)) gives e back (spans aside).
import type { Expr, NumberExpr } from './ast';
import { BINARY_LEVELS } from './parser';

const COND = 0;
const UNARY = BINARY_LEVELS.length + 1;
const POSTFIX = UNARY + 1;
const PRIMARY = POSTFIX + 1;

function precedence(e: Expr): number {
  switch (e.kind) {
    case 'cond':
      return COND;
    case 'binary':
      return 1 + BINARY_LEVELS.findIndex((level) => level.includes(e.op));
    case 'unary':
      return UNARY;
    case 'slice':
    case 'index':
      return POSTFIX;
    default:
      return PRIMARY;
  }
}

function formatNumber(n: NumberExpr): string {
  if (n.radix === 10) return n.value.toString();
  const digits = n.value.toString(n.radix);
  return n.radix === 16 ? `0x${digits.padStart((n.width ?? 0) / 4, '0')}` : `0b${digits.padStart(n.width ?? 0, '0')}`;
}

/** `e` printed so that it parses back as one operand of precedence at least `min`. */
function at(e: Expr, min: number): string {
  const text = formatExpression(e);
  return precedence(e) < min ? `(${text})` : text;
}

export function formatExpression(expr: Expr): string {
  switch (expr.kind) {
    case 'name':
      return expr.name;
    case 'number':
      return formatNumber(expr);
    case 'slice':
      return `${at(expr.operand, POSTFIX)}[${expr.hi === expr.lo ? expr.hi : `${expr.hi}:${expr.lo}`}]`;
    case 'index': {
      // A bare number in brackets reads back as a slice, so a number index keeps its parentheses.
      const index = formatExpression(expr.index);
      return `${at(expr.operand, POSTFIX)}[${expr.index.kind === 'number' ? `(${index})` : index}]`;
    }
    case 'concat':
      return `{${expr.items.map(formatExpression).join(', ')}}`;
    case 'rep':
      return `rep(${formatExpression(expr.operand)}, ${expr.count})`;
    case 'extend':
      return `${expr.signed ? 'sext' : 'zext'}(${formatExpression(expr.operand)}, ${expr.width})`;
    case 'carry':
    case 'borrow':
      return `${expr.kind}(${[expr.left, expr.right, ...(expr.carryIn ? [expr.carryIn] : [])].map(formatExpression).join(', ')})`;
    case 'unary':
      return `${expr.op}${at(expr.operand, UNARY)}`;
    case 'binary': {
      // Every binary level is left-associative: a right operand of the same level needs parentheses.
      const p = precedence(expr);
      return `${at(expr.left, p)} ${expr.op} ${at(expr.right, p + 1)}`;
    }
    case 'cond':
      return `${at(expr.cond, COND + 1)} ? ${formatExpression(expr.then)} : ${formatExpression(expr.otherwise)}`;
    case 'select': {
      const arms = expr.arms.map((a) => `${formatExpression(a.key)}: ${formatExpression(a.value)}`);
      if (expr.otherwise) arms.push(`else: ${formatExpression(expr.otherwise)}`);
      return `select ${at(expr.selector, UNARY)} { ${arms.join(', ')} }`;
    }
  }
}
