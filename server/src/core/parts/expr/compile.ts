// Compiles expressions to one JavaScript function (new Function). Values of up to 32 bits are
// JS numbers kept unsigned (`>>> 0`), wider ones BigInt, so the common narrow datapath never
// allocates. evaluate.ts is the definition; a property test holds the two equal on random trees.
// Operands are evaluated left to right and only the chosen arm of `?:` and `select` runs, as in
// the evaluator, so an uncovered-select callback fires at the same moments in both, and array
// elements are read through the caller's `element` in the same order (index first, then the read).
import type { Expr, IndexExpr, SelectExpr } from './ast';
import { resolveForRun, type NameInfo, type Resolution } from './check';
import { needsElementReader, type RunOptions } from './evaluate';
import { formatExpression } from './format';

export type CompiledExpressions = (inputs: ArrayLike<number | bigint>) => (number | bigint)[];

const isWide = (width: number) => width > 32;
const bigMask = (width: number) => `0x${((1n << BigInt(width)) - 1n).toString(16)}n`;

/** `code` (a number expression) reduced to `width` <= 32 bits, unsigned. */
function wrap(code: string, width: number): string {
  return width === 32 ? `((${code}) >>> 0)` : `((${code}) & ${2 ** width - 1})`;
}

/** A narrow unsigned value read as a signed 32-bit number. */
function signed32(code: string, width: number): string {
  return width === 32 ? `(${code} | 0)` : `((${code} << ${32 - width}) >> ${32 - width})`;
}

const toBig = (code: string, width: number) => (isWide(width) ? code : `BigInt(${code})`);

/** Two index expressions that read the same place (same text, so same names and widths in one scope). */
const sameExpr = (a: Expr, b: Expr) => formatExpression(a) === formatExpression(b);

/**
 * How expressions inlined into a caller's generated code (expressionSource) reach their names:
 * the caller's code for each scalar name (unsigned, within its width), element reads, names whose
 * code is fixed while compiling (a control's code in this step, a choice setting; a `select` on
 * one keeps only its arm), and a prefix keeping temporaries apart from the caller's locals.
 */
export interface InlineBinding {
  prefix: string;
  name(name: string): string;
  known(name: string): number | undefined;
  /** Code reading element `index` (code of a number) of an array, unsigned within `width`. */
  element(array: string, index: string, width: number): string;
  /** Code reading `count` bytes of the byte memory little-endian at `address` (code), unsigned; undefined: byte by byte. */
  memoryRun?(array: string, address: string, count: 2 | 4): string | undefined;
}

class Generator {
  readonly temps: string[] = [];
  readonly selects: SelectExpr[] = [];
  readonly outOfRange: IndexExpr[] = [];
  /** One reader per array read, `rd0`, `rd1`, ...: its element width fixes how it masks. */
  readonly readers = new Map<string, { code: string; width: number }>();
  r!: Resolution;

  constructor(
    private readonly slot: (name: string) => string,
    private readonly reportUncovered: boolean,
    private readonly reportOutOfRange: boolean,
    /** Inlining into a caller's code (expressionSource): how elements are read, fixed names, temporaries' prefix. */
    private readonly inline?: InlineBinding,
  ) {}

  private reader(array: string, width: number): string {
    let reader = this.readers.get(array);
    if (!reader) this.readers.set(array, (reader = { code: `rd${this.readers.size}`, width }));
    return reader.code;
  }

  private temp(wide: boolean): string {
    const name = `${this.inline?.prefix ?? ''}t${this.temps.length}`;
    this.temps.push(`${name} = ${wide ? '0n' : '0'}`);
    return name;
  }

  private width(e: Expr): number {
    return this.r.widths.get(e)!;
  }

  gen(e: Expr): string {
    const w = this.width(e);
    const wide = isWide(w);
    switch (e.kind) {
      case 'name': {
        const known = this.inline?.known(e.name);
        if (known !== undefined) return wide ? `${known}n` : `${known}`;
        return this.slot(e.name);
      }
      case 'number':
        return wide ? `${e.value}n` : `${e.value}`;
      case 'slice': {
        const read = this.r.reads.get(e);
        if (read && this.inline) return this.inline.element(read.array, `${e.lo}`, w);
        if (read) return `${this.reader(read.array, w)}(${e.lo})`;
        const ow = this.width(e.operand);
        const o = this.gen(e.operand);
        if (!isWide(ow)) return w === 32 ? o : `((${o} >>> ${e.lo}) & ${2 ** w - 1})`;
        const big = `((${o} >> ${e.lo}n) & ${bigMask(w)})`;
        return wide ? big : `Number(${big})`;
      }
      case 'index':
        return this.element(e, w);
      case 'concat': {
        const run = this.inline && !wide ? this.memoryRun(e) : undefined;
        if (run) return run;
        let shift = w;
        const parts = e.items.map((item) => {
          const iw = this.width(item);
          shift -= iw;
          const code = this.gen(item);
          if (wide) return shift ? `(${toBig(code, iw)} << ${shift}n)` : toBig(code, iw);
          return shift ? `(${code} << ${shift})` : code;
        });
        return wide ? `(${parts.join(' | ')})` : `((${parts.join(' | ')}) >>> 0)`;
      }
      case 'rep': {
        // Copies side by side are the value times 1 + 2^ow + 2^2ow + ... (exact: below 2^32 when narrow).
        const ow = this.width(e.operand);
        let k = 0n;
        for (let i = 0; i < e.count; i++) k = (k << BigInt(ow)) | 1n;
        const o = this.gen(e.operand);
        return wide ? `(${toBig(o, ow)} * ${k}n)` : `(${o} * ${k})`;
      }
      case 'extend': {
        const ow = this.width(e.operand);
        const o = this.gen(e.operand);
        if (!e.signed) return wide && !isWide(ow) ? `BigInt(${o})` : o;
        if (!wide) return wrap(signed32(o, ow), w);
        return isWide(ow) ? `BigInt.asUintN(${w}, BigInt.asIntN(${ow}, ${o}))` : `BigInt.asUintN(${w}, BigInt(${signed32(o, ow)}))`;
      }
      case 'carry':
      case 'borrow': {
        const ow = this.width(e.left);
        const l = this.gen(e.left);
        const r = this.gen(e.right);
        const cin = e.carryIn ? this.gen(e.carryIn) : undefined;
        const plusIn = cin === undefined ? '' : ` + ${isWide(ow) ? toBig(cin, 1) : cin}`;
        if (e.kind === 'carry') return isWide(ow) ? `Number((${l} + ${r}${plusIn}) >> ${ow}n)` : `((${l} + ${r}${plusIn}) > ${2 ** ow - 1} ? 1 : 0)`;
        // Operands in order: a, then b and the borrow-in.
        return `(${l} < ${r}${plusIn} ? 1 : 0)`;
      }
      case 'unary': {
        const o = this.gen(e.operand);
        const code = e.op === '~' ? `~${o}` : `-(${o})`;
        return wide ? `((${code}) & ${bigMask(w)})` : wrap(code, w);
      }
      case 'binary':
        return this.binary(e, w);
      case 'cond':
        return `(${this.gen(e.cond)} ? ${this.gen(e.then)} : ${this.gen(e.otherwise)})`;
      case 'select': {
        // A selector fixed while compiling (a control's code in this step) leaves only its arm.
        const fixed = e.selector.kind === 'name' ? this.inline?.known(e.selector.name) : undefined;
        if (fixed !== undefined) {
          const arm = e.arms.find((a) => this.r.codes.get(a) === BigInt(fixed));
          if (arm) return this.gen(arm.value);
          if (e.otherwise) return this.gen(e.otherwise);
        }
        const sw = this.width(e.selector);
        const s = this.temp(isWide(sw));
        const lit = (code: bigint) => (isWide(sw) ? `${code}n` : `${code}`);
        let fallback: string;
        if (e.otherwise) fallback = this.gen(e.otherwise);
        else if (this.reportUncovered) {
          this.selects.push(e);
          fallback = `(uncovered(${this.selects.length - 1}, ${s}), ${wide ? '0n' : '0'})`;
        } else fallback = wide ? '0n' : '0';
        const chain = e.arms.reduceRight((rest, arm) => `${s} === ${lit(this.r.codes.get(arm)!)} ? ${this.gen(arm.value)} : ${rest}`, fallback);
        return `(${s} = ${this.gen(e.selector)}, ${chain})`;
      }
    }
  }

  /** A computed element read: the index first; past a register array's last element, 0 (and the caller told). */
  private element(e: IndexExpr, w: number): string {
    const read = this.r.reads.get(e)!;
    const index = this.gen(e.index);
    const inline = this.inline;
    const rd = inline ? '' : this.reader(read.array, w);
    const readAt = (at: string) => (inline ? inline.element(read.array, at, w) : `${rd}(${at})`);
    // A memory index is 32 bits, so a number.
    if (read.elements === 'memory') return readAt(index);
    const indexWidth = this.width(e.index);
    const wideIndex = isWide(indexWidth);
    // An index too narrow to pass the last element needs no bounds test (a register file's 5-bit selects).
    if (inline && !wideIndex && 2 ** indexWidth <= read.elements) return readAt(index);
    const t = this.temp(wideIndex);
    const zero = isWide(w) ? '0n' : '0';
    let past = zero;
    if (this.reportOutOfRange) {
      this.outOfRange.push(e);
      past = `(outOfRange(${this.outOfRange.length - 1}, ${t}), ${zero})`;
    }
    return `(${t} = ${index}, ${t} < ${read.elements}${wideIndex ? 'n' : ''} ? ${readAt(wideIndex ? `Number(${t})` : t)} : ${past})`;
  }

  /**
   * `{m[x + 3], m[x + 2], m[x + 1], m[x]}` (or the two-byte form) on the byte memory: a
   * little-endian word or halfword read at x, which the caller may read in one access. Any
   * other concatenation is left to the general code.
   */
  private memoryRun(e: Extract<Expr, { kind: 'concat' }>): string | undefined {
    const n = e.items.length;
    if ((n !== 2 && n !== 4) || !this.inline?.memoryRun) return undefined;
    let array: string | undefined;
    let base: Expr | undefined;
    for (let k = 0; k < n; k++) {
      const item = e.items[k];
      if (item.kind !== 'index') return undefined;
      const read = this.r.reads.get(item);
      if (!read || read.elements !== 'memory' || (array !== undefined && read.array !== array)) return undefined;
      array = read.array;
      const offset = n - 1 - k;
      const at = item.index;
      const x = offset === 0 ? at : at.kind === 'binary' && at.op === '+' && at.right.kind === 'number' && at.right.value === BigInt(offset) ? at.left : undefined;
      if (!x || (base !== undefined && !sameExpr(x, base))) return undefined;
      base = x;
    }
    // The widths of every index are 32 (a memory index), so x + k wraps as the bytes' addresses do.
    return this.inline.memoryRun(array!, this.gen(base!), n);
  }

  private binary(e: Extract<Expr, { kind: 'binary' }>, w: number): string {
    const ow = this.width(e.left);
    const wideOperands = isWide(ow);
    const l = this.gen(e.left);
    const r = this.gen(e.right);
    const bit = (cond: string) => `(${cond} ? 1 : 0)`;
    const sl = () => (wideOperands ? `BigInt.asIntN(${ow}, ${l})` : signed32(l, ow));
    const sr = () => (wideOperands ? `BigInt.asIntN(${ow}, ${r})` : signed32(r, ow));
    switch (e.op) {
      case '+':
      case '-':
        return wideOperands ? `((${l} ${e.op} ${r}) & ${bigMask(w)})` : wrap(`${l} ${e.op} ${r}`, w);
      case '&':
      case '|':
      case '^':
        return wideOperands || w < 32 ? `(${l} ${e.op} ${r})` : `((${l} ${e.op} ${r}) >>> 0)`;
      case '==': return bit(`${l} === ${r}`);
      case '!=': return bit(`${l} !== ${r}`);
      case '<':
      case '<=':
      case '>':
      case '>=':
        return bit(`${l} ${e.op} ${r}`);
      case '<s':
      case '<=s':
      case '>s':
      case '>=s':
        return bit(`${sl()} ${e.op.slice(0, -1)} ${sr()}`);
      case '<<':
      case '>>':
      case '>>>':
        return this.shift(e.op, l, r, w, this.width(e.right));
    }
  }

  /** A shift; the value is taken before the amount (evaluation order), the amount clamped to the width. */
  private shift(op: '<<' | '>>' | '>>>', l: string, r: string, w: number, amountWidth: number): string {
    const wide = isWide(w);
    const value = this.temp(wide);
    const amount = this.temp(false);
    const a = isWide(amountWidth) ? this.clampBig(r, w) : r;
    const head = `${value} = ${l}, ${amount} = ${a}`;
    if (!wide) {
      if (op === '<<') return `(${head}, ${amount} >= ${w} ? 0 : ${wrap(`${value} << ${amount}`, w)})`;
      if (op === '>>') return `(${head}, ${amount} >= ${w} ? 0 : (${value} >>> ${amount}))`;
      return `(${head}, ${wrap(`${signed32(value, w)} >> (${amount} >= ${w} ? ${w - 1} : ${amount})`, w)})`;
    }
    if (op === '<<') return `(${head}, ${amount} >= ${w} ? 0n : ((${value} << BigInt(${amount})) & ${bigMask(w)}))`;
    if (op === '>>') return `(${head}, ${amount} >= ${w} ? 0n : (${value} >> BigInt(${amount})))`;
    return `(${head}, BigInt.asUintN(${w}, BigInt.asIntN(${w}, ${value}) >> BigInt(${amount} >= ${w} ? ${w - 1} : ${amount})))`;
  }

  /** A BigInt amount as a number no larger than `w` (every larger amount shifts the same). */
  private clampBig(r: string, w: number): string {
    const t = this.temp(true);
    return `(${t} = ${r}, ${t} >= ${w}n ? ${w} : Number(${t}))`;
  }
}

/** Reads input `k` of width `w` from the caller's array as the compiled code holds it. */
function readInput(k: number, w: number): string {
  const x = `inputs[${k}]`;
  if (isWide(w)) return `BigInt.asUintN(${w}, typeof ${x} === 'bigint' ? ${x} : BigInt(${x}))`;
  return wrap(`typeof ${x} === 'bigint' ? Number(BigInt.asUintN(${w}, ${x})) : ${x}`, w);
}

/** Reads an element through the caller's `element` and holds it as the compiled code does (as readInput). */
function elementReader(element: NonNullable<RunOptions['element']>, array: string, w: number): (index: number) => number | bigint {
  if (isWide(w)) {
    return (index) => {
      const v = element(array, index);
      return BigInt.asUintN(w, typeof v === 'bigint' ? v : BigInt(v));
    };
  }
  const m = 2 ** w - 1;
  return (index) => {
    const v = element(array, index);
    const n = typeof v === 'bigint' ? Number(BigInt.asUintN(w, v)) : v;
    return w === 32 ? n >>> 0 : n & m;
  };
}

/**
 * Compiles `list` into one function from the input values (in the order of `inputs`) to the
 * values of the list's expressions (in list order). An expression may read the inputs and the
 * expressions listed before it. `width`, when given, is the width the expression's place needs.
 * Results of up to 32 bits are numbers, wider ones BigInt. Arrays (`options.elements`) are not
 * inputs: their elements are read through `options.element` while the function runs. Throws when
 * an expression does not check (the caller should have shown the diagnostics), names something
 * neither listed nor an input nor an array, or reads an array without an `element` reader.
 */
export function compileExpressions(
  list: { name: string; expr: Expr; width?: number }[],
  inputs: string[],
  widthOf: (name: string) => number,
  options: RunOptions = {},
): CompiledExpressions {
  const slots = new Map<string, { code: string; width: number }>();
  const isArray = (name: string) => options.elements?.(name) !== undefined;
  inputs.forEach((name, k) => {
    if (slots.has(name)) throw new Error(`compileExpressions: input \`${name}\` is listed twice`);
    if (isArray(name)) throw new Error(`compileExpressions: \`${name}\` is an array: its elements are read through \`element\`, not passed as an input`);
    slots.set(name, { code: `i${k}`, width: widthOf(name) });
  });
  const gen = new Generator((name) => slots.get(name)!.code, options.onUncovered !== undefined, options.onOutOfRange !== undefined);
  const lines = inputs.map((name, k) => `const i${k} = ${readInput(k, slots.get(name)!.width)};`);
  list.forEach((entry, k) => {
    const scope = (name: string): NameInfo | undefined => {
      const elements = options.elements?.(name);
      if (elements !== undefined) return { width: widthOf(name), elements };
      const s = slots.get(name);
      if (!s) return undefined;
      const values = options.values?.(name);
      return values ? { width: s.width, values } : { width: s.width };
    };
    gen.r = resolveForRun(entry.expr, scope, entry.width);
    needsElementReader(gen.r, options);
    lines.push(`const o${k} = ${gen.gen(entry.expr)};`);
    if (slots.has(entry.name) || isArray(entry.name)) throw new Error(`compileExpressions: \`${entry.name}\` is defined twice (or is also an input or an array)`);
    slots.set(entry.name, { code: `o${k}`, width: gen.r.widths.get(entry.expr)! });
  });
  const readers = [...gen.readers].map(([array, r]) => elementReader(options.element!, array, r.width));
  const body = [
    '"use strict";',
    ...[...gen.readers.values()].map((r, k) => `const ${r.code} = readers[${k}];`),
    'return function compiledExpressions(inputs) {',
    ...(gen.temps.length ? [`let ${gen.temps.join(', ')};`] : []),
    ...lines,
    `return [${list.map((_, k) => `o${k}`).join(', ')}];`,
    '};',
  ].join('\n');
  const selects = gen.selects;
  const uncovered = (index: number, code: number | bigint) => options.onUncovered!(selects[index], BigInt(code));
  const reads = gen.outOfRange;
  const outOfRange = (index: number, at: number | bigint) => options.onOutOfRange!(reads[index], BigInt(at));
  return new Function('uncovered', 'outOfRange', 'readers', body)(uncovered, outOfRange, readers) as CompiledExpressions;
}

/**
 * The JavaScript source of `list`'s expressions for inlining into the caller's own generated code
 * (the simulator's compiled steps): one code string per expression, evaluating to its value
 * (a number up to 32 bits, unsigned; BigInt wider), and the temporaries the caller must declare
 * (`let`) before them. `scope` gives each name's width, values and elements as for checking.
 * Same meaning as compileExpressions (the property tests hold both to evaluate.ts); no
 * uncovered-select or out-of-range callbacks (an uncovered select gives 0, an element past a
 * register array's end reads 0). Throws when an expression does not check.
 */
export function expressionSource(list: { expr: Expr; width?: number }[], scope: (name: string) => NameInfo | undefined, bind: InlineBinding): { temps: string[]; codes: string[] } {
  const gen = new Generator((name) => bind.name(name), false, false, bind);
  const codes = list.map((entry) => {
    gen.r = resolveForRun(entry.expr, scope, entry.width);
    return gen.gen(entry.expr);
  });
  return { temps: gen.temps, codes };
}
