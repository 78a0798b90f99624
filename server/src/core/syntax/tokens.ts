// Token kinds of the control-table notation. Tokens are named by their shape; whitespace and
// comments are tokens too ("trivia"), so the token texts concatenated give back the input.

export const enum T {
  Whitespace,
  Newline,
  Comment,
  Ident,
  /** Digits and letters starting with a digit: decimal, 0x hex, 0b binary, or a bit pattern. */
  Number,
  /** A bit pattern holding don't-care dashes, such as `-`, `1-0` or `--1`. */
  Pattern,
  String,
  Colon,
  Comma,
  Equals,
  LBrace,
  RBrace,
  LParen,
  RParen,
  LBracket,
  RBracket,
  Amp,
  Bang,
  Plus,
  DotDot,
  Arrow,
  /** A character the notation never uses; the parser reports it once. */
  Error,
  Eof,
}

export interface Token {
  kind: T;
  start: number;
  end: number;
  text: string;
  /** Set on a String token that reaches the end of its line without a closing quote. */
  unterminated?: boolean;
}

export function isTrivia(kind: T): boolean {
  return kind === T.Whitespace || kind === T.Comment;
}

export const tokenNames: Record<T, string> = {
  [T.Whitespace]: 'space',
  [T.Newline]: 'end of line',
  [T.Comment]: 'comment',
  [T.Ident]: 'name',
  [T.Number]: 'number',
  [T.Pattern]: 'bit pattern',
  [T.String]: 'quoted text',
  [T.Colon]: "':'",
  [T.Comma]: "','",
  [T.Equals]: "'='",
  [T.LBrace]: "'{'",
  [T.RBrace]: "'}'",
  [T.LParen]: "'('",
  [T.RParen]: "')'",
  [T.LBracket]: "'['",
  [T.RBracket]: "']'",
  [T.Amp]: "'&'",
  [T.Bang]: "'!'",
  [T.Plus]: "'+'",
  [T.DotDot]: "'..'",
  [T.Arrow]: "'->'",
  [T.Error]: 'unexpected character',
  [T.Eof]: 'end of file',
};
