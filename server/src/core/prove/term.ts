// Symbolic terms over bit vectors: what the prover computes instead of numbers. Every term has a
// width; one-bit terms stand for conditions (1 true). Terms are hash-consed by a `Terms` factory
// (one object per distinct term), so two ways of computing the same thing are the same object and
// the smart constructors can fold what is known without a solver: constants, a slice of a
// concatenation, `x == x`, `x + 1 == x + 2`. The fetch relies on that: the word read from memory
// at pc folds back into the instruction term, so the address lines see its fixed bits as
// constants. Folding is an optimisation and a convenience, never a decision: the solver decides.
//
// Operators are SMT-LIB 2 QF_BV's (smtlib.ts prints them one to one); `evalTerm` is their meaning
// on numbers, used to read a counterexample back.

export type TermOp =
  | 'bvadd' | 'bvsub' | 'bvand' | 'bvor' | 'bvxor' | 'bvnot' | 'bvneg'
  | 'bvshl' | 'bvlshr' | 'bvashr'
  | 'eq' | 'bvult' | 'bvule' | 'bvslt' | 'bvsle'
  | 'ite' | 'concat' | 'extract' | 'sext' | 'zext';

export type Term =
  | { readonly k: 'const'; readonly w: number; readonly v: bigint; readonly id: number }
  | { readonly k: 'var'; readonly w: number; readonly name: string; readonly id: number }
  | { readonly k: 'op'; readonly w: number; readonly op: TermOp; readonly args: readonly Term[]; readonly hi?: number; readonly lo?: number; readonly id: number };

export type OpTerm = Extract<Term, { k: 'op' }>;

const mask = (v: bigint, w: number) => BigInt.asUintN(w, v);
const signedOf = (v: bigint, w: number) => BigInt.asIntN(w, v);

/** The hash-consing term factory of one proof: every term is built here. */
export class Terms {
  private readonly table = new Map<string, Term>();
  private next = 0;
  /** Variables by name, with their widths, in order of creation. */
  readonly vars = new Map<string, Term & { k: 'var' }>();

  private intern(key: string, make: (id: number) => Term): Term {
    const found = this.table.get(key);
    if (found) return found;
    const t = make(this.next++);
    this.table.set(key, t);
    return t;
  }

  const(w: number, v: bigint | number): Term {
    const value = mask(BigInt(v), w);
    return this.intern(`c${w}:${value}`, (id) => ({ k: 'const', w, v: value, id }));
  }

  /** The variable `name` (width fixed on first use; a second width is a bug). */
  variable(name: string, w: number): Term {
    const existing = this.vars.get(name);
    if (existing) {
      if (existing.w !== w) throw new Error(`prover variable ${name} used with widths ${existing.w} and ${w}`);
      return existing;
    }
    const t = this.intern(`v:${name}`, (id) => ({ k: 'var', w, name, id })) as Term & { k: 'var' };
    this.vars.set(name, t);
    return t;
  }

  private raw(op: TermOp, w: number, args: Term[], hi?: number, lo?: number): Term {
    const key = `${op}/${w}/${hi ?? ''}/${lo ?? ''}/${args.map((a) => a.id).join(',')}`;
    return this.intern(key, (id) => ({ k: 'op', w, op, args, id, ...(hi !== undefined && { hi }), ...(lo !== undefined && { lo }) }));
  }

  get true(): Term {
    return this.const(1, 1);
  }
  get false(): Term {
    return this.const(1, 0);
  }

  // ---- Arithmetic and logic.

  add(a: Term, b: Term): Term {
    same(a, b, 'bvadd');
    if (a.k === 'const' && b.k === 'const') return this.const(a.w, a.v + b.v);
    if (a.k === 'const') return this.add(b, a);
    if (b.k === 'const' && b.v === 0n) return a;
    // (x + c1) + c2 = x + (c1 + c2): keeps addresses like mar + 1 in one shape.
    if (b.k === 'const' && a.k === 'op' && a.op === 'bvadd' && a.args[1].k === 'const') return this.add(a.args[0], this.const(a.w, a.args[1].v + b.v));
    // {h, c1} + c2 = {h, c1 + c2} when the sum stays inside c1's bits (no carry into h): keeps
    // an aligned address plus 3 the same term as its byte address {a[31:2], 0b11}.
    if (b.k === 'const' && a.k === 'op' && a.op === 'concat') {
      const low = a.args[a.args.length - 1];
      if (low.k === 'const' && low.v + b.v < 1n << BigInt(low.w)) return this.concat([...a.args.slice(0, -1), this.const(low.w, low.v + b.v)]);
    }
    return this.raw('bvadd', a.w, [a, b]);
  }
  sub(a: Term, b: Term): Term {
    same(a, b, 'bvsub');
    if (b.k === 'const') return this.add(a, this.const(a.w, -b.v));
    if (a === b) return this.const(a.w, 0);
    return this.raw('bvsub', a.w, [a, b]);
  }
  neg(a: Term): Term {
    return a.k === 'const' ? this.const(a.w, -a.v) : this.raw('bvneg', a.w, [a]);
  }
  not(a: Term): Term {
    if (a.k === 'const') return this.const(a.w, ~a.v);
    if (a.k === 'op' && a.op === 'bvnot') return a.args[0];
    return this.raw('bvnot', a.w, [a]);
  }
  and(a: Term, b: Term): Term {
    same(a, b, 'bvand');
    if (a.k === 'const' && b.k === 'const') return this.const(a.w, a.v & b.v);
    if (a.k === 'const') return this.and(b, a);
    if (b.k === 'const' && b.v === 0n) return b;
    if (b.k === 'const' && b.v === mask(-1n, a.w)) return a;
    if (a === b) return a;
    return this.raw('bvand', a.w, [a, b]);
  }
  or(a: Term, b: Term): Term {
    same(a, b, 'bvor');
    if (a.k === 'const' && b.k === 'const') return this.const(a.w, a.v | b.v);
    if (a.k === 'const') return this.or(b, a);
    if (b.k === 'const' && b.v === 0n) return a;
    if (b.k === 'const' && b.v === mask(-1n, a.w)) return b;
    if (a === b) return a;
    return this.raw('bvor', a.w, [a, b]);
  }
  xor(a: Term, b: Term): Term {
    same(a, b, 'bvxor');
    if (a.k === 'const' && b.k === 'const') return this.const(a.w, a.v ^ b.v);
    if (a.k === 'const') return this.xor(b, a);
    if (b.k === 'const' && b.v === 0n) return a;
    if (a === b) return this.const(a.w, 0);
    return this.raw('bvxor', a.w, [a, b]);
  }
  /** Shifts by an amount of the same width (SMT-LIB's rule); an amount of the width or more gives 0 (or the sign for bvashr), as in evaluate.ts. */
  shift(op: 'bvshl' | 'bvlshr' | 'bvashr', a: Term, b: Term): Term {
    same(a, b, op);
    if (a.k === 'const' && b.k === 'const') return this.const(a.w, shiftValue(op, a.v, b.v, a.w));
    if (b.k === 'const' && b.v === 0n) return a;
    return this.raw(op, a.w, [a, b]);
  }

  // ---- Conditions (one bit).

  eq(a: Term, b: Term): Term {
    same(a, b, 'eq');
    if (a === b) return this.true;
    if (a.k === 'const' && b.k === 'const') return this.const(1, a.v === b.v ? 1 : 0);
    const [x, cx] = offsetOf(a);
    const [y, cy] = offsetOf(b);
    if (x === y) return this.const(1, cx === cy ? 1 : 0);
    // A concatenation against a term: piece by piece, two different constants in one place differ.
    const cat = a.k === 'op' && a.op === 'concat' ? a : b.k === 'op' && b.op === 'concat' ? b : undefined;
    if (cat) {
      const other = cat === a ? b : a;
      let top = cat.w;
      let same = true;
      for (const item of cat.args) {
        const piece = this.extract(other, top - 1, top - item.w);
        if (item.k === 'const' && piece.k === 'const' && item.v !== piece.v) return this.false;
        if (piece !== item) same = false;
        top -= item.w;
      }
      if (same) return this.true;
    }
    return this.raw('eq', 1, a.id < b.id ? [a, b] : [b, a]);
  }
  compare(op: 'bvult' | 'bvule' | 'bvslt' | 'bvsle', a: Term, b: Term): Term {
    same(a, b, op);
    if (a.k === 'const' && b.k === 'const') {
      const [x, y] = op === 'bvslt' || op === 'bvsle' ? [signedOf(a.v, a.w), signedOf(b.v, b.w)] : [a.v, b.v];
      return this.const(1, (op.endsWith('lt') ? x < y : x <= y) ? 1 : 0);
    }
    if (a === b) return this.const(1, op.endsWith('le') ? 1 : 0);
    return this.raw(op, 1, [a, b]);
  }
  /** `c ? a : b` with a one-bit c. */
  ite(c: Term, a: Term, b: Term): Term {
    if (c.w !== 1) throw new Error('ite condition must be one bit');
    same(a, b, 'ite');
    if (c.k === 'const') return c.v ? a : b;
    if (a === b) return a;
    if (a.w === 1 && a.k === 'const' && b.k === 'const') return a.v ? c : this.not(c);
    return this.raw('ite', a.w, [c, a, b]);
  }
  bool(c: Term): Term {
    return c.w === 1 ? c : this.not(this.eq(c, this.const(c.w, 0)));
  }
  andAll(cs: readonly Term[]): Term {
    return cs.reduce((acc, c) => this.and(acc, c), this.true);
  }
  implies(a: Term, b: Term): Term {
    return this.or(this.not(a), b);
  }

  // ---- Bits.

  /** `{items[0], items[1], ...}`, the first most significant. */
  concat(items: readonly Term[]): Term {
    const flat: Term[] = [];
    for (const t of items) {
      if (t.k === 'op' && t.op === 'concat') flat.push(...t.args);
      else flat.push(t);
    }
    // Join neighbours: two constants, or adjacent slices of one term.
    const merged: Term[] = [];
    for (const t of flat) {
      const prev = merged[merged.length - 1];
      if (prev?.k === 'const' && t.k === 'const') {
        merged[merged.length - 1] = this.const(prev.w + t.w, (prev.v << BigInt(t.w)) | t.v);
      } else if (prev?.k === 'op' && prev.op === 'extract' && t.k === 'op' && t.op === 'extract' && prev.args[0] === t.args[0] && prev.lo === t.hi! + 1) {
        merged[merged.length - 1] = this.extract(prev.args[0], prev.hi!, t.lo!);
      } else merged.push(t);
    }
    if (merged.length === 1) return merged[0];
    return this.raw('concat', merged.reduce((w, t) => w + t.w, 0), merged);
  }
  extract(a: Term, hi: number, lo: number): Term {
    if (hi < lo || hi >= a.w || lo < 0) throw new Error(`extract [${hi}:${lo}] of a ${a.w}-bit term`);
    if (lo === 0 && hi === a.w - 1) return a;
    if (a.k === 'const') return this.const(hi - lo + 1, a.v >> BigInt(lo));
    if (a.k === 'op' && a.op === 'extract') return this.extract(a.args[0], hi + a.lo!, lo + a.lo!);
    if (a.k === 'op' && a.op === 'concat') {
      const parts: Term[] = [];
      let top = a.w;
      for (const item of a.args) {
        const itemLo = top - item.w;
        const h = Math.min(hi, top - 1);
        const l = Math.max(lo, itemLo);
        if (h >= l) parts.push(this.extract(item, h - itemLo, l - itemLo));
        top = itemLo;
      }
      return this.concat(parts);
    }
    if (a.k === 'op' && (a.op === 'zext' || a.op === 'sext') && hi < a.args[0].w) return this.extract(a.args[0], hi, lo);
    if (a.k === 'op' && a.op === 'zext' && lo >= a.args[0].w) return this.const(hi - lo + 1, 0);
    if (a.k === 'op' && a.op === 'ite' && (a.args[1].k === 'const' || a.args[2].k === 'const')) return this.ite(a.args[0], this.extract(a.args[1], hi, lo), this.extract(a.args[2], hi, lo));
    return this.raw('extract', hi - lo + 1, [a], hi, lo);
  }
  extend(signed: boolean, a: Term, w: number): Term {
    if (w === a.w) return a;
    if (w < a.w) throw new Error(`extend a ${a.w}-bit term to ${w} bits`);
    if (a.k === 'const') return this.const(w, signed ? signedOf(a.v, a.w) : a.v);
    if (!signed) return this.concat([this.const(w - a.w, 0), a]);
    return this.raw('sext', w, [a]);
  }
}

function same(a: Term, b: Term, op: string): void {
  if (a.w !== b.w) throw new Error(`${op} of ${a.w}-bit and ${b.w}-bit terms`);
}

/** `x + c` as [x, c]; any other term as [itself, 0]. */
function offsetOf(t: Term): [Term, bigint] {
  if (t.k === 'op' && t.op === 'bvadd' && t.args[1].k === 'const') return [t.args[0], t.args[1].v];
  return [t, 0n];
}

function shiftValue(op: 'bvshl' | 'bvlshr' | 'bvashr', a: bigint, b: bigint, w: number): bigint {
  const big = b >= BigInt(w);
  if (op === 'bvshl') return big ? 0n : mask(a << b, w);
  if (op === 'bvlshr') return big ? 0n : a >> b;
  return mask(signedOf(a, w) >> (big ? BigInt(w - 1) : b), w);
}

/** The value of `t` when every variable has the value `env` gives (missing ones are 0: a solver leaves out what does not matter). */
export function evalTerm(t: Term, env: ReadonlyMap<string, bigint>, memo = new Map<number, bigint>()): bigint {
  const known = memo.get(t.id);
  if (known !== undefined) return known;
  let v: bigint;
  if (t.k === 'const') v = t.v;
  else if (t.k === 'var') v = mask(env.get(t.name) ?? 0n, t.w);
  else {
    const a = t.args.map((x) => evalTerm(x, env, memo));
    const w0 = t.args[0].w;
    const bit = (c: boolean) => (c ? 1n : 0n);
    switch (t.op) {
      case 'bvadd': v = mask(a[0] + a[1], t.w); break;
      case 'bvsub': v = mask(a[0] - a[1], t.w); break;
      case 'bvand': v = a[0] & a[1]; break;
      case 'bvor': v = a[0] | a[1]; break;
      case 'bvxor': v = a[0] ^ a[1]; break;
      case 'bvnot': v = mask(~a[0], t.w); break;
      case 'bvneg': v = mask(-a[0], t.w); break;
      case 'bvshl': case 'bvlshr': case 'bvashr': v = shiftValue(t.op, a[0], a[1], t.w); break;
      case 'eq': v = bit(a[0] === a[1]); break;
      case 'bvult': v = bit(a[0] < a[1]); break;
      case 'bvule': v = bit(a[0] <= a[1]); break;
      case 'bvslt': v = bit(signedOf(a[0], w0) < signedOf(a[1], w0)); break;
      case 'bvsle': v = bit(signedOf(a[0], w0) <= signedOf(a[1], w0)); break;
      case 'ite': v = a[0] ? a[1] : a[2]; break;
      case 'concat': v = t.args.reduce((acc, x, i) => (acc << BigInt(x.w)) | a[i], 0n); break;
      case 'extract': v = mask(a[0] >> BigInt(t.lo!), t.w); break;
      case 'sext': v = mask(signedOf(a[0], w0), t.w); break;
      case 'zext': v = a[0]; break;
    }
  }
  memo.set(t.id, v);
  return v;
}
