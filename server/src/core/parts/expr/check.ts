// Width inference and checking. Every node gets a width: names from the scope, hex and binary
// literals from their digits, operators from their operands; a decimal literal takes the width
// its context needs (the other operand of `+`, the expected width, ...). Problems are
// diagnostics with exact spans; nothing here throws on bad input. The same resolution (widths
// and the code behind every select key) is what the evaluator and the compiler run on, so the
// three can never disagree about a width.
import type { Diagnostic, RelatedInfo } from '../../text/diagnostic';
import type { Span } from '../../text/span';
import { closest } from '../../text/suggest';
import type { BinaryOp, Expr, IndexExpr, NumberExpr, SelectArm, SelectExpr, SliceExpr } from './ast';
import { formatExpression } from './format';

export interface NameInfo {
  /** The width of the value; for an array, of each element. */
  width: number;
  /** A control field's value names and their codes. */
  values?: ReadonlyMap<string, number>;
  /**
   * An array, read one element at a time (`r[i]`): a register array of this many elements, or
   * `memory`, the program's byte memory, whose index is a 32-bit byte address.
   */
  elements?: number | 'memory';
}

/** What an element read reads: its array's name and size. */
export interface ElementRead {
  array: string;
  elements: number | 'memory';
}

/**
 * The width of a memory index: a byte address. RV32I has an address space of 2^XLEN bytes with
 * XLEN = 32 (RISC-V Unprivileged ISA 20191213, 1.4 "Memory"; section number from memory).
 */
export const ADDRESS_WIDTH = 32;

/** The bits that number `n` things (at least 1): control codes, and the width an index of decimals only takes. */
export const bitsFor = (n: number) => Math.max(1, Math.ceil(Math.log2(Math.max(2, n))));

/**
 * Looks a name up. A scope may also list its names (`names`), which lets the checker suggest the
 * closest one for a misspelt name; `scopeOf` builds such a scope from a map.
 */
export type Scope = ((name: string) => NameInfo | undefined) & { readonly names?: () => Iterable<string> };

export function scopeOf(entries: ReadonlyMap<string, NameInfo>): Scope {
  return Object.assign((name: string) => entries.get(name), { names: () => entries.keys() });
}

/** The widest vector an expression may build (a guard against `rep(x, 1000000)`, not a hardware limit). */
export const MAX_WIDTH = 4096;

export interface Resolution {
  /** The width of every node whose width could be inferred. */
  widths: Map<Expr, number>;
  /** The code each select arm's key stands for. */
  codes: Map<SelectArm, bigint>;
  /** Every element read (`r[i]`, and `r[3]` on an array) with the array it reads. */
  reads: Map<SliceExpr | IndexExpr, ElementRead>;
  diagnostics: Diagnostic[];
}

const ARITH: ReadonlySet<BinaryOp> = new Set(['+', '-', '&', '|', '^']);
const SHIFT: ReadonlySet<BinaryOp> = new Set(['<<', '>>', '>>>']);

/**
 * Whether `expr` has no width of its own and takes its context's: decimal literals, and
 * operators whose width comes from such operands only (`-1`, `3 + 4`, `c ? 0 : 1`).
 */
function takesContextWidth(e: Expr): boolean {
  switch (e.kind) {
    case 'number':
      return e.radix === 10;
    case 'unary':
      return takesContextWidth(e.operand);
    case 'binary':
      if (ARITH.has(e.op)) return takesContextWidth(e.left) && takesContextWidth(e.right);
      return SHIFT.has(e.op) && takesContextWidth(e.left);
    case 'cond':
      return takesContextWidth(e.then) && takesContextWidth(e.otherwise);
    case 'select':
      return e.arms.every((a) => takesContextWidth(a.value)) && (!e.otherwise || takesContextWidth(e.otherwise));
    default:
      return false;
  }
}

/** Quoted text of an expression for a message, or "this expression" when it is long. */
function shown(e: Expr): string {
  const text = formatExpression(e);
  return text.length <= 32 ? `\`${text}\`` : 'this expression';
}

const bitLength = (v: bigint) => (v === 0n ? 1 : v.toString(2).length);

/**
 * What a context asks of a sub-expression's width: a number, NONE (the context gives no width)
 * or UNKNOWN (it would, but an earlier error left it unknown: stay quiet rather than pile on).
 */
const NONE = undefined;
const UNKNOWN = null;
type Want = number | typeof NONE | typeof UNKNOWN;

class Checker {
  readonly widths = new Map<Expr, number>();
  readonly codes = new Map<SelectArm, bigint>();
  readonly reads = new Map<SliceExpr | IndexExpr, ElementRead>();
  readonly diagnostics: Diagnostic[] = [];

  constructor(private readonly scope: Scope) {}

  report(code: string, span: Span, message: string, related?: RelatedInfo[], replacement?: string): void {
    const d: Diagnostic = { code, severity: 'error', span: { start: span.start, end: span.end }, message };
    if (related) d.related = related;
    if (replacement !== undefined) d.fixes = [{ title: `Replace with \`${replacement}\``, edits: [{ span: d.span, newText: replacement }], preferred: true }];
    this.diagnostics.push(d);
  }

  /** Checks `e` where its context wants `want` bits, reporting a mismatch with `why` (what fixed the width). */
  expect(e: Expr, want: Want, why: string): number | undefined {
    const got = this.width(e, want);
    if (typeof want === 'number' && got !== undefined && got !== want) {
      this.report('expr-width', e.span, `${shown(e)} is ${got} bits wide, but ${want} bits are needed here (${why}); make the widths equal, e.g. with a slice, zext or sext`);
    }
    return got;
  }

  /** Operands that must share one width: the first with a width of its own sets it, else the context does. */
  same(operands: Expr[], want: Want, role: string): number | undefined {
    const leader = operands.find((o) => !takesContextWidth(o));
    const w: Want = leader ? (this.width(leader, NONE) ?? UNKNOWN) : want;
    const why = leader ? `the width of ${shown(leader)}, ${role}` : 'the width the context gives';
    for (const o of operands) if (o !== leader) this.expect(o, w, why);
    return typeof w === 'number' ? w : undefined;
  }

  /** The width of `e` (recorded for every node), or undefined after an error. */
  width(e: Expr, want: Want): number | undefined {
    const w = this.infer(e, want);
    if (w !== undefined) {
      if (w > MAX_WIDTH) {
        this.report('expr-width', e.span, `${shown(e)} would be ${w} bits wide, more than the ${MAX_WIDTH} an expression may have`);
        return undefined;
      }
      this.widths.set(e, w);
    }
    return w;
  }

  private infer(e: Expr, want: Want): number | undefined {
    switch (e.kind) {
      case 'name': {
        const info = this.scope(e.name);
        if (info?.elements !== undefined) {
          const what = info.elements === 'memory' ? 'the byte memory' : `an array of ${info.elements} elements of ${info.width} bit${info.width === 1 ? '' : 's'}`;
          const example = info.elements === 'memory' ? `\`${e.name}[addr]\`` : `\`${e.name}[i]\``;
          this.report('expr-width', e.span, `\`${e.name}\` is ${what}, not one value: read one element with an index, e.g. ${example}`);
          return undefined;
        }
        if (info) return info.width;
        const suggestion = this.scope.names ? closest(e.name, this.scope.names()) : undefined;
        this.report('expr-name', e.span, `\`${e.name}\` is not a known signal, port or field${suggestion ? `; did you mean \`${suggestion}\`?` : ''}`, undefined, suggestion);
        return undefined;
      }
      case 'number':
        return this.number(e, want);
      case 'slice': {
        const array = this.arrayOf(e.operand);
        if (array) return this.fixedElement(e, array);
        const w = this.width(e.operand, NONE);
        if (w === undefined) return undefined;
        const range = `${shown(e.operand)}, which has ${w} bit${w === 1 ? '' : 's'} (${w - 1}..0)`;
        if (e.hi >= w) {
          this.report('expr-slice', e.hiSpan, `bit ${e.hi} is outside ${range}`);
          return undefined;
        }
        if (e.lo > e.hi) {
          this.report('expr-slice', { start: e.hiSpan.start, end: e.loSpan.end }, `the high bit comes first: write [${e.lo}:${e.hi}], not [${e.hi}:${e.lo}]`);
          return undefined;
        }
        return e.hi - e.lo + 1;
      }
      case 'index': {
        const array = this.arrayOf(e.operand);
        if (!array) {
          const w = this.width(e.operand, NONE);
          if (w !== undefined) this.report('expr-slice', e.index.span, `${shown(e.operand)} is not an array: only register arrays and the memory take a computed index; a bit is chosen by a number, e.g. \`[0]\``);
          return undefined;
        }
        if (!this.elementIndex(e.index, array)) return undefined;
        this.reads.set(e, array);
        return this.elementWidth(e.operand);
      }
      case 'concat': {
        let total = 0;
        let known = true;
        for (const item of e.items) {
          const w = this.width(item, NONE);
          if (w === undefined) known = false;
          else total += w;
        }
        return known ? total : undefined;
      }
      case 'rep': {
        const w = this.width(e.operand, NONE);
        if (e.count < 1) {
          this.report('expr-width', e.countSpan, `rep needs a count of at least 1; ${e.count} copies have no bits`);
          return undefined;
        }
        return w === undefined ? undefined : w * e.count;
      }
      case 'extend': {
        const w = this.width(e.operand, NONE);
        if (w === undefined) return undefined;
        if (e.width < w) {
          const fn = e.signed ? 'sext' : 'zext';
          this.report('expr-width', e.widthSpan, `${fn} cannot shrink: ${shown(e.operand)} already has ${w} bits, more than ${e.width}; take a slice [${e.width - 1}:0] to keep fewer`);
          return undefined;
        }
        return e.width;
      }
      case 'carry':
      case 'borrow': {
        this.same([e.left, e.right], NONE, `the other operand of ${e.kind}`);
        if (e.carryIn) this.expect(e.carryIn, 1, `a ${e.kind}-in is one bit`);
        return 1;
      }
      case 'unary':
        return this.width(e.operand, want);
      case 'binary':
        if (ARITH.has(e.op)) return this.same([e.left, e.right], want, `the other operand of ${e.op}`);
        if (SHIFT.has(e.op)) {
          const w = this.width(e.left, want);
          this.shiftAmount(e.right);
          return w;
        }
        this.same([e.left, e.right], NONE, `the other operand of ${e.op}`);
        return 1;
      case 'cond':
        this.expect(e.cond, 1, 'a condition is one bit');
        return this.same([e.then, e.otherwise], want, 'the other choice of ?:');
      case 'select':
        return this.select(e, want);
    }
  }

  /** The array `e` names, when it is the name of one. */
  private arrayOf(e: Expr): ElementRead | undefined {
    if (e.kind !== 'name') return undefined;
    const elements = this.scope(e.name)?.elements;
    return elements === undefined ? undefined : { array: e.name, elements };
  }

  /** The element width of the array `operand` names (recorded as the name's width). */
  private elementWidth(operand: Expr): number {
    const w = this.scope((operand as { name: string }).name)!.width;
    this.widths.set(operand, w);
    return w;
  }

  /** `r[3]` on an array: element 3, which it must have; a bit range is not an element. */
  private fixedElement(e: SliceExpr, array: ElementRead): number | undefined {
    if (e.hi !== e.lo) {
      this.report('expr-slice', { start: e.hiSpan.start, end: e.loSpan.end }, `an array element is read with one index: \`${array.array}[${e.hi}]\` is element ${e.hi}; slice the element after it, e.g. \`${array.array}[${e.lo}][${e.hi}:${e.lo}]\`, if you meant its bits`);
      return undefined;
    }
    if (!this.inRange(e.hi, e.hiSpan, array)) return undefined;
    this.reads.set(e, array);
    return this.elementWidth(e.operand);
  }

  private inRange(index: number | bigint, span: Span, array: ElementRead): boolean {
    if (array.elements === 'memory' ? BigInt(index) < 1n << BigInt(ADDRESS_WIDTH) : BigInt(index) < BigInt(array.elements)) return true;
    const has = array.elements === 'memory' ? `the memory \`${array.array}\`, whose byte addresses are ${ADDRESS_WIDTH} bits` : `\`${array.array}\`, which has ${array.elements} element${array.elements === 1 ? '' : 's'} (${array.elements - 1}..0)`;
    this.report('expr-slice', span, `element ${index} is outside ${has}`);
    return false;
  }

  /**
   * An index into `array`: into the memory a 32-bit byte address; into a register array any
   * width (an element past the last reads 0, and the caller is told), where an index of decimals
   * only takes the bits that number the elements. A constant index must name an element.
   */
  elementIndex(index: Expr, array: ElementRead): boolean {
    if (index.kind === 'number' && !this.inRange(index.value, index.span, array)) return false;
    if (array.elements === 'memory') return this.expect(index, ADDRESS_WIDTH, `a memory index is a ${ADDRESS_WIDTH}-bit byte address`) === ADDRESS_WIDTH;
    const n = array.elements;
    return this.width(index, takesContextWidth(index) ? bitsFor(n) : NONE) !== undefined;
  }

  private number(e: NumberExpr, want: Want): number | undefined {
    if (e.width !== undefined) return e.width;
    if (want === UNKNOWN) return undefined;
    if (want === NONE) {
      this.report('expr-width', e.span, `\`${e.value}\` has no width here: nothing around it gives one; write it in hex or binary (e.g. 0b${e.value.toString(2)}), whose digits give the width`);
      return undefined;
    }
    if (e.value >= 1n << BigInt(want)) {
      this.report('expr-value', e.span, `\`${e.value}\` does not fit in ${want} bit${want === 1 ? '' : 's'} (at most ${(1n << BigInt(want)) - 1n})`);
      return undefined;
    }
    return want;
  }

  /** A shift amount may have any width; a bare decimal amount is a constant with the bits it needs. */
  private shiftAmount(amount: Expr): void {
    if (amount.kind === 'number' && amount.radix === 10) this.widths.set(amount, bitLength(amount.value));
    else this.width(amount, NONE);
  }

  private select(e: SelectExpr, want: Want): number | undefined {
    const selectorWidth = this.width(e.selector, NONE);
    const field = e.selector.kind === 'name' ? this.scope(e.selector.name)?.values : undefined;
    const selectorName = shown(e.selector);
    const seen = new Map<bigint, SelectArm>();
    let allKeysKnown = true;
    for (const arm of e.arms) {
      const code = this.armCode(arm, field, selectorName, selectorWidth);
      if (code === undefined) {
        allKeysKnown = false;
        continue;
      }
      const first = seen.get(code);
      if (first) {
        this.report('expr-value', arm.key.span, `${keyText(arm)} is listed twice in this select (code ${code}); the second arm would never be chosen`, [{ span: first.key.span, message: 'first listed here' }]);
        continue;
      }
      seen.set(code, arm);
      this.codes.set(arm, code);
    }
    // A misspelt key usually stands for the value that then looks missing: report it once.
    if (field && !e.otherwise && allKeysKnown) {
      const missing = [...field].filter(([, code]) => !seen.has(BigInt(code))).map(([name]) => name);
      if (missing.length) {
        this.report('expr-value', e.head, `\`select ${formatExpression(e.selector)}\` has no arm for ${missing.join(', ')} and no \`else\`; add ${missing.length === 1 ? 'the arm' : 'the arms'} or an \`else\` arm`);
      }
    }
    const values = [...e.arms.map((a) => a.value), ...(e.otherwise ? [e.otherwise] : [])];
    return this.same(values, want, 'another arm of the select');
  }

  private armCode(arm: SelectArm, field: ReadonlyMap<string, number> | undefined, selector: string, selectorWidth: number | undefined): bigint | undefined {
    const key = arm.key;
    if (field) {
      if (key.kind === 'number') {
        this.report('expr-value', key.span, `${selector} is a field with named values; key its arms by name (${[...field.keys()].join(', ')})`);
        return undefined;
      }
      const code = field.get(key.name);
      if (code === undefined) {
        const suggestion = closest(key.name, field.keys());
        const hint = suggestion ? `; did you mean \`${suggestion}\`?` : '';
        this.report('expr-value', key.span, `${selector} has no value \`${key.name}\`; its values are ${[...field.keys()].join(', ')}${hint}`, undefined, suggestion);
        return undefined;
      }
      return BigInt(code);
    }
    if (key.kind === 'name') {
      this.report('expr-value', key.span, `${selector} has no value names; key its arms by number (or give the selector a field with named values)`);
      return undefined;
    }
    if (selectorWidth !== undefined && key.value >= 1n << BigInt(selectorWidth)) {
      this.report('expr-value', key.span, `\`${formatExpression(key)}\` does not fit the ${selectorWidth}-bit selector ${selector} (at most ${(1n << BigInt(selectorWidth)) - 1n}); this arm would never be chosen`);
      return undefined;
    }
    return key.value;
  }
}

function keyText(arm: SelectArm): string {
  return `\`${formatExpression(arm.key)}\``;
}

/** Infers every node's width and every select key's code, with the problems found. */
export function resolveExpression(expr: Expr, scope: Scope, expectedWidth?: number): Resolution {
  const checker = new Checker(scope);
  checker.expect(expr, expectedWidth, 'the width expected where the expression is used');
  return resolution(checker);
}

function resolution(checker: Checker): Resolution {
  const diagnostics = checker.diagnostics.sort((a, b) => a.span.start - b.span.start || a.span.end - b.span.end);
  return { widths: checker.widths, codes: checker.codes, reads: checker.reads, diagnostics };
}

/**
 * Checks `index` where it chooses an element of the array `array` (an edge assignment's target
 * `r[ir[11:7]] <= in`): the rules of an index inside an expression, `r[...]`.
 */
export function checkElementIndex(index: Expr, scope: Scope, array: string): { width?: number; diagnostics: Diagnostic[] } {
  const checker = new Checker(scope);
  const elements = scope(array)?.elements;
  if (elements === undefined) throw new Error(`checkElementIndex: \`${array}\` is not an array of the scope`);
  checker.elementIndex(index, { array, elements });
  const r = resolution(checker);
  const width = r.widths.get(index);
  return width === undefined ? { diagnostics: r.diagnostics } : { width, diagnostics: r.diagnostics };
}

/**
 * Width inference and checking. Codes: expr-width (widths disagree or none can be inferred, an
 * array used without an index), expr-slice (a bit range outside the operand or reversed, an
 * element an array does not have, a computed index on something not an array), expr-name (an unknown name),
 * expr-value (a select key the selector does not have, a missing arm, a literal too large).
 * `width` is the expression's width whenever it could be inferred, even beside other problems.
 */
export function checkExpression(expr: Expr, scope: Scope, expectedWidth?: number): { width?: number; diagnostics: Diagnostic[] } {
  const r = resolveExpression(expr, scope, expectedWidth);
  const width = r.widths.get(expr);
  return width === undefined ? { diagnostics: r.diagnostics } : { width, diagnostics: r.diagnostics };
}

/**
 * The resolution of an expression about to be run. Running an expression that does not check
 * is the caller's bug (it should have shown the diagnostics), so this throws.
 */
export function resolveForRun(expr: Expr, scope: Scope, expectedWidth?: number): Resolution {
  const r = resolveExpression(expr, scope, expectedWidth);
  if (r.diagnostics.length) throw new Error(`cannot run \`${formatExpression(expr)}\`: ${r.diagnostics[0].message} [${r.diagnostics[0].code}]`);
  return r;
}
