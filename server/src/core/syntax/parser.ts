// The error-tolerant parser: tokens -> syntax tree. It never throws on any input. The notation
// is line-oriented: a declaration starts with its keyword at the beginning of a line, and the
// lines after `word`, `address`, `map`, `phase` and `class` that do not start with a keyword
// belong to it. On an unexpected token the parser reports it and skips to the next comma or
// line end, so one typo never hides the rest of the file. Grammar rules are quoted in the doc
// comment of the function that parses them; docs/notation.md has the whole grammar.
import type { Diagnostic } from '../text/diagnostic';
import { type Span, span as mkSpan } from '../text/span';
import type * as A from './ast';
import { declarationKeywords } from './ast';
import { scan } from './scanner';
import { T, type Token, tokenNames } from './tokens';

export interface ParseResult {
  tree: A.FileNode;
  errors: Diagnostic[];
  /**
   * All tokens including trivia; their texts concatenated give back the input. Scanned on
   * first use (the parser itself needs only the significant ones), then kept.
   */
  readonly tokens: Token[];
}

const keywordSet = new Set<string>(declarationKeywords);
/** Words that begin the lines of a `kind` declaration. */
const kindLineWords = new Set(['setting', 'input', 'control', 'state', 'drive', 'flag', 'on', 'holds']);

/** Parses a whole file. Never throws. */
export function parse(text: string): ParseResult {
  const parser = new Parser(scan(text, { trivia: false }), text);
  let tree: A.FileNode;
  try {
    tree = parser.parseFile();
  } catch (err) {
    // Only a parser bug can land here (the progress guard). Keep what was parsed and say so,
    // rather than take the editor's language features down with it.
    tree = { decls: parser.partial, span: mkSpan(0, text.length) };
    parser.errors.push({
      code: 'syntax-error',
      severity: 'error',
      span: mkSpan(0, Math.min(text.length, 1)),
      message: `internal parser error (please report it): ${(err as Error).message}`,
    });
  }
  let tokens: Token[] | undefined;
  return {
    tree,
    errors: parser.errors,
    get tokens() {
      return (tokens ??= scan(text));
    },
  };
}

class Parser {
  private pos = 0;
  readonly errors: Diagnostic[] = [];
  /** Progress guard: refilled whenever a token is consumed; running dry is a parser bug. */
  private fuel = 256;
  private lastErrorAt = -1;

  constructor(
    private readonly toks: Token[],
    private readonly text: string,
  ) {}

  // ---- token access -------------------------------------------------------------------

  private peek(ahead = 0): Token {
    if (--this.fuel <= 0) throw new Error('parser made no progress: this is a bug in the parser');
    return this.toks[Math.min(this.pos + ahead, this.toks.length - 1)];
  }

  private next(): Token {
    const tok = this.toks[this.pos];
    if (tok.kind !== T.Eof) this.pos++;
    this.fuel = 256;
    return tok;
  }

  private at(kind: T): boolean {
    return this.peek().kind === kind;
  }

  private atWord(word: string): boolean {
    const tok = this.peek();
    return tok.kind === T.Ident && tok.text === word;
  }

  private eat(kind: T): Token | undefined {
    return this.at(kind) ? this.next() : undefined;
  }

  private atEol(): boolean {
    const kind = this.peek().kind;
    return kind === T.Newline || kind === T.Eof;
  }

  private get prevEnd(): number {
    return this.pos > 0 ? this.toks[this.pos - 1].end : 0;
  }

  private skipNewlines(): void {
    while (this.at(T.Newline)) this.next();
  }

  /** Skips the rest of the line, leaving the newline in place. */
  private skipToEol(): void {
    while (!this.atEol()) this.next();
  }

  /** True when the next token begins a new declaration (or the file ends). */
  private atDeclarationStart(): boolean {
    const tok = this.peek();
    return tok.kind === T.Eof || (tok.kind === T.Ident && keywordSet.has(tok.text));
  }

  private error(at: Span, message: string): void {
    // One error per position: a resynchronising parser tends to trip on the same spot twice.
    if (at.start === this.lastErrorAt) return;
    this.lastErrorAt = at.start;
    this.errors.push({ code: 'syntax-error', severity: 'error', span: at, message });
  }

  /** Reports the current token as unexpected, naming what the grammar wanted there. */
  private unexpected(expected: string): void {
    const tok = this.peek();
    const found = this.describe(tok);
    const where = tok.kind === T.Newline || tok.kind === T.Eof ? mkSpan(this.prevEnd, this.prevEnd) : mkSpan(tok.start, tok.end);
    this.error(where, `expected ${expected}, found ${found}`);
  }

  private describe(tok: Token): string {
    if (tok.kind === T.Ident || tok.kind === T.Number || tok.kind === T.Pattern) return `'${tok.text}'`;
    if (tok.kind === T.Error) return `the character '${tok.text}', which the notation does not use`;
    return tokenNames[tok.kind];
  }

  private name(tok: Token): A.Name {
    return { text: tok.text, span: mkSpan(tok.start, tok.end) };
  }

  private literal(tok: Token): A.Literal {
    return { text: tok.text, span: mkSpan(tok.start, tok.end) };
  }

  private expectName(what: string): A.Name | undefined {
    if (this.at(T.Ident) && !(keywordSet.has(this.peek().text) && this.atLineStartToken())) return this.name(this.next());
    this.unexpected(what);
    return undefined;
  }

  private atLineStartToken(): boolean {
    return this.pos === 0 || this.toks[this.pos - 1].kind === T.Newline;
  }

  private expectNumber(what: string): A.Literal | undefined {
    if (this.at(T.Number)) return this.literal(this.next());
    this.unexpected(what);
    return undefined;
  }

  private optionalString(): A.StringLit | undefined {
    const tok = this.eat(T.String);
    if (!tok) return undefined;
    if (tok.unterminated) this.error(mkSpan(tok.start, tok.end), 'this text has no closing quote: add `"` at its end');
    const inner = tok.text.slice(1, tok.unterminated ? undefined : -1);
    return { value: inner.replace(/\\(.)/g, '$1'), span: mkSpan(tok.start, tok.end) };
  }

  /** Ends a header or body line: anything left before the line break is reported once and skipped. */
  private endLine(what: string): void {
    if (!this.atEol()) {
      this.unexpected(`the end of the line after ${what}`);
      this.skipToEol();
    }
  }

  // ---- file -----------------------------------------------------------------------------

  /** file = { declaration | blank line } */
  /** Declarations parsed so far; kept so an internal error still returns a partial tree. */
  readonly partial: A.Decl[] = [];

  parseFile(): A.FileNode {
    const decls = this.partial;
    for (;;) {
      this.skipNewlines();
      if (this.at(T.Eof)) break;
      const tok = this.peek();
      if (tok.kind === T.Ident && keywordSet.has(tok.text)) {
        const decl = this.parseDeclaration(tok.text);
        if (decl) decls.push(decl);
      } else {
        this.error(
          mkSpan(tok.start, tok.end),
          `expected a declaration (${declarationKeywords.join(', ')}) at the start of the line, found ${this.describe(tok)}`,
        );
        this.skipToEol();
      }
    }
    return { decls, span: mkSpan(0, this.text.length) };
  }

  private parseDeclaration(keyword: string): A.Decl | undefined {
    switch (keyword) {
      case 'machine':
        return this.parseMachine();
      case 'kind':
        return this.parseKind();
      case 'bus':
        return this.parseBus();
      case 'part':
        return this.parsePart();
      case 'strobe':
        return this.parseStrobe();
      case 'connect':
        return this.parseConnect();
      case 'field':
        return this.parseField();
      case 'store':
        return this.parseStore();
      case 'word':
        return this.parseWord();
      case 'address':
        return this.parseAddress();
      case 'map':
        return this.parseMap();
      case 'phase':
        return this.parsePhase();
      case 'class':
        return this.parseClass();
    }
    return undefined;
  }

  private keywordSpan(): Span {
    const tok = this.next();
    return mkSpan(tok.start, tok.end);
  }

  private finish<D extends { span: Span }>(decl: D, start: number): D {
    decl.span = mkSpan(start, Math.max(start, this.prevEnd));
    return decl;
  }

  /** machine = "machine" [string] ["isa" name] */
  private parseMachine(): A.MachineDecl {
    const keyword = this.keywordSpan();
    const decl: A.MachineDecl = { kind: 'machine', keyword, span: keyword, options: [] };
    decl.title = this.optionalString();
    if (this.atWord('isa')) {
      this.next();
      decl.isa = this.expectName('the instruction set after `isa`, e.g. `isa rv32i`');
    }
    while (this.at(T.Ident) && this.peek(1).kind === T.Equals) decl.options.push(this.parseOption());
    this.endLine('the machine line');
    return this.finish(decl, keyword.start);
  }

  /** bus = "bus" name width ["keeper"] {option} [string] */
  private parseBus(): A.BusDecl {
    const keyword = this.keywordSpan();
    const decl: A.BusDecl = { kind: 'bus', keyword, span: keyword, options: [] };
    decl.name = this.expectName('a bus name after `bus`, e.g. `bus left 32`');
    if (decl.name) decl.width = this.expectNumber('the bus width in bits, e.g. `bus left 32`');
    while (!this.atEol() && !this.at(T.String)) {
      if (this.atWord('keeper')) {
        const tok = this.next();
        decl.keeper = mkSpan(tok.start, tok.end);
      } else if (this.at(T.Ident) && this.peek(1).kind === T.Equals) {
        decl.options.push(this.parseOption());
      } else {
        this.unexpected('`keeper`, a `name=value` figure or a description in quotes');
        this.skipToEol();
      }
    }
    decl.description = this.optionalString();
    this.endLine('the bus declaration');
    return this.finish(decl, keyword.start);
  }

  /** option = name "=" (name | number) */
  private parseOption(): A.OptionNode {
    const key = this.name(this.next());
    const equals = this.next();
    let value: A.Name | A.Literal | undefined;
    if (this.at(T.Ident)) value = this.name(this.next());
    else if (this.at(T.Number) || this.at(T.Pattern)) value = this.literal(this.next());
    else this.unexpected(`a value after \`${key.text}=\``);
    return { key, value, span: mkSpan(key.span.start, value ? value.span.end : equals.end) };
  }

  /** part = "part" name kind { word | number | option | "->" name } [string] */
  private parsePart(): A.PartDecl {
    const keyword = this.keywordSpan();
    const decl: A.PartDecl = { kind: 'part', keyword, span: keyword, args: [] };
    decl.name = this.expectName('a part name after `part`, e.g. `part pc counter 32`');
    if (decl.name) decl.partKind = this.expectName('the kind of part (regfile, register, counter, instruction, immediate, alu, compare, memory, constant, sequencer, nextstep, loopcount, presetcount)');
    while (decl.partKind && !this.atEol() && !this.at(T.String)) {
      const tok = this.peek();
      if (tok.kind === T.Ident && this.peek(1).kind === T.Equals) {
        const option = this.parseOption();
        decl.args.push({ kind: 'option', option, span: option.span });
      } else if (tok.kind === T.Ident) {
        const name = this.name(this.next());
        decl.args.push({ kind: 'word', name, span: name.span });
      } else if (tok.kind === T.Number) {
        const value = this.literal(this.next());
        decl.args.push({ kind: 'number', value, span: value.span });
      } else if (tok.kind === T.Arrow) {
        this.next();
        const target = this.at(T.Ident) ? this.name(this.next()) : undefined;
        if (!target) this.unexpected('a flag name after `->`, e.g. `-> taken`');
        decl.args.push({ kind: 'arrow', target, span: mkSpan(tok.start, target ? target.span.end : tok.end) });
      } else {
        this.unexpected('a part setting or a description in quotes');
        this.skipToEol();
      }
    }
    decl.description = this.optionalString();
    this.endLine('the part declaration');
    return this.finish(decl, keyword.start);
  }

  /** ref = name ["[" number "]"] */
  private parseRef(what: string): A.Ref | undefined {
    if (!this.at(T.Ident)) {
      this.unexpected(what);
      return undefined;
    }
    const name = this.name(this.next());
    const ref: A.Ref = { name, span: name.span };
    if (this.at(T.LBracket)) {
      this.next();
      ref.index = this.expectNumber('a register number, e.g. `x[0]`, or bus lines, e.g. `result[7:0]`');
      // `bus[hi:lo]`: lines of a bus a strobe drives or loads (the model decides what the name is).
      if (ref.index && this.eat(T.Colon)) ref.indexLo = this.expectNumber('the lowest line, e.g. `result[7:0]`');
      const close = this.eat(T.RBracket);
      if (!close) this.unexpected("']'");
      ref.span = mkSpan(name.span.start, this.prevEnd);
    }
    return ref;
  }

  /** connect = "connect" ref "->" ref [string]: a part's output that drives a bus in every step. */
  private parseConnect(): A.ConnectDecl {
    const keyword = this.keywordSpan();
    const decl: A.ConnectDecl = { kind: 'connect', keyword, span: keyword };
    decl.source = this.parseRef('the part (or part.port) that is always connected, e.g. `connect four -> right`');
    if (decl.source) {
      const arrow = this.eat(T.Arrow);
      if (!arrow) this.unexpected('`->` and the bus it drives');
      else {
        decl.arrow = mkSpan(arrow.start, arrow.end);
        decl.target = this.parseRef('the bus it drives, e.g. `-> right` or `-> result[31:8]`');
      }
    }
    decl.description = this.optionalString();
    this.endLine('the connection');
    return this.finish(decl, keyword.start);
  }

  /** strobe = "strobe" name kind [ref] ["->" ref] ["active" ("high"|"low")] {option} [accept] [string] */
  private parseStrobe(): A.StrobeDecl {
    const keyword = this.keywordSpan();
    const decl: A.StrobeDecl = { kind: 'strobe', keyword, span: keyword, options: [] };
    decl.name = this.expectName('a strobe name after `strobe`, e.g. `strobe pc.oe enable pc -> left`');
    if (decl.name) decl.strobeKind = this.expectName('the strobe kind (enable, read, write, clock, count, end, trap)');
    if (decl.strobeKind) {
      if (this.at(T.Ident) && !this.atWord('active') && !this.atAccept() && this.peek(1).kind !== T.Equals) {
        decl.source = this.parseRef('a part or bus');
      }
      if (this.at(T.Arrow)) {
        const arrow = this.next();
        decl.arrow = mkSpan(arrow.start, arrow.end);
        decl.target = this.parseRef('a part or bus after `->`');
      }
      if (this.atWord('active')) {
        const tok = this.next();
        decl.activeKeyword = mkSpan(tok.start, tok.end);
        if (this.atWord('high') || this.atWord('low')) decl.level = this.name(this.next());
        else this.unexpected('`high` or `low` after `active`');
      }
      while (this.at(T.Ident) && this.peek(1).kind === T.Equals) decl.options.push(this.parseOption());
      if (this.atAccept()) decl.accept = this.parseAccept();
    }
    if (!this.atEol() && !this.at(T.String)) {
      this.unexpected(decl.accept ? 'a description in quotes or the end of the line' : '`active high`, `active low`, `accept CODE` or a description in quotes');
      while (!this.atEol() && !this.at(T.String)) this.next();
    }
    decl.description = this.optionalString();
    this.endLine('the strobe declaration');
    return this.finish(decl, keyword.start);
  }

  /** `accept` followed by a code (a name, not an arrow: `enable accept -> bus` names a part). */
  private atAccept(): boolean {
    return this.atWord('accept') && this.peek(1).kind === T.Ident;
  }

  /** accept = "accept" code { "," code } */
  private parseAccept(): A.AcceptClause {
    const tok = this.next();
    const keyword = mkSpan(tok.start, tok.end);
    const codes: A.Name[] = [];
    do {
      const code = this.expectName('a diagnostic code after `accept`, e.g. `accept width-mismatch`');
      if (!code) break;
      codes.push(code);
    } while (this.eat(T.Comma));
    return { keyword, codes, span: mkSpan(keyword.start, this.prevEnd) };
  }

  /** field = "field" name width ["->" ref] {option} "{" {name "=" number} "}" [string] — the braces may span lines. */
  private parseField(): A.FieldDecl {
    const keyword = this.keywordSpan();
    const decl: A.FieldDecl = { kind: 'field', keyword, span: keyword, options: [], values: [] };
    decl.name = this.expectName('a field name after `field`, e.g. `field alu.fn 4 -> alu { add=0 }`');
    if (decl.name) decl.width = this.expectNumber('the field width in bits');
    if (decl.width && this.at(T.Arrow)) {
      const arrow = this.next();
      decl.arrow = mkSpan(arrow.start, arrow.end);
      decl.target = this.parseRef('the part this field controls');
    }
    while (this.at(T.Ident) && this.peek(1).kind === T.Equals) decl.options.push(this.parseOption());
    if (this.at(T.LBrace)) {
      const open = this.next();
      decl.open = mkSpan(open.start, open.end);
      for (;;) {
        this.skipNewlines();
        if (this.at(T.RBrace)) {
          const close = this.next();
          decl.close = mkSpan(close.start, close.end);
          break;
        }
        if (this.at(T.Eof) || (this.atLineStartToken() && this.atDeclarationStart())) {
          this.error(decl.open, 'this list of field values has no closing `}`');
          return this.finish(decl, keyword.start);
        }
        if (this.at(T.Ident)) {
          const name = this.name(this.next());
          const value: A.FieldValueNode = { name, span: name.span };
          if (this.eat(T.Equals)) {
            value.code = this.at(T.Number) ? this.literal(this.next()) : undefined;
            if (!value.code) this.unexpected(`the code of \`${name.text}\`, e.g. \`${name.text}=3\``);
          } else {
            this.unexpected(`'=' and a code after \`${name.text}\`, e.g. \`${name.text}=3\``);
          }
          value.span = mkSpan(name.span.start, this.prevEnd);
          decl.values.push(value);
          this.eat(T.Comma);
        } else {
          this.unexpected('a value name and code such as `add=0`, or `}`');
          this.next();
        }
      }
    } else if (decl.width && (decl.target || decl.options.length > 0 || !(this.atEol() || (this.at(T.String) && this.lineEndsAfter(1))))) {
      // Without `-> PART` and options the line may end here: a number field (`field next 4`).
      this.unexpected('`{` and the named values, e.g. `{ add=0 sub=8 }`');
    }
    if (!this.atEol() && !this.at(T.String)) {
      this.unexpected('a description in quotes or the end of the line');
      while (!this.atEol() && !this.at(T.String)) this.next();
    }
    decl.description = this.optionalString();
    this.endLine('the field declaration');
    return this.finish(decl, keyword.start);
  }

  /** store = "store" name [string] */
  private parseStore(): A.StoreDecl {
    const keyword = this.keywordSpan();
    const decl: A.StoreDecl = { kind: 'store', keyword, span: keyword };
    decl.name = this.expectName('a store name after `store`, e.g. `store decode`');
    decl.description = this.optionalString();
    this.endLine('the store declaration');
    return this.finish(decl, keyword.start);
  }

  /** word = "word" width "as" chips {option} [string] NL {placement-line}; chips = n "x" w | w {"+" w} */
  private parseWord(): A.WordDecl {
    const keyword = this.keywordSpan();
    const decl: A.WordDecl = { kind: 'word', keyword, span: keyword, options: [], placements: [] };
    decl.width = this.expectNumber('the control-word width in bits, e.g. `word 32 as 4 x 8`');
    if (decl.width) {
      if (this.atWord('as')) {
        const as = this.next();
        decl.chips = this.parseChips(as.start);
      } else {
        this.unexpected('`as` and the chip widths, e.g. `as 4 x 8`');
      }
    }
    while (this.at(T.Ident) && this.peek(1).kind === T.Equals) decl.options.push(this.parseOption());
    decl.description = this.optionalString();
    this.endLine('the word declaration');
    this.parseBodyLines(() => {
      while (!this.atEol()) {
        if (!this.at(T.Ident)) {
          this.unexpected('a strobe or field name and its bit, e.g. `pc.oe 3` or `alu.fn 8..11`');
          this.skipToEol();
          return;
        }
        const target = this.parseRef('a strobe or field name')!;
        const placement: A.Placement = { target, span: target.span };
        placement.lo = this.expectNumber(`the bit of \`${target.name.text}\`, e.g. \`${target.name.text} 3\` or \`${target.name.text} 8..11\``);
        if (placement.lo && this.eat(T.DotDot)) placement.hi = this.expectNumber('the last bit of the range');
        placement.span = mkSpan(target.span.start, this.prevEnd);
        decl.placements.push(placement);
        if (!placement.lo) {
          this.skipToEol();
          return;
        }
        this.eat(T.Comma);
      }
    });
    return this.finish(decl, keyword.start);
  }

  private parseChips(start: number): A.ChipSpec {
    const spec: A.ChipSpec = { span: mkSpan(start, start), widths: [] };
    const first = this.expectNumber('the chip widths, e.g. `4 x 8` or `8 + 8 + 16`');
    if (first) {
      if (this.atWord('x')) {
        this.next();
        spec.count = first;
        const width = this.expectNumber('the width of each chip, e.g. `4 x 8`');
        if (width) spec.widths.push(width);
      } else {
        spec.widths.push(first);
        while (this.eat(T.Plus)) {
          const width = this.expectNumber('a chip width after `+`');
          if (!width) break;
          spec.widths.push(width);
        }
      }
    }
    spec.span = mkSpan(start, this.prevEnd);
    return spec;
  }

  /**
   * Runs `parseLine` for every following line that does not start a declaration. Each call
   * must consume its line's tokens; anything left is reported and skipped.
   */
  private parseBodyLines(parseLine: () => void): void {
    for (;;) {
      this.skipNewlines();
      if (this.atDeclarationStart()) return;
      const before = this.pos;
      parseLine();
      if (this.pos === before) {
        this.unexpected('a line of this declaration');
        this.next();
      }
      this.endLine('this line');
    }
  }

  /** input = name ["[" number [":" number] "]"] */
  private parseInput(what: string): A.InputRef | undefined {
    if (!this.at(T.Ident)) {
      this.unexpected(what);
      return undefined;
    }
    const name = this.name(this.next());
    const input: A.InputRef = { name, span: name.span };
    if (this.at(T.LBracket)) {
      this.next();
      input.bitHi = this.expectNumber('an instruction bit number, e.g. `ir[20]` or `ir[14:12]`');
      if (input.bitHi && this.eat(T.Colon)) input.bitLo = this.expectNumber('the low bit number, e.g. `ir[14:12]`');
      if (!this.eat(T.RBracket)) this.unexpected("']'");
      input.span = mkSpan(name.span.start, this.prevEnd);
    }
    return input;
  }

  /** address = "address" width [string] NL {source-line}; source = input bit [".." bit] */
  private parseAddress(): A.AddressDecl {
    const keyword = this.keywordSpan();
    const decl: A.AddressDecl = { kind: 'address', keyword, span: keyword, sources: [] };
    decl.width = this.expectNumber('the number of address lines, e.g. `address 13`');
    decl.description = this.optionalString();
    this.endLine('the address declaration');
    this.parseBodyLines(() => {
      while (!this.atEol()) {
        const input = this.parseInput('an address input (step, opcode, funct3, f7b5, ir[n] or a flag) and its lines, e.g. `step 0..2`');
        if (!input) {
          this.skipToEol();
          return;
        }
        const source: A.AddressSource = { input, span: input.span };
        source.lo = this.expectNumber(`the address line(s) of \`${input.name.text}\`, e.g. \`${input.name.text} 5\` or \`${input.name.text} 5..7\``);
        if (source.lo && this.eat(T.DotDot)) source.hi = this.expectNumber('the last address line of the range');
        source.span = mkSpan(input.span.start, this.prevEnd);
        decl.sources.push(source);
        if (!source.lo) {
          this.skipToEol();
          return;
        }
        this.eat(T.Comma);
      }
    });
    return this.finish(decl, keyword.start);
  }

  /** map = "map" name "(" input {"," input} ")" "->" ref [string] NL {row {row}}; row = pattern {pattern} value */
  private parseMap(): A.MapDecl {
    const keyword = this.keywordSpan();
    const decl: A.MapDecl = { kind: 'map', keyword, span: keyword, inputs: [], rows: [] };
    decl.name = this.expectName('a map name after `map`, e.g. `map op_fn (funct3, f7b5) -> alu.fn`');
    if (decl.name) {
      if (this.eat(T.LParen)) {
        while (!this.atEol() && !this.at(T.RParen)) {
          const input = this.parseInput('an address input such as funct3, f7b5 or ir[20]');
          if (!input) break;
          decl.inputs.push(input);
          if (!this.eat(T.Comma)) break;
        }
        if (!this.eat(T.RParen)) this.unexpected("')' after the map's inputs");
      } else {
        this.unexpected("'(' and the map's inputs, e.g. `(funct3, f7b5)`");
      }
      if (this.at(T.Arrow)) {
        const arrow = this.next();
        decl.arrow = mkSpan(arrow.start, arrow.end);
        decl.output = this.parseRef('the field this map sets, e.g. `-> alu.fn`');
      } else if (!this.atEol()) {
        this.unexpected('`->` and the field this map sets');
      }
    }
    while (!this.atEol() && !this.at(T.String)) this.next();
    decl.description = this.optionalString();
    this.endLine('the map declaration');
    const width = Math.max(1, decl.inputs.length);
    this.parseBodyLines(() => {
      while (!this.atEol()) {
        const start = this.peek().start;
        const patterns: A.Literal[] = [];
        while (patterns.length < width && (this.at(T.Number) || this.at(T.Pattern))) patterns.push(this.literal(this.next()));
        if (patterns.length < width) {
          this.unexpected(`${width} bit pattern(s) (one per input) then a value name, e.g. \`000 1 sub\``);
          this.skipToEol();
          return;
        }
        const row: A.MapRow = { patterns, span: mkSpan(start, this.prevEnd) };
        if (this.at(T.Ident)) row.value = this.name(this.next());
        else if (this.at(T.Number)) row.number = this.literal(this.next());
        else this.unexpected('the value name for this row (or, for a number field, a number)');
        row.span = mkSpan(start, this.prevEnd);
        decl.rows.push(row);
        if (!row.value && !row.number) {
          this.skipToEol();
          return;
        }
        this.eat(T.Comma);
      }
    });
    return this.finish(decl, keyword.start);
  }

  /** phase = "phase" name [string] NL {step | use} */
  // ---- part kinds ---------------------------------------------------------------------

  /**
   * kind = "kind" name [string] NL { kind-line NL }
   * kind-line = setting | input | control | state | drive | flag | on   (see docs/notation.md)
   * Expressions are kept as text with their spans; `core/parts/expr` parses and checks them.
   */
  private parseKind(): A.KindDecl {
    const keyword = this.keywordSpan();
    const decl: A.KindDecl = { kind: 'kind', keyword, span: keyword, items: [] };
    decl.name = this.expectName('a kind name after `kind`, e.g. `kind mux2`');
    decl.description = this.optionalString();
    this.endLine('the kind declaration');
    this.parseBodyLines(() => {
      const item = this.parseKindLine();
      if (item) decl.items.push(item);
    });
    return this.finish(decl, keyword.start);
  }

  private parseKindLine(): A.KindItem | undefined {
    const tok = this.peek();
    if (tok.kind !== T.Ident || !kindLineWords.has(tok.text)) {
      this.unexpected(`a line of the kind (${[...kindLineWords].join(', ')})`);
      this.skipToEol();
      return undefined;
    }
    const word = tok.text as A.KindItem['item'];
    const keyword = this.keywordSpan();
    const start = keyword.start;
    const name = this.expectName(`a name after \`${word}\``);
    const done = <L extends A.KindItem>(line: L): L => {
      line.description ??= this.optionalString();
      line.span = mkSpan(start, Math.max(start, this.prevEnd));
      return line;
    };
    switch (word) {
      case 'setting': {
        const line: A.KindSettingLine = { item: 'setting', keyword, name, choices: [], span: keyword };
        if (name) line.type = this.atWord('number') || this.atWord('choice') ? this.name(this.next()) : undefined;
        if (name && !line.type) this.unexpected('`number` or `choice` after the setting name');
        if (line.type?.text === 'choice') while (this.at(T.Ident)) line.choices.push(this.name(this.next()));
        if (line.type && this.eat(T.Equals)) {
          if (this.at(T.Ident)) line.default = this.name(this.next());
          else if (this.at(T.Number) || this.at(T.Pattern)) line.default = this.literal(this.next());
          else this.unexpected('a default value after `=`');
        }
        return done(line);
      }
      case 'input': {
        const line: A.KindInputLine = { item: 'input', keyword, name, span: keyword };
        if (name) line.width = this.parseSize('the input\'s width (a number or a number setting)');
        if (this.atWord('after')) {
          this.next();
          line.after = this.expectName('the word the part line writes before this input, e.g. `after from`');
          // `after from instruction`: the part line may name its source, else the instruction register.
          if (this.atWord('instruction')) line.instruction = this.keywordSpan();
        } else if (this.atWord('instruction')) line.instruction = this.keywordSpan();
        else if (this.atWord('keyed')) line.keyed = this.keywordSpan();
        else if (this.atWord('field')) line.field = this.keywordSpan();
        return done(line);
      }
      case 'holds': {
        const line: A.KindHoldsLine = { item: 'holds', keyword, name, span: keyword };
        if (name) line.state = this.expectName('the state that holds it, e.g. `holds registers r`');
        // `holds return r0 r1`: several states, the top of the stack first (kinds.ts says which roles may).
        while (line.state && this.at(T.Ident)) (line.more ??= []).push(this.name(this.next()));
        return done(line);
      }
      case 'control': {
        const line: A.KindControlLine = { item: 'control', keyword, name, values: [], span: keyword };
        if (name && !this.eat(T.Colon)) this.unexpected('`:` and the value names, e.g. `control fn: add sub`');
        while (this.at(T.Ident)) line.values.push(this.name(this.next()));
        if (this.eat(T.Equals)) line.default = this.expectName('the value the control holds when no field drives it, e.g. `= word`');
        return done(line);
      }
      case 'state': {
        const line: A.KindStateLine = { item: 'state', keyword, name, span: keyword };
        if (name) line.width = this.parseSize('the state\'s width (a number or a number setting)');
        if (this.atWord('x')) {
          this.next();
          line.count = this.parseSize('how many registers, e.g. `x 32`');
        }
        if (this.eat(T.Equals)) line.reset = this.restOfLineExpr('the value after reset');
        return done(line);
      }
      case 'drive': {
        const line: A.KindDriveLine = { item: 'drive', keyword, name, span: keyword };
        if (name) line.param = this.portParameter();
        if (name) line.width = this.parseSize('the width this port drives');
        if (line.width && !this.eat(T.Equals)) this.unexpected('`=` and the value the port drives');
        else if (line.width) line.expr = this.restOfLineExpr('the value the port drives');
        return done(line);
      }
      case 'flag': {
        const line: A.KindFlagLine = { item: 'flag', keyword, name, span: keyword };
        if (name && !this.eat(T.Equals)) this.unexpected('`=` and the flag\'s one-bit value');
        else if (name) line.expr = this.restOfLineExpr('the flag\'s value');
        return done(line);
      }
      case 'on': {
        const line: A.KindEdgeLine = { item: 'on', keyword, name, assigns: [], span: keyword };
        if (name) line.param = this.portParameter();
        if (name && this.atWord('always')) line.always = this.keywordSpan();
        else if (name && !this.at(T.Colon)) line.width = this.parseSize('the width of the bus value, `always` or `:`');
        if (name && !this.eat(T.Colon)) {
          this.unexpected('`:` and what happens at the closing edge, e.g. `on load 32: q <= in`');
          this.skipToEol();
          return done(line);
        }
        for (const piece of this.splitTopLevel()) {
          const assign = this.kindAssign(piece);
          if (assign) line.assigns.push(assign);
        }
        return done(line);
      }
    }
  }

  /** `[n]` after a port's name: the port is numbered, and strobes name it `PART[3]`. */
  private portParameter(): A.Name | undefined {
    if (!this.eat(T.LBracket)) return undefined;
    const param = this.expectName('the name of the port\'s number, e.g. `drive at[n] 32 = r[n]`');
    if (!this.eat(T.RBracket)) this.unexpected("']'");
    return param;
  }

  private parseSize(what: string): A.SizeRef | undefined {
    if (this.at(T.Number)) return this.literal(this.next());
    if (this.at(T.Ident)) return this.name(this.next());
    this.unexpected(what);
    return undefined;
  }

  /** The tokens up to the end of the line (a trailing description excepted), as one expression text. */
  private restOfLineExpr(what: string): A.ExprText | undefined {
    const toks: Token[] = [];
    while (!this.atEol() && !(this.at(T.String) && this.lineEndsAfter(1))) toks.push(this.next());
    if (toks.length === 0) {
      this.unexpected(what);
      return undefined;
    }
    return this.exprOf(toks);
  }

  private lineEndsAfter(ahead: number): boolean {
    const kind = this.peek(ahead).kind;
    return kind === T.Newline || kind === T.Eof;
  }

  private exprOf(toks: Token[]): A.ExprText {
    const span = mkSpan(toks[0].start, toks[toks.length - 1].end);
    return { text: this.text.slice(span.start, span.end), span };
  }

  /** The rest of the line split at commas outside brackets (`{a, b}` and `sext(x, 32)` stay whole). */
  private splitTopLevel(): Token[][] {
    const pieces: Token[][] = [[]];
    let depth = 0;
    while (!this.atEol() && !(this.at(T.String) && this.lineEndsAfter(1))) {
      const tok = this.next();
      if (tok.kind === T.LParen || tok.kind === T.LBracket || tok.kind === T.LBrace) depth++;
      if ((tok.kind === T.RParen || tok.kind === T.RBracket || tok.kind === T.RBrace) && depth > 0) depth--;
      if (tok.kind === T.Comma && depth === 0) pieces.push([]);
      else pieces[pieces.length - 1].push(tok);
    }
    return pieces;
  }

  /** `TARGET [ "[" INDEX "]" ] "<=" EXPR [ "when" COND ]`, from one comma-separated piece. */
  private kindAssign(toks: Token[]): A.KindAssign | undefined {
    const whole = toks.length ? mkSpan(toks[0].start, toks[toks.length - 1].end) : mkSpan(this.prevEnd, this.prevEnd);
    if (toks.length === 0 || toks[0].kind !== T.Ident) {
      this.error(whole, 'expected a state name and `<=`, e.g. `q <= in`');
      return undefined;
    }
    const assign: A.KindAssign = { target: this.name(toks[0]), span: whole };
    let i = 1;
    if (toks[i]?.kind === T.LBracket) {
      let depth = 0;
      const from = i + 1;
      for (; i < toks.length; i++) {
        if (toks[i].kind === T.LBracket) depth++;
        if (toks[i].kind === T.RBracket && --depth === 0) break;
      }
      if (i >= toks.length || i === from) {
        this.error(whole, 'expected `]` after the register index, e.g. `r[ir[11:7]] <= in`');
        return undefined;
      }
      assign.index = this.exprOf(toks.slice(from, i));
      i++;
    }
    if (!(toks[i]?.kind === T.Error && toks[i].text === '<' && toks[i + 1]?.kind === T.Equals && toks[i + 1].start === toks[i].end)) {
      const at = toks[i] ? mkSpan(toks[i].start, toks[i].end) : mkSpan(whole.end, whole.end);
      this.error(at, `expected \`<=\` after \`${assign.target.text}\`, e.g. \`${assign.target.text} <= in\``);
      return undefined;
    }
    i += 2;
    const whenAt = toks.findIndex((t, k) => k >= i && t.kind === T.Ident && t.text === 'when');
    const exprToks = toks.slice(i, whenAt < 0 ? undefined : whenAt);
    if (exprToks.length === 0) {
      this.error(mkSpan(toks[i - 1].end, toks[i - 1].end), 'expected the value to store after `<=`');
      return undefined;
    }
    assign.expr = this.exprOf(exprToks);
    if (whenAt >= 0) {
      const cond = toks.slice(whenAt + 1);
      if (cond.length === 0) this.error(mkSpan(toks[whenAt].start, toks[whenAt].end), 'expected a one-bit condition after `when`');
      else assign.when = this.exprOf(cond);
    }
    return assign;
  }

  private parsePhase(): A.PhaseDecl {
    const keyword = this.keywordSpan();
    const decl: A.PhaseDecl = { kind: 'phase', keyword, span: keyword, body: [] };
    decl.name = this.expectName('a phase name after `phase`, e.g. `phase fetch`');
    decl.description = this.optionalString();
    this.endLine('the phase declaration');
    this.parseBodyLines(() => this.parseBodyItem(decl.body, false));
    return this.finish(decl, keyword.start);
  }

  /** class = "class" name {option} [string] NL {step | use} */
  private parseClass(): A.ClassDecl {
    const keyword = this.keywordSpan();
    const decl: A.ClassDecl = { kind: 'class', keyword, span: keyword, options: [], body: [] };
    decl.name = this.expectName('a class name after `class`, e.g. `class OP opcode=0110011`');
    while (this.at(T.Ident) && this.peek(1).kind === T.Equals) decl.options.push(this.parseOption());
    if (!this.atEol() && !this.at(T.String)) {
      this.unexpected('`opcode=` and seven bits, e.g. `opcode=0110011`');
      while (!this.atEol() && !this.at(T.String)) this.next();
    }
    decl.description = this.optionalString();
    this.endLine('the class declaration');
    this.parseBodyLines(() => this.parseBodyItem(decl.body, true));
    return this.finish(decl, keyword.start);
  }

  /** body-item = "use" name ["at" number] | step; step = number [guard] ":" action {"," [NL] action} */
  private parseBodyItem(body: A.BodyItem[], allowUse: boolean): void {
    if (this.atWord('use')) {
      const tok = this.next();
      const use: A.UseLine = { kind: 'use', keyword: mkSpan(tok.start, tok.end), span: mkSpan(tok.start, tok.end) };
      use.phase = this.expectName('the name of a phase after `use`, e.g. `use fetch`');
      if (use.phase && this.atWord('at')) {
        this.next();
        use.at = this.expectNumber('the step number where the phase starts, e.g. `use fetch at 0`');
      }
      use.span = mkSpan(tok.start, this.prevEnd);
      if (!allowUse) this.error(use.span, 'a phase cannot use another phase: list its steps here instead');
      body.push(use);
      return;
    }
    if (!this.at(T.Number)) {
      this.unexpected('a step such as `2: alu.oe, x.rd.ck`' + (allowUse ? ' or `use PHASE`' : ''));
      this.skipToEol();
      return;
    }
    const number = this.literal(this.next());
    const step: A.StepLine = { kind: 'step', number, actions: [], span: number.span };
    if (this.atWord('if') || this.atWord('else')) step.guard = this.parseGuard();
    const colon = this.eat(T.Colon);
    if (colon) {
      step.colon = mkSpan(colon.start, colon.end);
    } else if (this.at(T.Ident)) {
      // `2 alu.oe`: report the missing colon and read the strobes anyway.
      this.unexpected("':' after the step number, e.g. `2: alu.oe`");
    } else {
      this.unexpected("':' after the step number, e.g. `2: alu.oe`");
      this.skipToEol();
      step.span = mkSpan(number.span.start, this.prevEnd);
      body.push(step);
      return;
    }
    for (;;) {
      if (this.atEol()) break;
      const action = this.parseAction();
      if (action) step.actions.push(action);
      else {
        while (!this.atEol() && !this.at(T.Comma)) this.next();
      }
      if (this.eat(T.Comma)) {
        // A trailing comma continues the step on the next line.
        if (this.at(T.Newline)) {
          const save = this.pos;
          this.skipNewlines();
          if (this.atDeclarationStart() || this.at(T.Number) || this.atWord('use')) {
            this.pos = save;
            break;
          }
        }
        continue;
      }
      if (!this.atEol()) {
        // A missing or wrong separator: report it, then read on from the next name so the
        // rest of the step still counts.
        this.unexpected("',' between the strobes of a step");
        while (!this.atEol() && !this.at(T.Comma) && !this.at(T.Ident)) this.next();
        if (this.eat(T.Comma) || this.at(T.Ident)) continue;
      }
      break;
    }
    step.span = mkSpan(number.span.start, this.prevEnd);
    body.push(step);
  }

  /** guard = "if" term {"&" term} | "else"; term = ["!"] input ["=" pattern] */
  private parseGuard(): A.GuardNode {
    const tok = this.next();
    if (tok.text === 'else') {
      const at = mkSpan(tok.start, tok.end);
      return { terms: [], elseKeyword: at, span: at };
    }
    const guard: A.GuardNode = { terms: [], span: mkSpan(tok.start, tok.end) };
    for (;;) {
      const start = this.peek().start;
      const bang = this.eat(T.Bang);
      const input = this.parseInput('a flag or an instruction field in the guard, e.g. `if taken` or `if funct3=101`');
      if (!input) break;
      const term: A.GuardTerm = { input, span: mkSpan(start, input.span.end) };
      if (bang) term.negated = mkSpan(bang.start, bang.end);
      if (this.eat(T.Equals)) {
        if (this.at(T.Number) || this.at(T.Pattern)) term.pattern = this.literal(this.next());
        else this.unexpected('a bit pattern after `=`, e.g. `funct3=101`');
      }
      term.span = mkSpan(start, this.prevEnd);
      guard.terms.push(term);
      if (!this.eat(T.Amp)) break;
    }
    guard.span = mkSpan(tok.start, this.prevEnd);
    return guard;
  }

  /** action = ref ["=" name] */
  private parseAction(): A.ActionNode | undefined {
    if (!this.at(T.Ident)) {
      this.unexpected('a strobe name or `field=value`');
      return undefined;
    }
    const target = this.parseRef('a strobe name')!;
    const action: A.ActionNode = { target, span: target.span };
    // `goto N`, `call N`: a jump or a call of the sequencer (model/buildSteps.ts expands them).
    if ((target.name.text === 'goto' || target.name.text === 'call') && !target.index && (this.at(T.Number) || this.at(T.Pattern))) {
      action.number = this.literal(this.next());
      action.span = mkSpan(target.span.start, this.prevEnd);
      return action;
    }
    const equals = this.eat(T.Equals);
    if (equals) {
      action.equals = mkSpan(equals.start, equals.end);
      if (this.at(T.Ident)) action.value = this.name(this.next());
      else if (this.at(T.Number) || this.at(T.Pattern)) action.number = this.literal(this.next());
      else this.unexpected(`a value name, a map name or (for a number field) a number after \`${target.name.text}=\``);
    }
    action.span = mkSpan(target.span.start, this.prevEnd);
    return action;
  }
}
