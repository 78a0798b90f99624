// Minimised sums of products as text a table can hold, and as a synthesizable Verilog module.
// The text is a part kind of the notation (docs/notation.md): the store's address inputs as
// `input` lines and one one-bit `drive` line per output, whose value is an expression of
// docs/expressions.md, built as a tree and printed by formatExpression (the one printer of that
// syntax). So an equation can be pasted into a kind and simulated, and readEquations.ts reads
// the file back with the notation's own parser and the expression checker.
import { type Expr, formatExpression } from '../parts/expr';
import { emptySpan } from '../text/span';
import { LogicInputError } from './errors';
import type { Minimised } from './minimise';
import type { ProductTerm } from './truthTable';

/** One input of the equations: a one-bit name, or a vector whose bits are address lines. */
export interface EquationInput {
  readonly name: string;
  readonly width: number;
  /** Written as bits (`funct3[1]`), even when only bit 0 is an address line. */
  readonly vector: boolean;
  /** The table input (address line) behind each bit, bit 0 first; -1 for a bit no line feeds. */
  readonly lines: readonly number[];
}

/** How the equations name the address inputs and the outputs. */
export interface EquationNames {
  readonly inputs: readonly EquationInput[];
  /** Per table input: which equation input it is and its bit there. */
  readonly bitOf: readonly { readonly input: number; readonly bit: number }[];
  /** Per minimised output, in minimised order: the port name of its `drive` line. */
  readonly ports: readonly string[];
}

const INPUT_NAME = /^([A-Za-z_][A-Za-z0-9_]*(?:\.[A-Za-z_][A-Za-z0-9_]*)*)(?:\[([0-9]+)\])?$/;
/** Names the expressions (`select`) or a kind (`in`, an edge port's bus value) keep for themselves. */
const RESERVED = new Set(['select', 'in']);

/**
 * The expression names of the inputs (`step[0]`, `step[1]`, `step[2]` are the bits of the 3-bit
 * input `step`; `taken` stays a one-bit name) and one port name per output (`x.rs1.oe` becomes
 * `x_rs1_oe`, `alu.fn[2]` becomes `alu_fn_2`: a kind's port is one plain name). Writer and
 * reader both take their names from here. Throws LogicInputError for an input name the
 * expressions cannot write.
 */
export function equationNames(minimised: Minimised): EquationNames {
  const inputs: { name: string; width: number; vector: boolean; lines: number[] }[] = [];
  const indexOf = new Map<string, number>();
  const bitOf: { input: number; bit: number }[] = [];
  minimised.inputNames.forEach((inputName, line) => {
    const match = INPUT_NAME.exec(inputName);
    if (!match || RESERVED.has(match[1])) {
      throw new LogicInputError(`address input "${inputName}" cannot be named in an expression: use a name like "taken" or a bit like "funct3[1]"`);
    }
    const name = match[1];
    const vector = match[2] !== undefined;
    const bit = vector ? Number(match[2]) : 0;
    let index = indexOf.get(name);
    if (index === undefined) {
      index = inputs.length;
      indexOf.set(name, index);
      inputs.push({ name, width: 0, vector, lines: [] });
    }
    const input = inputs[index];
    if (input.vector !== vector || (input.lines[bit] ?? -1) >= 0) throw new LogicInputError(`address input "${inputName}" clashes with another input named "${name}"`);
    if (bit >= 32) throw new LogicInputError(`address input "${inputName}": a bit number above 31 is not an address line`);
    while (input.lines.length <= bit) input.lines.push(-1);
    input.lines[bit] = line;
    input.width = input.lines.length;
    bitOf.push({ input: index, bit });
  });
  const taken = new Set(inputs.map((i) => i.name));
  const ports = minimised.outputs.map((output) => {
    const plain = output.name.replace(/\[([0-9]+)\]/g, '_$1').replace(/[^A-Za-z0-9_]/g, '_');
    const base = /^[A-Za-z_]/.test(plain) && !RESERVED.has(plain) ? plain : `out_${plain}`;
    let port = base;
    for (let k = 2; taken.has(port); k++) port = `${base}_${k}`;
    taken.add(port);
    return port;
  });
  return { inputs, bitOf, ports };
}

// Built trees are printed, never located in a text, so their spans are empty.
const noSpan = { span: emptySpan };

/** One address line as the expressions read it: `taken`, or its bit of a vector (`funct3[1]`). */
function lineExpr(names: EquationNames, line: number): Expr {
  const { input, bit } = names.bitOf[line];
  const operand: Expr = { kind: 'name', name: names.inputs[input].name, ...noSpan };
  if (!names.inputs[input].vector) return operand;
  return { kind: 'slice', operand, hi: bit, lo: bit, hiSpan: emptySpan, loSpan: emptySpan, ...noSpan };
}

const binary = (op: '&' | '|', left: Expr, right: Expr): Expr => ({ kind: 'binary', op, left, right, opSpan: emptySpan, ...noSpan });
const constant = (value: 0 | 1): Expr => ({ kind: 'number', value: BigInt(value), radix: 10, ...noSpan });

/** A product term: its literals joined by `&`, a complemented line as `~line`; the empty product is 1. */
function productExpr(term: ProductTerm, names: EquationNames): Expr {
  const literals: Expr[] = [];
  for (let line = 0; line < names.bitOf.length; line++) {
    if (((term.care >>> line) & 1) === 0) continue;
    const plain = lineExpr(names, line);
    literals.push((term.value >>> line) & 1 ? plain : { kind: 'unary', op: '~', operand: plain, ...noSpan });
  }
  return literals.length ? literals.reduce((a, b) => binary('&', a, b)) : constant(1);
}

/** An output's value as an expression: the sum of its terms joined by `|`, complemented with `~(...)` when `inverted`. */
export function coverExpr(terms: readonly ProductTerm[], inverted: boolean, names: EquationNames): Expr {
  const sum = terms.length ? terms.map((t) => productExpr(t, names)).reduce((a, b) => binary('|', a, b)) : constant(0);
  if (!inverted) return sum;
  if (sum.kind === 'number') return constant(sum.value === 0n ? 1 : 0);
  return { kind: 'unary', op: '~', operand: sum, ...noSpan };
}

/** Text inside a "..." description: the notation's strings hold no quote and no line break. */
const describe = (text: string) => text.replace(/["\r\n]/g, ' ');

/** The address lines behind an input, for its description: `address lines 5 to 7`, `address line 3`. */
function linesText(input: EquationInput): string {
  const { lines } = input;
  if (lines.length === 1) return `address line ${lines[0]}`;
  if (lines.length === 2 && lines[0] >= 0) return `address lines ${lines[0]} and ${lines[1]}`;
  if (lines.every((l, k) => l === lines[0] + k)) return `address lines ${lines[0]} to ${lines[lines.length - 1]}`;
  return `address lines ${lines.map((l) => (l < 0 ? 'none' : l)).join(', ')} (bit 0 first)`;
}

/**
 * A whole equations file: a comment saying how to use it, then one kind named `kindName` with
 * the inputs and one `drive NAME 1 = EXPR "signal"` line per output. Every line is one line of
 * the notation (a kind line cannot continue), so any line can be copied into another kind.
 */
export function equationsText(minimised: Minimised, title: string, kindName: string): string {
  const names = equationNames(minimised);
  const vectors = names.inputs.filter((i) => i.vector);
  const lines = [
    `# ${describe(title)}: the fitted outputs as a part kind, written by Phasewright.`,
    '# Each drive line is one output at its line level (an active-low strobe reads 0 where a step',
    '# asserts it), as a sum of products in the expressions of docs/expressions.md: ~ complement,',
    '# & and, | or. The inputs are the store\'s address lines' + (vectors.length ? ',' : '.'),
    ...(vectors.length ? [`# ${vectors[0].name}[${vectors[0].width - 1}] being bit ${vectors[0].width - 1} of the ${vectors[0].width}-bit input ${vectors[0].name}.`] : []),
    '# Paste the kind into a table, or copy a drive line into a kind of your own that declares the',
    '# inputs the line reads, as wide as below.',
    '',
    `kind ${kindName} "${describe(title)}: ${minimised.outputs.length} fitted output${minimised.outputs.length === 1 ? '' : 's'}"`,
    ...names.inputs.map((input) => `  input ${input.name} ${input.width} "${linesText(input)}"`),
  ];
  minimised.outputs.forEach((output, k) => {
    const count = `${output.terms.length} product term${output.terms.length === 1 ? '' : 's'}`;
    lines.push('', `  # ${output.name}: ${count}${output.inverted ? ', built as the complement' : ''} (${output.method})`);
    lines.push(`  drive ${names.ports[k]} 1 = ${formatExpression(coverExpr(output.terms, output.inverted, names))} "${describe(output.name)}"`);
  });
  return lines.join('\n') + '\n';
}

const VERILOG_KEYWORDS = new Set(
  'always and assign begin buf case default else end endcase endmodule for function if initial inout input integer module nand nor not or output parameter reg signed task wire xor xnor'.split(' '),
);

function verilogProduct(term: ProductTerm, nInputs: number): string {
  if (term.care === 0) return "1'b1";
  const literals: string[] = [];
  for (let inputIndex = 0; inputIndex < nInputs; inputIndex++) {
    if (((term.care >>> inputIndex) & 1) === 0) continue;
    literals.push((term.value >>> inputIndex) & 1 ? `a[${inputIndex}]` : `~a[${inputIndex}]`);
  }
  return literals.length === 1 ? literals[0] : `(${literals.join(' & ')})`;
}

/**
 * A synthesizable Verilog (IEEE 1364-2001) module: `input [n-1:0] a` holds the address inputs
 * in table order, `output [m-1:0] y` the outputs in minimised order, one continuous assignment each.
 */
export function verilogModule(minimised: Minimised, moduleName: string): string {
  if (!/^[A-Za-z_][A-Za-z0-9_$]*$/.test(moduleName) || VERILOG_KEYWORDS.has(moduleName)) {
    throw new LogicInputError(`"${moduleName}" cannot be a Verilog module name: use letters, digits, "_" and "$", not starting with a digit, and not a keyword`);
  }
  const nInputs = minimised.nInputs;
  const nOutputs = minimised.outputs.length;
  const lines = [
    `// Sum-of-products equations generated by Phasewright for module ${moduleName}.`,
    ...minimised.inputNames.map((name, index) => `//   a[${index}] = ${name}`),
    ...minimised.outputs.map((output, index) => `//   y[${index}] = ${output.name}`),
    `module ${moduleName}(input [${Math.max(nInputs, 1) - 1}:0] a, output [${Math.max(nOutputs, 1) - 1}:0] y);`,
  ];
  minimised.outputs.forEach((output, index) => {
    const sum = output.terms.length === 0 ? "1'b0" : output.terms.map((term) => verilogProduct(term, nInputs)).join(' | ');
    const expression = output.inverted ? (output.terms.length === 0 ? "1'b1" : `~(${sum})`) : sum;
    lines.push(`  assign y[${index}] = ${expression};  // ${output.name}`);
  });
  lines.push('endmodule', '');
  return lines.join('\n');
}
