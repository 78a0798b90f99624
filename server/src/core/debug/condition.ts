// Breakpoint conditions: comparisons of machine values joined by `&&` and `||` (`&&` binds
// tighter), e.g. `a0 == 0x10 && step == 2`, `instructions >= 1000`, `result != 0`. An operand is
// a number (decimal, `0x` hex, `0b` binary, optionally negative) or a name the caller resolves:
// a register (x0..x31 or its ABI name), pc, ir, step, instructions, cycle, a bus, a part, a flag.
// A bare operand means "is not 0". Values compare as unsigned 32-bit numbers, so a negative
// literal stands for its two's complement (`a0 == -1` is `a0 == 0xffffffff`).
//
// Deliberately not here: which names exist (views.ts resolves them), when a condition is asked.

export type Operand = { kind: 'number'; value: number } | { kind: 'name'; name: string };
type Comparison = { left: Operand; op: '==' | '!=' | '<' | '<=' | '>' | '>='; right: Operand };
/** Alternatives (`||`) of conjunctions (`&&`). */
export type Condition = Comparison[][];

export type ParsedCondition = { ok: true; condition: Condition; names: string[] } | { ok: false; error: string };

const TOKEN = /\s*(0x[0-9a-fA-F_]+|0b[01_]+|-?\d[\d_]*|[A-Za-z_][\w.]*|==|!=|<=|>=|&&|\|\||<|>|\S)/y;

function numberOf(text: string): number | undefined {
  const t = text.replace(/_/g, '');
  const negative = t.startsWith('-');
  const body = negative ? t.slice(1) : t;
  const value = body.startsWith('0x') ? parseInt(body.slice(2), 16) : body.startsWith('0b') ? parseInt(body.slice(2), 2) : /^\d+$/.test(body) ? Number(body) : NaN;
  if (!Number.isFinite(value) || value > 0xffffffff) return undefined;
  return (negative ? -value : value) >>> 0;
}

/** Parses a condition; the names it uses are returned so the caller can check them once. */
export function parseCondition(text: string): ParsedCondition {
  const tokens: string[] = [];
  let end = 0;
  TOKEN.lastIndex = 0;
  for (let m = TOKEN.exec(text); m; m = TOKEN.exec(text)) {
    tokens.push(m[1]);
    end = TOKEN.lastIndex;
  }
  if (text.slice(end).trim() !== '') return { ok: false, error: `cannot read "${text.slice(end).trim()}"` };
  if (tokens.length === 0) return { ok: false, error: 'the condition is empty' };
  let at = 0;
  const names: string[] = [];
  const operand = (): Operand | string => {
    const t = tokens[at];
    if (t === undefined) return 'a value is missing at the end';
    at++;
    if (/^-?\d|^0[xb]/.test(t)) {
      const value = numberOf(t);
      return value === undefined ? `"${t}" is not a 32-bit number` : { kind: 'number', value };
    }
    if (/^[A-Za-z_]/.test(t)) {
      names.push(t);
      return { kind: 'name', name: t };
    }
    return `expected a name or a number, found "${t}"`;
  };
  const condition: Condition = [];
  let conjunction: Comparison[] = [];
  for (;;) {
    const left = operand();
    if (typeof left === 'string') return { ok: false, error: left };
    const op = tokens[at];
    let comparison: Comparison;
    if (op === '==' || op === '!=' || op === '<' || op === '<=' || op === '>' || op === '>=') {
      at++;
      const right = operand();
      if (typeof right === 'string') return { ok: false, error: right };
      comparison = { left, op, right };
    } else {
      comparison = { left, op: '!=', right: { kind: 'number', value: 0 } };
    }
    conjunction.push(comparison);
    const joiner = tokens[at];
    if (joiner === undefined) break;
    at++;
    if (joiner === '||') {
      condition.push(conjunction);
      conjunction = [];
    } else if (joiner !== '&&') {
      return { ok: false, error: `expected &&, || or the end, found "${joiner}"` };
    }
  }
  condition.push(conjunction);
  return { ok: true, condition, names };
}

/** Whether the condition holds; `valueOf` gives a name's value (unsigned), undefined when it has none now. */
export function conditionHolds(condition: Condition, valueOf: (name: string) => number | undefined): boolean {
  const read = (o: Operand) => (o.kind === 'number' ? o.value : valueOf(o.name));
  return condition.some((conjunction) =>
    conjunction.every(({ left, op, right }) => {
      const a = read(left);
      const b = read(right);
      // A value that is not known now (a floating bus) satisfies no comparison.
      if (a === undefined || b === undefined) return false;
      switch (op) {
        case '==':
          return a === b;
        case '!=':
          return a !== b;
        case '<':
          return a < b;
        case '<=':
          return a <= b;
        case '>':
          return a > b;
        case '>=':
          return a >= b;
      }
    }),
  );
}
