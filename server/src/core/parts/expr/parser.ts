// The expression parser: recursive descent over scanExpression's tokens, one function per
// precedence level (loosest first: ?:, |, ^, &, == !=, comparisons, shifts, + -, unary, postfix
// slices and indexes). It never throws: a problem is an 'expr-syntax' diagnostic at the exact token, and
// inside a bracketed list ({..}, (..), select arms) parsing resumes at the next comma or the
// closing bracket, so one typo does not hide the next. A tree is returned only when the text
// has no syntax problem, so later stages never see a broken tree.
import type { Diagnostic } from '../../text/diagnostic';
import { cover, type Span } from '../../text/span';
import type { BinaryOp, Expr, NameExpr, NumberExpr, SelectArm, SelectExpr } from './ast';
import { scanExpression, type Token } from './scanner';

/** Binary operators by precedence level, loosest first (every level is left-associative). */
export const BINARY_LEVELS: readonly (readonly BinaryOp[])[] = [
  ['|'],
  ['^'],
  ['&'],
  ['==', '!='],
  ['<', '<=', '>', '>=', '<s', '<=s', '>s', '>=s'],
  ['<<', '>>', '>>>'],
  ['+', '-'],
];

export const FUNCTIONS = ['rep', 'sext', 'zext', 'carry', 'borrow'] as const;

/** Bracket nesting and tree depth beyond these are refused, so no later walk can overflow the stack. */
const MAX_NESTING = 200;
const MAX_DEPTH = 1000;

export function parseExpression(text: string, base: number): { expr?: Expr; diagnostics: Diagnostic[] } {
  const parser = new ExprParser(scanExpression(text, base));
  const expr = parser.parseAll();
  return parser.diagnostics.length ? { diagnostics: parser.diagnostics } : { expr, diagnostics: [] };
}

class ExprParser {
  readonly diagnostics: Diagnostic[] = [];
  private pos = 0;
  private nesting = 0;
  private lastErrorAt = -1;
  /** The span including the parentheses around an expression written in them. */
  private readonly outer = new WeakMap<Expr, Span>();
  private readonly depth = new WeakMap<Expr, number>();

  constructor(private readonly tokens: Token[]) {}

  parseAll(): Expr | undefined {
    const expr = this.cond();
    if (expr && !this.at('eof')) this.unexpected('an operator or the end of the expression');
    return expr;
  }

  private get tok(): Token {
    return this.tokens[this.pos];
  }

  private at(kind: Token['kind'], text?: string): boolean {
    return this.tok.kind === kind && (text === undefined || this.tok.text === text);
  }

  private atOp(text: string): boolean {
    return this.at('op', text);
  }

  private next(): Token {
    const t = this.tok;
    if (t.kind !== 'eof') this.pos++;
    return t;
  }

  private error(where: Span, message: string): void {
    // One report per place: a failed item and the list around it must not both complain.
    if (where.start === this.lastErrorAt) return;
    this.lastErrorAt = where.start;
    this.diagnostics.push({ code: 'expr-syntax', severity: 'error', span: { start: where.start, end: where.end }, message });
  }

  private describe(t: Token): string {
    return t.kind === 'eof' ? 'the end of the expression' : `\`${t.text}\``;
  }

  private unexpected(expected: string): void {
    const t = this.tok;
    this.error(t, t.kind === 'error' ? t.message! : `expected ${expected}, found ${this.describe(t)}`);
  }

  private expectOp(text: string, context: string): Token | undefined {
    if (this.atOp(text)) return this.next();
    this.unexpected(`\`${text}\` ${context}`);
    return undefined;
  }

  private spanOf(e: Expr): Span {
    return this.outer.get(e) ?? e.span;
  }

  /** Records the node's depth; a tree deeper than MAX_DEPTH is refused. */
  private node<T extends Expr>(e: T, ...kids: Expr[]): T | undefined {
    const d = 1 + Math.max(0, ...kids.map((k) => this.depth.get(k) ?? 1));
    if (d > MAX_DEPTH) {
      this.error(e.span, `the expression is nested more than ${MAX_DEPTH} levels deep; split it`);
      return undefined;
    }
    this.depth.set(e, d);
    return e;
  }

  /** cond = binary [ "?" cond ":" cond ]   (right-associative) */
  private cond(): Expr | undefined {
    const c = this.binary(0);
    if (!c || !this.atOp('?')) return c;
    this.next();
    const then = this.cond();
    if (!then || !this.expectOp(':', 'between the two choices of `?`')) return undefined;
    const otherwise = this.cond();
    if (!otherwise) return undefined;
    return this.node({ kind: 'cond', cond: c, then, otherwise, span: cover(this.spanOf(c), this.spanOf(otherwise)) }, c, then, otherwise);
  }

  /** binary(level) = binary(level+1) { op-of-level binary(level+1) }; below the last level, unary. */
  private binary(level: number): Expr | undefined {
    if (level === BINARY_LEVELS.length) return this.unary();
    let left = this.binary(level + 1);
    while (left && this.at('op') && (BINARY_LEVELS[level] as readonly string[]).includes(this.tok.text)) {
      const opTok = this.next();
      const right = this.binary(level + 1);
      if (!right) return undefined;
      left = this.node(
        { kind: 'binary', op: opTok.text as BinaryOp, left, right, opSpan: { start: opTok.start, end: opTok.end }, span: cover(this.spanOf(left), this.spanOf(right)) },
        left,
        right,
      );
    }
    return left;
  }

  /** unary = ("~" | "-") unary | postfix */
  private unary(): Expr | undefined {
    if (!this.atOp('~') && !this.atOp('-')) return this.postfix();
    const opTok = this.next();
    if (!this.enter(opTok)) return undefined;
    const operand = this.unary();
    this.nesting--;
    if (!operand) return undefined;
    return this.node({ kind: 'unary', op: opTok.text as '~' | '-', operand, span: cover(opTok, this.spanOf(operand)) }, operand);
  }

  /**
   * postfix = primary { "[" ( number [ ":" number ] | cond ) "]" }. A bare number (or a range of
   * two) is a bit slice, or a fixed element when the operand is an array; anything else is a
   * run-time index, which only an array takes (the checker decides, knowing the names).
   */
  private postfix(): Expr | undefined {
    let e = this.primary();
    while (e && this.atOp('[')) {
      const open = this.next();
      const after = this.tokens[this.pos + 1];
      if (this.at('number') && after.kind === 'op' && (after.text === ']' || after.text === ':')) {
        e = this.slice(e);
        continue;
      }
      if (!this.enter(open)) return undefined;
      const index = this.cond();
      this.nesting--;
      if (!index) return undefined;
      if (this.atOp(':')) {
        this.error(this.spanOf(index), 'a bit range takes two numbers, `[hi:lo]`; only a single index may be computed');
        return undefined;
      }
      const close = this.expectOp(']', 'to close the index');
      if (!close) return undefined;
      e = this.node({ kind: 'index', operand: e, index, span: cover(this.spanOf(e), close) }, e, index);
    }
    return e;
  }

  /** The rest of `x[hi:lo]` or `x[bit]` after the `[`. */
  private slice(e: Expr): Expr | undefined {
    const hi = this.index();
    if (!hi) return undefined;
    let lo = hi;
    if (this.atOp(':')) {
      this.next();
      const l = this.index();
      if (!l) return undefined;
      lo = l;
    }
    const close = this.expectOp(']', 'to close the bit range');
    if (!close) return undefined;
    return this.node({ kind: 'slice', operand: e, hi: hi.value, lo: lo.value, hiSpan: hi.span, loSpan: lo.span, span: cover(this.spanOf(e), close) }, e);
  }

  private index(): { value: number; span: Span } | undefined {
    if (!this.at('number')) {
      this.unexpected('a bit number');
      return undefined;
    }
    const t = this.next();
    return { value: Number(t.value!), span: { start: t.start, end: t.end } };
  }

  private enter(at: Span): boolean {
    if (this.nesting >= MAX_NESTING) {
      this.error(at, `brackets are nested more than ${MAX_NESTING} deep`);
      return false;
    }
    this.nesting++;
    return true;
  }

  /** primary = name | number | "(" cond ")" | "{" cond { "," cond } "}" | call | select */
  private primary(): Expr | undefined {
    const t = this.tok;
    if (t.kind === 'number') {
      this.next();
      return this.node(numberOf(t));
    }
    if (t.kind === 'name') {
      if (t.text === 'select') return this.select();
      if (this.tokens[this.pos + 1].kind === 'op' && this.tokens[this.pos + 1].text === '(') return this.call();
      this.next();
      return this.node({ kind: 'name', name: t.text, span: { start: t.start, end: t.end } });
    }
    if (t.kind === 'op' && t.text === '(') {
      this.next();
      if (!this.enter(t)) return undefined;
      const inner = this.cond();
      this.nesting--;
      if (!inner) return undefined;
      const close = this.expectOp(')', 'to close `(`');
      if (!close) return undefined;
      this.outer.set(inner, { start: t.start, end: close.end });
      return inner;
    }
    if (t.kind === 'op' && t.text === '{') {
      this.next();
      const list = this.list('}', () => this.cond());
      if (!list) return undefined;
      const span = { start: t.start, end: list.end };
      if (!list.ok) return placeholder(span);
      if (list.items.length === 0) {
        this.error(span, 'an empty concatenation `{}` has no bits; list at least one item');
        return undefined;
      }
      return this.node({ kind: 'concat', items: list.items, span }, ...list.items);
    }
    this.unexpected('a name, a number, `(`, `{`, `~` or `-`');
    return undefined;
  }

  /**
   * list(close, item) = [ item { "," item } [ "," ] ] close. After a broken item, skips to the
   * next comma or the closing bracket at this nesting and goes on; `ok` says whether every item
   * parsed. Undefined when the closing bracket is missing.
   */
  private list<T>(close: string, item: () => T | undefined): { items: T[]; end: number; ok: boolean } | undefined {
    const open = this.tokens[this.pos - 1];
    if (!this.enter(open)) return undefined;
    const items: T[] = [];
    let ok = true;
    try {
      if (this.atOp(close)) return { items, end: this.next().end, ok };
      for (;;) {
        const it = item();
        if (it !== undefined) items.push(it);
        else ok = false;
        if (it !== undefined && !this.atOp(',') && !this.atOp(close)) {
          this.unexpected(`\`,\` or \`${close}\``);
          ok = false;
        }
        if (!this.atOp(',') && !this.atOp(close)) this.skipTo(close);
        if (this.atOp(',')) {
          this.next();
          if (!this.atOp(close)) continue;
        }
        if (this.atOp(close)) {
          return { items, end: this.next().end, ok };
        }
        // Only the end of the text is left.
        this.error(this.tok, `expected \`${close}\` to close \`${open.text}\`, found the end of the expression`);
        return undefined;
      }
    } finally {
      this.nesting--;
    }
  }

  /** Skips to the next `,` or `close` outside nested brackets, or to the end. */
  private skipTo(close: string): void {
    const pairs: Record<string, string> = { '(': ')', '[': ']', '{': '}' };
    const stack: string[] = [];
    while (!this.at('eof')) {
      const t = this.tok;
      if (t.kind === 'op') {
        if (stack.length === 0 && (t.text === ',' || t.text === close)) return;
        if (pairs[t.text]) stack.push(pairs[t.text]);
        else if (stack.length && t.text === stack[stack.length - 1]) stack.pop();
        else if (stack.length === 0 && (t.text === ')' || t.text === ']' || t.text === '}')) return;
      }
      this.next();
    }
  }

  /** call = ("rep" | "sext" | "zext" | "carry" | "borrow") "(" cond { "," cond } ")" */
  private call(): Expr | undefined {
    const nameTok = this.next();
    this.next();
    const fn = nameTok.text;
    if (!(FUNCTIONS as readonly string[]).includes(fn)) {
      this.error(nameTok, `\`${fn}\` is not a function; the functions are ${FUNCTIONS.join(', ')}`);
      return undefined;
    }
    const list = this.list(')', () => this.cond());
    if (!list) return undefined;
    const args = list.items;
    const span = { start: nameTok.start, end: list.end };
    if (!list.ok) return placeholder(span);
    if (fn === 'carry' || fn === 'borrow') {
      if (args.length !== 2 && args.length !== 3) {
        this.error(span, `\`${fn}\` takes two operands and an optional ${fn}-in: ${fn}(a, b) or ${fn}(a, b, ${fn === 'carry' ? 'cin' : 'bin'})`);
        return undefined;
      }
      return this.node({ kind: fn, left: args[0], right: args[1], carryIn: args[2], span }, ...args);
    }
    const what = fn === 'rep' ? 'count' : 'width';
    if (args.length !== 2) {
      this.error(span, `\`${fn}\` takes a value and a ${what}: ${fn}(x, ${fn === 'rep' ? 8 : 32})`);
      return undefined;
    }
    const n = args[1];
    if (n.kind !== 'number') {
      this.error(this.spanOf(n), `the ${what} of \`${fn}\` must be a number`);
      return undefined;
    }
    const amount = Number(n.value);
    if (fn === 'rep') return this.node({ kind: 'rep', operand: args[0], count: amount, countSpan: n.span, span }, args[0]);
    return this.node({ kind: 'extend', signed: fn === 'sext', operand: args[0], width: amount, widthSpan: n.span, span }, args[0]);
  }

  /** select = "select" unary "{" arm { "," arm } [ "," ] "}";  arm = (name | number | "else") ":" cond */
  private select(): Expr | undefined {
    const keyword = this.next();
    const selector = this.unary();
    if (!selector) return undefined;
    const head = cover(keyword, this.spanOf(selector));
    if (!this.expectOp('{', 'and the arms after the selector, e.g. `{ add: a + b, else: a }`')) return undefined;
    let otherwise: Expr | undefined;
    let otherwiseAt: Span | undefined;
    const list = this.list('}', () => {
      const k = this.tok;
      if (k.kind !== 'name' && k.kind !== 'number') {
        this.unexpected('a value name, a number or `else` before `:`');
        return undefined;
      }
      this.next();
      if (!this.expectOp(':', `after \`${k.text}\``)) return undefined;
      const value = this.cond();
      if (!value) return undefined;
      const armSpan = cover(k, this.spanOf(value));
      if (k.kind === 'name' && k.text === 'else') {
        if (otherwiseAt) {
          this.error(k, 'a select has one `else` arm only');
          return undefined;
        }
        otherwise = value;
        otherwiseAt = armSpan;
        return null;
      }
      const key: NameExpr | NumberExpr = k.kind === 'name' ? { kind: 'name', name: k.text, span: { start: k.start, end: k.end } } : numberOf(k);
      return { key, value, span: armSpan } satisfies SelectArm;
    });
    if (!list) return undefined;
    const arms = list.items.filter((a): a is SelectArm => a !== null);
    const span = { start: keyword.start, end: list.end };
    if (!list.ok) return placeholder(span);
    if (arms.length === 0) {
      this.error(span, 'a select needs at least one keyed arm');
      return undefined;
    }
    const node: SelectExpr = { kind: 'select', selector, arms, otherwise, head, span };
    return this.node(node, selector, ...arms.map((a) => a.value), ...(otherwise ? [otherwise] : []));
  }
}

/**
 * Stands for a bracketed construct with a broken item, so parsing goes on after it and reports
 * later problems too. It never leaves the parser: a text with a syntax problem returns no tree.
 */
function placeholder(span: Span): Expr {
  return { kind: 'name', name: '', span };
}

function numberOf(t: Token): NumberExpr {
  const n: NumberExpr = { kind: 'number', value: t.value!, radix: t.radix!, span: { start: t.start, end: t.end } };
  if (t.width !== undefined) n.width = t.width;
  return n;
}
