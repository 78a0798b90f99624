// The scanner: turns text into tokens and never fails. Characters the notation does not use
// become Error tokens (one per character) so the parser can report them at their exact place
// and carry on. It knows nothing of keywords; those are names the parser recognises.
import { T, type Token } from './tokens';

function isIdentStart(ch: number): boolean {
  return (ch >= 65 && ch <= 90) || (ch >= 97 && ch <= 122) || ch === 95;
}

function isAlnum(ch: number): boolean {
  return isIdentStart(ch) || (ch >= 48 && ch <= 57);
}

function isDigit(ch: number): boolean {
  return ch >= 48 && ch <= 57;
}

function isBitOrDash(ch: number): boolean {
  return ch === 48 || ch === 49 || ch === 45;
}

/**
 * Scans the whole text. The last token is always Eof (empty, at text.length). With
 * `trivia: false` spaces and comments are skipped rather than returned (the parser needs no
 * more, and a large table has tens of thousands of them).
 */
export function scan(text: string, options: { trivia?: boolean } = {}): Token[] {
  const tokens: Token[] = [];
  const keepTrivia = options.trivia ?? true;
  const n = text.length;
  let pos = 0;
  const push = (kind: T, start: number, end: number) => {
    if (!keepTrivia && (kind === T.Whitespace || kind === T.Comment)) return;
    tokens.push({ kind, start, end, text: text.slice(start, end) });
  };

  while (pos < n) {
    const start = pos;
    const ch = text.charCodeAt(pos);

    if (ch === 32 || ch === 9 || ch === 12 || ch === 11 || ch === 0xfeff) {
      while (pos < n) {
        const c = text.charCodeAt(pos);
        if (c === 32 || c === 9 || c === 12 || c === 11 || c === 0xfeff) pos++;
        else break;
      }
      push(T.Whitespace, start, pos);
      continue;
    }
    if (ch === 10) {
      push(T.Newline, start, ++pos);
      continue;
    }
    if (ch === 13) {
      pos += text.charCodeAt(pos + 1) === 10 ? 2 : 1;
      push(T.Newline, start, pos);
      continue;
    }
    if (ch === 35 /* # */) {
      while (pos < n && text.charCodeAt(pos) !== 10 && text.charCodeAt(pos) !== 13) pos++;
      push(T.Comment, start, pos);
      continue;
    }
    if (isIdentStart(ch)) {
      pos++;
      for (;;) {
        const c = text.charCodeAt(pos);
        if (isAlnum(c)) {
          pos++;
        } else if ((c === 46 /* . */ || c === 45 /* - */) && isIdentStart(text.charCodeAt(pos + 1))) {
          // Dotted strobe names (x.rs1.oe) and the ISA's dashed opcode names (OP-IMM) are one
          // name; `..` and `->` never continue a name because a letter must follow.
          pos += 2;
        } else {
          break;
        }
      }
      push(T.Ident, start, pos);
      continue;
    }
    if (isDigit(ch)) {
      while (pos < n && isAlnum(text.charCodeAt(pos))) pos++;
      // A decimal fraction (`1.8` volts); `0..2` stays a range because a digit must follow the dot.
      if (text.charCodeAt(pos) === 46 && isDigit(text.charCodeAt(pos + 1)) && /^[0-9]+$/.test(text.slice(start, pos))) {
        pos++;
        while (pos < n && isDigit(text.charCodeAt(pos))) pos++;
        push(T.Number, start, pos);
        continue;
      }
      // A run of 0/1 followed by a dash that is not an arrow is a bit pattern with don't-cares.
      let allBits = true;
      for (let i = start; i < pos; i++) if (!isBitOrDash(text.charCodeAt(i))) allBits = false;
      if (allBits && text.charCodeAt(pos) === 45 && text.charCodeAt(pos + 1) !== 62) {
        while (pos < n && isBitOrDash(text.charCodeAt(pos)) && !(text.charCodeAt(pos) === 45 && text.charCodeAt(pos + 1) === 62)) pos++;
        push(T.Pattern, start, pos);
      } else {
        push(T.Number, start, pos);
      }
      continue;
    }
    if (ch === 45 /* - */) {
      if (text.charCodeAt(pos + 1) === 62) {
        push(T.Arrow, start, (pos += 2));
        continue;
      }
      while (pos < n && isBitOrDash(text.charCodeAt(pos)) && !(text.charCodeAt(pos) === 45 && text.charCodeAt(pos + 1) === 62)) pos++;
      push(T.Pattern, start, pos);
      continue;
    }
    if (ch === 34 /* " */) {
      pos++;
      let closed = false;
      while (pos < n) {
        const c = text.charCodeAt(pos);
        if (c === 34) {
          pos++;
          closed = true;
          break;
        }
        if (c === 10 || c === 13) break;
        if (c === 92 /* \ */ && pos + 1 < n && text.charCodeAt(pos + 1) !== 10 && text.charCodeAt(pos + 1) !== 13) pos++;
        pos++;
      }
      push(T.String, start, pos);
      if (!closed) tokens[tokens.length - 1].unterminated = true;
      continue;
    }
    if (ch === 46 && text.charCodeAt(pos + 1) === 46) {
      push(T.DotDot, start, (pos += 2));
      continue;
    }
    const single = singleCharTokens[ch];
    if (single !== undefined) {
      push(single, start, ++pos);
      continue;
    }
    // Keep surrogate pairs together so an error token never splits a character.
    const isHighSurrogate = ch >= 0xd800 && ch <= 0xdbff;
    const nextLow = text.charCodeAt(pos + 1);
    pos += isHighSurrogate && nextLow >= 0xdc00 && nextLow <= 0xdfff ? 2 : 1;
    push(T.Error, start, pos);
  }
  tokens.push({ kind: T.Eof, start: n, end: n, text: '' });
  return tokens;
}

const singleCharTokens: Record<number, T> = {
  58: T.Colon,
  44: T.Comma,
  61: T.Equals,
  123: T.LBrace,
  125: T.RBrace,
  40: T.LParen,
  41: T.RParen,
  91: T.LBracket,
  93: T.RBracket,
  38: T.Amp,
  33: T.Bang,
  43: T.Plus,
};

