// What the built-in combinational parts compute, as terms, read from their definitions in the
// standard library (parts/library/standard.ts): the ALU's `drive y`, the immediate generator's
// `drive imm`, the comparator's `on latch`, the memory port's `drive data` and `on write`. Each
// expression is evaluated symbolically (symbolicExpr.ts) with the part's inputs as terms and its
// control or choice setting as the constant code of the value the control word names, so the
// prover runs the same definition hover shows, not a restatement.
//
// TRANSITION (until the simulator runs the library kinds from their definitions too): the
// register, counter, instruction register, register file and constant are applied by the
// executor straight from the micro-op's numbers (a load, a count with its increment and mask, a
// register write guarded by rd != 0), as the simulator does; those are plain stores of a value.
import { libraryKind } from '../parts/library';
import type { KindDef } from '../parts/kinds';
import { parseExpression, scopeOf, type Expr, type NameInfo } from '../parts/expr';
import { symbolic } from './symbolicExpr';
import type { Term, Terms } from './term';

interface Inputs {
  /** Terms of the inputs and states the expression reads, by name. */
  readonly terms: Record<string, Term>;
  /** The value a control or choice setting holds, by name (e.g. fn: 'add'). */
  readonly choices: Record<string, string>;
  /** Reads the byte memory (for the memory port). */
  readonly element?: (array: string, index: Term) => Term;
}

const parsed = new Map<string, Expr>();

function exprOf(text: { text: string; span: { start: number } }): Expr {
  const key = `${text.span.start}:${text.text}`;
  let e = parsed.get(key);
  if (!e) {
    const r = parseExpression(text.text, text.span.start);
    if (!r.expr) throw new Error(`the standard library expression \`${text.text}\` does not parse`);
    e = r.expr;
    parsed.set(key, e);
  }
  return e;
}

function kind(name: string): KindDef {
  const def = libraryKind(name);
  if (!def) throw new Error(`the standard library has no kind \`${name}\``);
  return def;
}

/** Evaluates one expression of library kind `def` over terms, at `width`. */
function run(T: Terms, def: KindDef, text: { text: string; span: { start: number } }, inputs: Inputs, width?: number): Term {
  const scope = new Map<string, NameInfo>();
  const names: Record<string, Term> = { ...inputs.terms };
  const valued = [...def.controls.map((c) => ({ name: c.name, values: c.values })), ...def.settings.filter((s) => s.type === 'choice').map((s) => ({ name: s.name, values: s.choices }))];
  for (const { name, values } of valued) {
    const codes = new Map(values.map((v, i) => [v, i]));
    const w = Math.max(1, Math.ceil(Math.log2(values.length)));
    scope.set(name, { width: w, values: codes });
    const chosen = inputs.choices[name];
    if (chosen !== undefined) {
      const code = codes.get(chosen);
      if (code === undefined) throw new Error(`\`${chosen}\` is no value of ${def.name}'s \`${name}\``);
      names[name] = T.const(w, code);
    } else {
      // A control this use leaves open (the comparator's `test` under cond=funct3): its arm is
      // folded away by the constant choice around it, but the walk still meets the name.
      names[name] = T.variable(`${def.name}.${name}`, w);
    }
  }
  for (const [name, t] of Object.entries(inputs.terms)) scope.set(name, { width: t.w });
  for (const s of def.states) if (s.count === 'memory') scope.set(s.name, { width: 8, elements: 'memory' });
  return symbolic(T, exprOf(text), scopeOf(scope), {
    name: (n) => {
      const t = names[n];
      if (!t) throw new Error(`${def.name}'s expression reads \`${n}\`, which the prover does not give`);
      return t;
    },
    element: inputs.element,
  }, width);
}

/** The ALU's result for function `fn` (a value name of the library's `fn` control). */
export function aluResult(T: Terms, fn: string, a: Term, b: Term): Term {
  const def = kind('alu');
  return run(T, def, def.drives[0].expr, { terms: { a, b }, choices: { fn } }, a.w);
}

/** The immediate generator's output in format `fmt` (i s b u j) for the instruction term `ir`. */
export function immediateResult(T: Terms, fmt: string, ir: Term): Term {
  const def = kind('immediate');
  return run(T, def, def.drives[0].expr, { terms: { ir }, choices: { fmt } }, 32);
}

/** The flag the comparator latches: condition from funct3 of `ir`, or the named test (eq ne lt ge ltu geu). */
export function compareResult(T: Terms, condition: { funct3: true } | { test: string }, a: Term, b: Term, ir: Term): Term {
  const def = kind('compare');
  const latch = def.edges.find((e) => e.name === 'latch')!.assigns[0].expr;
  const choices: Record<string, string> = 'funct3' in condition ? { cond: 'funct3' } : { cond: 'field', test: condition.test };
  return run(T, def, latch, { terms: { a, b, ir }, choices }, 1);
}

/** The memory port's data for access size `size` (byte half word ubyte uhalf) at `addr`. */
export function memoryReadResult(T: Terms, size: string, addr: Term, read: (address: Term) => Term): Term {
  const def = kind('memory');
  return run(T, def, def.drives[0].expr, { terms: { addr }, choices: { size }, element: (_m, index) => read(index) }, 32);
}

/** The bytes the memory port stores for size `size` at `addr` from the bus value `value`: address, byte and the condition it is written under. */
export function memoryWriteResult(T: Terms, size: string, addr: Term, value: Term): { address: Term; byte: Term; when: Term }[] {
  const def = kind('memory');
  const write = def.edges.find((e) => e.name === 'write')!;
  const inputs: Inputs = { terms: { addr, in: value }, choices: { size } };
  return write.assigns.map((a) => ({
    address: a.index ? run(T, def, a.index, inputs, 32) : addr,
    byte: run(T, def, a.expr, inputs, 8),
    when: a.when ? run(T, def, a.when, inputs, 1) : T.true,
  }));
}
