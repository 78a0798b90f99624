// Minimised sums of products as readable text and as a synthesizable Verilog module. The text
// notation is this project's own plain Boolean algebra, documented in EQUATION_NOTATION below,
// and can be parsed back (for round-trip checks and for users who edit equations). It
// deliberately imitates no programmable-logic compiler's language.
import { LogicInputError } from './errors';
import type { Minimised } from './minimise';
import type { ProductTerm } from './truthTable';

/** The text notation, as shipped in the header of every equations file. */
export const EQUATION_NOTATION = [
  'One equation per output, ended by ";": NAME = SUM;',
  'SUM is products joined by "|" (or), a product is input names joined by "&" (and),',
  '"!" before a name negates it; 0 and 1 are the constant sums.',
  'NAME = !(SUM); means the output is the complement of SUM.',
  'Lines starting with "#" are comments.',
];

export interface Equation {
  readonly name: string;
  readonly inverted: boolean;
  readonly terms: ProductTerm[];
}

function productText(term: ProductTerm, inputNames: readonly string[]): string {
  if (term.care === 0) return '1';
  const literals: string[] = [];
  for (let inputIndex = 0; inputIndex < inputNames.length; inputIndex++) {
    if (((term.care >>> inputIndex) & 1) === 0) continue;
    literals.push((term.value >>> inputIndex) & 1 ? inputNames[inputIndex] : `!${inputNames[inputIndex]}`);
  }
  return literals.join(' & ');
}

/** One equation as text; long sums continue on lines indented under the first product. */
export function equationText(name: string, terms: readonly ProductTerm[], inverted: boolean, inputNames: readonly string[]): string {
  const products = terms.length === 0 ? ['0'] : terms.map((term) => productText(term, inputNames));
  const head = inverted ? `${name} = !(` : `${name} = `;
  const indent = ' '.repeat(head.length - 2);
  const body = products.map((product, k) => (k === 0 ? product : `${indent}| ${product}`)).join('\n');
  return `${head}${body}${inverted ? ')' : ''};`;
}

/** A whole equations file for minimised outputs. */
export function equationsText(minimised: Minimised, title: string): string {
  const lines = [
    `# Phasewright logic equations: ${title.replace(/[\r\n]/g, ' ')}`,
    ...EQUATION_NOTATION.map((line) => `# ${line}`),
    `# Inputs, address bit 0 first: ${minimised.inputNames.join(' ')}`,
    '',
  ];
  for (const output of minimised.outputs) {
    lines.push(`# ${output.name}: ${output.terms.length} product term${output.terms.length === 1 ? '' : 's'}${output.inverted ? ', complement' : ''}, ${output.method}`);
    lines.push(equationText(output.name, output.terms, output.inverted, minimised.inputNames));
  }
  return lines.join('\n') + '\n';
}

interface Token {
  readonly text: string;
  readonly line: number;
}

function tokenize(text: string): Token[] {
  const tokens: Token[] = [];
  text.split(/\r?\n/).forEach((lineText, lineIndex) => {
    const code = lineText.trimStart().startsWith('#') ? '' : lineText;
    const pattern = /\s*([A-Za-z_][A-Za-z0-9_.]*(?:\[[0-9]+\])?|[=!&|();]|[01]|\S)/y;
    let match: RegExpExecArray | null;
    while ((match = pattern.exec(code)) !== null) tokens.push({ text: match[1], line: lineIndex + 1 });
  });
  return tokens;
}

/** Parses equations written in the notation above. Throws LogicInputError with a line number on bad text. */
export function parseEquations(text: string, inputNames: readonly string[]): Equation[] {
  const inputIndex = new Map(inputNames.map((name, index) => [name, index]));
  const tokens = tokenize(text);
  let position = 0;
  const peek = () => tokens[position];
  const fail = (message: string): never => {
    const token = tokens[Math.min(position, tokens.length - 1)];
    throw new LogicInputError(`equations, line ${token ? token.line : 1}: ${message}`);
  };
  const expect = (text: string) => {
    if (peek()?.text !== text) fail(`expected "${text}" but found ${peek() ? `"${peek().text}"` : 'the end of the text'}`);
    position++;
  };
  const isName = (token: Token | undefined) => token !== undefined && /^[A-Za-z_]/.test(token.text);

  const parseProduct = (): ProductTerm => {
    let care = 0;
    let value = 0;
    for (;;) {
      let negated = false;
      if (peek()?.text === '!') {
        negated = true;
        position++;
      }
      const token = peek();
      if (!isName(token)) fail(`expected an input name but found ${token ? `"${token.text}"` : 'the end of the text'}`);
      const index = inputIndex.get(token.text);
      if (index === undefined) fail(`"${token.text}" is not an input`);
      const bit = 1 << index!;
      if (care & bit && ((value & bit) !== 0) === negated) fail(`"${token.text}" appears both plain and negated in one product`);
      care |= bit;
      if (!negated) value |= bit;
      position++;
      if (peek()?.text !== '&') return { care: care >>> 0, value: value >>> 0 };
      position++;
    }
  };
  const parseSum = (): ProductTerm[] => {
    if (peek()?.text === '0' || peek()?.text === '1') {
      const constant = peek().text;
      position++;
      return constant === '1' ? [{ care: 0, value: 0 }] : [];
    }
    const terms = [parseProduct()];
    while (peek()?.text === '|') {
      position++;
      terms.push(parseProduct());
    }
    return terms;
  };

  const equations: Equation[] = [];
  const seen = new Set<string>();
  while (position < tokens.length) {
    const nameToken = peek();
    if (!isName(nameToken)) fail(`expected an output name but found "${nameToken.text}"`);
    if (seen.has(nameToken.text)) fail(`output "${nameToken.text}" has two equations`);
    seen.add(nameToken.text);
    position++;
    expect('=');
    let inverted = false;
    let terms: ProductTerm[];
    if (peek()?.text === '!' && tokens[position + 1]?.text === '(') {
      inverted = true;
      position += 2;
      terms = parseSum();
      expect(')');
    } else {
      terms = parseSum();
    }
    expect(';');
    equations.push({ name: nameToken.text, inverted, terms });
  }
  return equations;
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
