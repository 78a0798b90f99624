// Reads an equations file (equations.ts) back and evaluates it at every address, so what `fit`
// writes is checked as text, not only as the covers it came from. The file is read by the
// notation's own parser and kind builder, each drive line's value by the expression parser
// and checker, and the values computed by the expression compiler: nothing here knows the
// syntax itself. The file must be exactly the kind of the given outputs: the same inputs and
// widths, one one-bit drive line per output, nothing else; anything else is an error with its line.
import { checkExpression, compileExpressions, type Expr, type NameInfo, parseExpression } from '../parts/expr';
import { buildKind } from '../parts/kinds';
import { parse } from '../syntax/parser';
import type { Diagnostic } from '../text/diagnostic';
import { LineIndex } from '../text/lineIndex';
import { type EquationNames, equationNames } from './equations';
import type { Minimised } from './minimise';
import { wordsFor } from './truthTable';

export interface ReadEquation {
  /** The output's position in `minimised.outputs`. */
  readonly output: number;
  readonly port: string;
  /** The checked one-bit value over the inputs. */
  readonly expr: Expr;
}

export type EquationsRead =
  | { readonly ok: true; readonly names: EquationNames; readonly equations: readonly ReadEquation[] }
  | { readonly ok: false; readonly message: string };

/** Reads `text` as the equations of `minimised`'s outputs over its inputs. */
export function readEquations(text: string, minimised: Minimised): EquationsRead {
  const lines = new LineIndex(text);
  const fail = (offset: number, message: string): EquationsRead => ({ ok: false, message: `equations, line ${lines.position(offset).line + 1}: ${message}` });
  const firstError = (diagnostics: readonly Diagnostic[]) => diagnostics.find((d) => d.severity === 'error');
  const parsed = parse(text);
  const syntax = firstError(parsed.errors);
  if (syntax) return fail(syntax.span.start, syntax.message);
  const [decl, extra] = parsed.tree.decls;
  if (!decl || decl.kind !== 'kind') return fail(decl?.span.start ?? 0, 'expected one `kind` declaration holding the equations');
  if (extra) return fail(extra.span.start, 'only one `kind` declaration belongs in an equations file');
  const problems: Diagnostic[] = [];
  const def = buildKind(decl, 'table', (d) => problems.push(d));
  const problem = firstError(problems);
  if (problem || !def) return fail(problem?.span.start ?? decl.span.start, problem?.message ?? 'the kind has no name');
  const other = [...def.settings, ...def.controls, ...def.states, ...def.flags, ...def.edges][0];
  if (other) return fail(other.span.start, `\`${other.name}\`: an equations file holds only inputs and one-bit drive lines`);

  const names = equationNames(minimised);
  const scope = new Map<string, NameInfo>();
  for (const input of def.inputs) {
    const expected = names.inputs.find((i) => i.name === input.name);
    if (!expected) return fail(input.span.start, `\`${input.name}\` is not an address input of this store (it has ${names.inputs.map((i) => i.name).join(', ')})`);
    if (input.width.kind !== 'number' || input.width.value !== expected.width || input.wiring !== 'positional') {
      return fail(input.span.start, `input \`${input.name}\` must read \`input ${input.name} ${expected.width}\`, as wide as the address lines give it`);
    }
    scope.set(input.name, { width: expected.width });
  }
  const missingInput = names.inputs.find((i) => !scope.has(i.name));
  if (missingInput) return fail(decl.span.start, `the kind lacks \`input ${missingInput.name} ${missingInput.width}\``);

  const equations: ReadEquation[] = [];
  for (const drive of def.drives) {
    const output = names.ports.indexOf(drive.name);
    if (output < 0) return fail(drive.span.start, `\`${drive.name}\` is not a fitted output (expected ${names.ports.join(', ')})`);
    if (drive.width.kind !== 'number' || drive.width.value !== 1) return fail(drive.span.start, `\`${drive.name}\` must be one bit: \`drive ${drive.name} 1 = ...\``);
    const { expr, diagnostics } = parseExpression(drive.expr.text, drive.expr.span.start);
    if (!expr) return fail(diagnostics[0].span.start, diagnostics[0].message);
    const check = firstError(checkExpression(expr, (name) => scope.get(name), 1).diagnostics);
    if (check) return fail(check.span.start, check.message);
    equations.push({ output, port: drive.name, expr });
  }
  const missing = names.ports.findIndex((port) => !equations.some((e) => e.port === port));
  if (missing >= 0) return fail(text.length, `no drive line for \`${names.ports[missing]}\` (output ${minimised.outputs[missing].name})`);
  equations.sort((a, b) => a.output - b.output);
  return { ok: true, names, equations };
}

/**
 * The level of every read equation at each of the 2^nInputs addresses (bit a of word a >> 5),
 * in minimised output order, computed by one compiled function of the inputs.
 */
export function equationsLevels(read: Extract<EquationsRead, { ok: true }>, nInputs: number): Uint32Array[] {
  const { names, equations } = read;
  const inputNames = names.inputs.map((i) => i.name);
  const width = new Map(names.inputs.map((i) => [i.name, i.width]));
  const run = compileExpressions(equations.map((e) => ({ name: e.port, expr: e.expr, width: 1 })), inputNames, (name) => width.get(name)!);
  const levels = equations.map(() => new Uint32Array(wordsFor(nInputs)));
  const values = new Array<number>(inputNames.length);
  for (let address = 0; address < 2 ** nInputs; address++) {
    values.fill(0);
    names.bitOf.forEach(({ input, bit }, line) => {
      values[input] += ((address >>> line) & 1) * 2 ** bit;
    });
    const out = run(values);
    for (let k = 0; k < out.length; k++) if (out[k]) levels[k][address >>> 5] |= 1 << (address & 31);
  }
  return levels;
}
