// The expression scanner: text to tokens, never failing. A character or number the syntax does
// not know becomes an Error token carrying its message, so the parser reports it at its exact
// place. Offsets are absolute (the slice's `base` is added here, once).

export type TokenKind = 'name' | 'number' | 'op' | 'error' | 'eof';

export interface Token {
  kind: TokenKind;
  /** The token's text (operators and punctuation by their spelling). */
  text: string;
  start: number;
  end: number;
  /** For numbers: the value, radix and (hex and binary) width. */
  value?: bigint;
  radix?: 2 | 10 | 16;
  width?: number;
  /** For errors: what is wrong. */
  message?: string;
}

const isIdentStart = (c: string) => (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || c === '_';
const isIdentChar = (c: string) => isIdentStart(c) || (c >= '0' && c <= '9');

/** Operators and punctuation, longest first so `>>>` wins over `>>` and `>`. */
const OPERATORS = ['>>>', '<=s', '>=s', '<<', '>>', '==', '!=', '<=', '>=', '<s', '>s', '<', '>', '+', '-', '~', '&', '|', '^', '?', ':', ',', '(', ')', '[', ']', '{', '}'];

const HINTS: Record<string, string> = {
  '=': 'a lone `=`; compare with `==`',
  '!': 'a lone `!`; use `~` for the complement or `!=` to compare',
  '*': '`*`: there is no multiplication; shift or add instead',
  '/': '`/`: there is no division',
  '%': '`%`: there is no remainder operator',
};

/** Reads a literal's text: decimal, 0x hex or 0b binary, `_` allowed between digits. */
function readNumber(word: string): Pick<Token, 'value' | 'radix' | 'width' | 'message'> {
  const prefix = word.slice(0, 2).toLowerCase();
  const radix = prefix === '0x' ? 16 : prefix === '0b' ? 2 : 10;
  const body = radix === 10 ? word : word.slice(2);
  const digits = body.replace(/_/g, '');
  const valid = radix === 16 ? /^[0-9a-fA-F]+$/ : radix === 2 ? /^[01]+$/ : /^[0-9]+$/;
  if (!valid.test(digits)) {
    const form = radix === 16 ? 'hex digits after 0x' : radix === 2 ? 'only 0 and 1 after 0b' : 'decimal digits (or 0x.. hex, 0b.. binary)';
    return { message: `\`${word}\` is not a number: expected ${form}` };
  }
  const value = BigInt(radix === 16 ? `0x${digits}` : radix === 2 ? `0b${digits}` : digits);
  return { value, radix, width: radix === 16 ? digits.length * 4 : radix === 2 ? digits.length : undefined };
}

export function scanExpression(text: string, base: number): Token[] {
  const tokens: Token[] = [];
  let pos = 0;
  while (pos < text.length) {
    const c = text[pos];
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r' || c === '\f' || c === '\v') {
      pos++;
      continue;
    }
    const start = pos;
    if (isIdentStart(c)) {
      pos++;
      for (;;) {
        while (pos < text.length && isIdentChar(text[pos])) pos++;
        // A dot continues the name only when a letter follows (`cnt.zero`).
        if (text[pos] === '.' && pos + 1 < text.length && isIdentStart(text[pos + 1])) pos += 2;
        else break;
      }
      tokens.push({ kind: 'name', text: text.slice(start, pos), start: base + start, end: base + pos });
      continue;
    }
    if (c >= '0' && c <= '9') {
      while (pos < text.length && isIdentChar(text[pos])) pos++;
      const word = text.slice(start, pos);
      const read = readNumber(word);
      tokens.push({ kind: read.message ? 'error' : 'number', text: word, start: base + start, end: base + pos, ...read });
      continue;
    }
    const op = OPERATORS.find((o) => text.startsWith(o, pos) && !(o.endsWith('s') && pos + o.length < text.length && isIdentChar(text[pos + o.length])));
    if (op) {
      pos += op.length;
      tokens.push({ kind: 'op', text: op, start: base + start, end: base + pos });
      continue;
    }
    // One UTF-16 unit per error token, except that a surrogate pair stays whole.
    const code = text.charCodeAt(pos);
    pos += code >= 0xd800 && code <= 0xdbff && pos + 1 < text.length ? 2 : 1;
    const ch = text.slice(start, pos);
    tokens.push({ kind: 'error', text: ch, start: base + start, end: base + pos, message: `unexpected ${HINTS[ch] ?? `character \`${ch}\``}` });
  }
  tokens.push({ kind: 'eof', text: '', start: base + text.length, end: base + text.length });
  return tokens;
}
