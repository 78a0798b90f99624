// Terms as an SMT-LIB 2 script in the logic QF_BV (SMT-LIB standard version 2.6, theory
// FixedSizeBitVectors and logic QF_BV, smtlib.cs.uiowa.edu): one `declare-fun` per variable,
// one `define-fun` per term used more than once (so shared terms are written once), one
// `assert` per fact, then `(check-sat)` and `(get-model)`. One-bit terms are bit vectors of width
// 1; a fact is asserted as `(= t #b1)`. `readSolverOutput` reads a solver's answer back:
// sat/unsat/unknown and the model's `define-fun` lines.
import type { Term } from './term';

/** What a solver answered to one script. */
export type SolverReply =
  | { readonly status: 'unsat' }
  | { readonly status: 'sat'; readonly model: ReadonlyMap<string, bigint> }
  | { readonly status: 'unknown'; readonly reason: string };

/** A solver the prover can ask; the adapters give one (tests may give their own). */
export interface Solver {
  readonly name: string;
  decide(script: string): Promise<SolverReply>;
}

const symbol = (name: string) => (/^[A-Za-z_][A-Za-z0-9_.@$]*$/.test(name) ? name : `|${name.replace(/[|\\]/g, '_')}|`);

const literal = (w: number, v: bigint) => (w % 4 === 0 ? `#x${v.toString(16).padStart(w / 4, '0')}` : `#b${v.toString(2).padStart(w, '0')}`);

/** The script asking whether every fact can hold at once. */
export function smtScript(facts: readonly Term[], comment: readonly string[] = []): string {
  const uses = new Map<number, number>();
  const vars = new Map<string, Term & { k: 'var' }>();
  const order: Term[] = [];
  const visit = (t: Term) => {
    const n = uses.get(t.id) ?? 0;
    uses.set(t.id, n + 1);
    if (n > 0) return;
    if (t.k === 'var') vars.set(t.name, t);
    if (t.k === 'op') for (const a of t.args) visit(a);
    order.push(t);
  };
  for (const f of facts) visit(f);
  const named = new Map<number, string>();
  const text = (t: Term): string => {
    const name = named.get(t.id);
    if (name) return name;
    if (t.k === 'const') return literal(t.w, t.v);
    if (t.k === 'var') return symbol(t.name);
    const args = t.args.map(text);
    switch (t.op) {
      case 'eq': return `(ite (= ${args[0]} ${args[1]}) #b1 #b0)`;
      case 'bvult': case 'bvule': case 'bvslt': case 'bvsle': return `(ite (${t.op} ${args[0]} ${args[1]}) #b1 #b0)`;
      case 'ite': return `(ite (= ${args[0]} #b1) ${args[1]} ${args[2]})`;
      case 'extract': return `((_ extract ${t.hi} ${t.lo}) ${args[0]})`;
      case 'sext': return `((_ sign_extend ${t.w - t.args[0].w}) ${args[0]})`;
      case 'zext': return `((_ zero_extend ${t.w - t.args[0].w}) ${args[0]})`;
      default: return `(${t.op} ${args.join(' ')})`;
    }
  };
  const lines = [...comment.map((c) => `; ${c.replace(/\n/g, ' ')}`), '(set-logic QF_BV)'];
  for (const v of vars.values()) lines.push(`(declare-fun ${symbol(v.name)} () (_ BitVec ${v.w}))`);
  let n = 0;
  for (const t of order) {
    if (t.k !== 'op' || (uses.get(t.id) ?? 0) < 2) continue;
    const body = text(t);
    const name = `t${n++}`;
    lines.push(`(define-fun ${name} () (_ BitVec ${t.w}) ${body})`);
    named.set(t.id, name);
  }
  for (const f of facts) lines.push(`(assert (= ${text(f)} #b1))`);
  lines.push('(check-sat)', '(get-model)', '');
  return lines.join('\n');
}

/** A solver's output for one script: the first line's status and, when sat, the model's values. */
export function readSolverOutput(output: string): SolverReply {
  const first = output.trim().split(/\s+/)[0] ?? '';
  if (first === 'unsat') return { status: 'unsat' };
  if (first === 'sat') {
    const model = new Map<string, bigint>();
    const re = /\(define-fun\s+(\|[^|]*\||[^\s()]+)\s+\(\)\s+\(_\s+BitVec\s+\d+\)\s+(#x[0-9a-fA-F]+|#b[01]+)\s*\)/g;
    for (const m of output.matchAll(re)) {
      const name = m[1].startsWith('|') ? m[1].slice(1, -1) : m[1];
      const v = m[2].startsWith('#x') ? BigInt(`0x${m[2].slice(2)}`) : BigInt(`0b${m[2].slice(2)}`);
      model.set(name, v);
    }
    return { status: 'sat', model };
  }
  if (first === 'unknown') return { status: 'unknown', reason: 'the solver answered unknown' };
  return { status: 'unknown', reason: `the solver's answer is not sat, unsat or unknown: ${output.trim().slice(0, 200) || '(nothing)'}` };
}
