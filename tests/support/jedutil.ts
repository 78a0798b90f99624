// Reads the equations Debian mame-tools' `jedutil -view FILE DEVICE` prints for a GAL fuse map
// (`o<pin> = i<pin> & /i<pin> + ...`, `/o<pin>` for active-low, `o<pin>.oe = ...`), and
// evaluates them, so tests can compare an outside tool's reading of our fuse maps with our
// truth tables. Mind that jedutil hides an always-true product term.

export interface PrintedEquation {
  readonly pin: number;
  readonly inverted: boolean;
  /** Products; each literal is [pin, wanted level]. */
  readonly products: [number, 0 | 1][][];
  readonly enable: string;
}

/** Parses the "Equations:" part of `jedutil -view`. */
export function parseJedutilEquations(text: string): Map<number, PrintedEquation> {
  const afterHeader = text.split(/^Equations:\s*$/m)[1];
  if (afterHeader === undefined) throw new Error(`no "Equations:" section in jedutil output:\n${text}`);
  // Join continuation lines (indented) onto the equation they continue.
  const statements: string[] = [];
  for (const line of afterHeader.split('\n')) {
    if (line.trim() === '') continue;
    if (/^\s/.test(line) && statements.length > 0) statements[statements.length - 1] += ' ' + line.trim();
    else statements.push(line.trim());
  }
  const sums = new Map<number, { inverted: boolean; products: [number, 0 | 1][][] }>();
  const enables = new Map<number, string>();
  for (const statement of statements) {
    const enable = /^o(\d+)\.oe = (.*)$/.exec(statement);
    if (enable) {
      enables.set(Number(enable[1]), enable[2].trim());
      continue;
    }
    const equation = /^(\/?)o(\d+) =(.*)$/.exec(statement);
    if (!equation) throw new Error(`unexpected jedutil line "${statement}"`);
    const right = equation[3].trim();
    const products =
      right === ''
        ? []
        : right.split('+').map((product) =>
            product.split('&').map((literal): [number, 0 | 1] => {
              const match = /^(\/?)[io](\d+)$/.exec(literal.trim());
              if (!match) throw new Error(`unexpected literal "${literal}" in "${statement}"`);
              return [Number(match[2]), match[1] === '/' ? 0 : 1];
            }),
          );
    sums.set(Number(equation[2]), { inverted: equation[1] === '/', products });
  }
  return new Map([...sums].map(([pin, sum]) => [pin, { pin, ...sum, enable: enables.get(pin) ?? '(none)' }]));
}

export function evaluatePrinted(equation: PrintedEquation, levels: Map<number, 0 | 1>): 0 | 1 {
  const sum = equation.products.some((product) => product.every(([pin, wanted]) => levels.get(pin) === wanted));
  return (sum !== equation.inverted ? 1 : 0) as 0 | 1;
}

