// Document formatting. It only changes the spaces within lines: never a token, never a line
// break, never a comment's text (trailing spaces aside). Declaration lines start in column 0,
// body lines are indented by two; runs of bus, part, strobe and field lines are aligned in
// columns, as are word placements, address sources and map rows, and the actions of step
// lines. The layout is a function of the tokens and the line breaks alone, so formatting
// twice changes nothing; and since the parser reads only tokens and line breaks, the model
// cannot change. A final check re-scans the result and gives up (no edits) if any token
// differs. Declarations with syntax errors are left exactly as they are.
import type { Analysis } from '../analysis';
import type * as A from '../syntax/ast';
import { declarationKeywords } from '../syntax/ast';
import { scan } from '../syntax/scanner';
import { T, type Token } from '../syntax/tokens';
import { contentSpan } from './lookup';
import type { TextEdit } from '../text/diagnostic';

const indentUnit = '  ';
const cellGap = '   ';
/** Cells longer than the shortest in their column by more than this do not widen the column. */
const outlierSlack = 20;
const declarationWords = new Set<string>(declarationKeywords);

type Role = 'blank' | 'comment' | 'frozen' | 'header' | 'step' | 'stepCont' | 'use' | 'placement' | 'source' | 'row' | 'body' | 'kindLine';

interface Line {
  index: number;
  start: number;
  end: number;
  original: string;
  /** Non-trivia tokens, without the line break. */
  tokens: Token[];
  comment?: string;
  role: Role;
  decl?: A.Decl;
  /** For step lines and their continuations: the step they belong to. */
  step?: A.StepLine;
  /** Leading spaces of the formatted line. */
  indent: string;
  /** The formatted text, set once decided. */
  text?: string;
}

export function formatDocument(analysis: Analysis): TextEdit[] {
  const lines = splitLines(analysis);
  assignRoles(analysis, lines);
  layoutHeaders(lines);
  layoutSteps(lines);
  layoutRows(lines, 'placement');
  layoutRows(lines, 'source');
  layoutRows(lines, 'row');
  for (const line of lines) if (line.text === undefined) line.text = plainLine(line);
  const formatted = lines.map((l) => l.text!);
  if (!sameTokens(analysis, lines, formatted)) return [];
  const edits: TextEdit[] = [];
  for (const line of lines) {
    if (line.text !== line.original) edits.push({ span: { start: line.start, end: line.end }, newText: line.text! });
  }
  return edits;
}

function splitLines(analysis: Analysis): Line[] {
  const index = analysis.lines;
  const lines: Line[] = [];
  for (let i = 0; i < index.lineCount; i++) {
    const start = index.lineStarts[i];
    const end = index.lineEnd(i);
    lines.push({ index: i, start, end, original: analysis.text.slice(start, end), tokens: [], role: 'blank', indent: '' });
  }
  let lineNo = 0;
  for (const token of scan(analysis.text)) {
    if (token.kind === T.Eof) break;
    if (token.kind === T.Newline) {
      lineNo++;
      continue;
    }
    if (token.kind === T.Whitespace) continue;
    const line = lines[lineNo];
    if (token.kind === T.Comment) line.comment = token.text.trimEnd();
    else line.tokens.push(token);
  }
  return lines;
}

function assignRoles(analysis: Analysis, lines: Line[]): void {
  const lineOf = (offset: number) => analysis.lines.position(offset).line;
  const frozen = new Set<number>();
  const freeze = (from: number, to: number) => {
    for (let i = lineOf(from); i <= lineOf(to); i++) frozen.add(i);
  };
  // A declaration with a syntax error is kept as written, and so is any line the parser
  // could not place in a declaration.
  const errorStarts = analysis.parse.errors.map((e) => e.span.start).sort((a, b) => a - b);
  for (const decl of analysis.parse.tree.decls) {
    const span = contentSpan(analysis, decl.span);
    const hasError = errorStarts.some((s) => s >= decl.span.start && s <= span.end);
    if (hasError) freeze(span.start, span.end);
    const first = lineOf(span.start);
    const last = lineOf(span.end);
    for (let i = first; i <= last; i++) lines[i].decl = decl;
    if (decl.kind === 'class' || decl.kind === 'phase') {
      for (const item of decl.body) {
        const itemFirst = lineOf(item.span.start);
        for (let i = itemFirst; i <= lineOf(item.span.end); i++) lines[i].step = item.kind === 'step' ? item : undefined;
      }
    }
  }
  for (const error of analysis.parse.errors) freeze(error.span.start, error.span.end);
  for (const line of lines) {
    // Expression characters (`<`, `?`, `|`...) are legitimate in a kind's lines; elsewhere they freeze the line.
    const inKind = line.decl?.kind === 'kind';
    if (line.tokens.some((t) => (t.kind === T.Error && !inKind) || (t.kind === T.String && t.unterminated))) frozen.add(line.index);
    const first = line.tokens[0];
    if (frozen.has(line.index)) line.role = 'frozen';
    else if (!first) line.role = line.comment ? 'comment' : 'blank';
    else if (first.kind === T.Ident && declarationWords.has(first.text) && line.decl && line.decl.keyword.start === first.start) line.role = 'header';
    else if (!line.decl) line.role = 'frozen';
    else if (line.decl.kind === 'class' || line.decl.kind === 'phase') {
      if (first.kind === T.Ident && first.text === 'use') line.role = 'use';
      else if (line.step && line.step.number.span.start === first.start) line.role = 'step';
      else if (line.step) line.role = 'stepCont';
      else line.role = 'frozen';
    } else if (line.decl.kind === 'kind') line.role = 'kindLine';
    else if (line.decl.kind === 'word') line.role = 'placement';
    else if (line.decl.kind === 'address') line.role = 'source';
    else if (line.decl.kind === 'map') line.role = 'row';
    else line.role = 'body';
  }
  // Word and address layouts under a `store` line are indented one step, their bodies two.
  const decls = analysis.parse.tree.decls;
  const underStore = new Set(decls.filter((d, i) => (d.kind === 'word' || d.kind === 'address') && decls.slice(0, i).some((e) => e.kind === 'store')));
  for (const line of lines) {
    if (line.role === 'frozen') line.text = line.original;
    if (!line.decl) continue;
    const base = underStore.has(line.decl) ? indentUnit : '';
    if (line.role === 'header') line.indent = base;
    else if (line.role !== 'comment' || line.start > line.decl.span.start) line.indent = base + indentUnit;
  }
  // A comment line outside a declaration belongs to the code it touches: the declaration right
  // below it, else the body right above it, else the line below; alone, it starts the line.
  const outside = (line: Line) => line.role === 'comment' && !(line.decl && line.start > line.decl.span.start);
  const touching = (from: number, step: number): Line | undefined => {
    for (let i = from + step; i >= 0 && i < lines.length; i += step) {
      if (lines[i].role === 'blank') return undefined;
      if (!outside(lines[i])) return lines[i];
    }
    return undefined;
  };
  for (const line of lines) {
    if (!outside(line)) continue;
    const below = touching(line.index, 1);
    const above = touching(line.index, -1);
    if (below?.role === 'header') line.indent = below.indent;
    else if (above && above.role !== 'header' && above.role !== 'frozen' && above.decl) line.indent = above.indent;
    else if (below && below.role !== 'frozen') line.indent = below.indent;
    else line.indent = '';
  }
}

/** The space between two tokens on one line. */
function gap(a: Token, b: Token): string {
  const tight = (k: T) => k === T.Equals || k === T.DotDot;
  if (tight(a.kind) || tight(b.kind)) return '';
  if (b.kind === T.Comma || b.kind === T.Colon || b.kind === T.RParen || b.kind === T.RBracket || b.kind === T.LBracket) return '';
  if (a.kind === T.LParen || a.kind === T.LBracket || a.kind === T.Bang) return '';
  if (a.kind === T.Colon && b.kind === T.Number) return '';
  return ' ';
}

function join(tokens: Token[]): string {
  let out = '';
  for (let i = 0; i < tokens.length; i++) out += (i > 0 ? gap(tokens[i - 1], tokens[i]) : '') + tokens[i].text;
  return out;
}

function withComment(text: string, comment: string | undefined): string {
  if (!comment) return text;
  return text.trim() === '' ? text + comment : text + '  ' + comment;
}

function plainLine(line: Line): string {
  if (line.role === 'blank') return '';
  // A kind's lines hold expressions whose spacing is the author's: only the indentation changes.
  if (line.role === 'kindLine') return (line.indent + line.original.trim()).trimEnd();
  return (line.indent + withComment(join(line.tokens), line.comment)).trimEnd();
}

// ---- declaration lines ----------------------------------------------------------------------

/** Splits a bus, part, strobe or field line into its column slots; undefined when it is unusual. */
function headerSlots(tokens: Token[]): string[] | undefined {
  const keyword = tokens[0].text;
  if (tokens.length < 3) return undefined;
  const isOptionAt = (i: number) => tokens[i]?.kind === T.Ident && tokens[i + 1]?.kind === T.Equals;
  const descIndex = tokens.findIndex((t, i) => i > 0 && t.kind === T.String);
  const body = descIndex < 0 ? tokens : tokens.slice(0, descIndex);
  const desc = descIndex < 0 ? '' : join(tokens.slice(descIndex));
  if (descIndex >= 0 && descIndex !== tokens.length - 1) return undefined;
  switch (keyword) {
    case 'bus': {
      let i = 3;
      let keeper = '';
      if (body[i]?.text === 'keeper') {
        keeper = 'keeper';
        i++;
      }
      for (let j = i; j < body.length; j += 3) if (!isOptionAt(j)) return undefined;
      return [body[0].text, body[1].text, body[2].text, keeper, join(body.slice(i)), desc];
    }
    case 'part':
      return [body[0].text, body[1].text, body[2].text, join(body.slice(3)), desc];
    case 'strobe': {
      let i = 2;
      while (i < body.length && body[i].text !== 'active' && body[i].text !== 'accept' && !isOptionAt(i)) i++;
      const wiring = join(body.slice(2, i));
      let active = '';
      if (body[i]?.text === 'active') {
        active = join(body.slice(i, i + 2));
        i += 2;
      }
      return [body[0].text, body[1].text, wiring, active, join(body.slice(i)), desc];
    }
    case 'field':
      return [body[0].text, body[1].text, join(tokens.slice(2))];
  }
  return undefined;
}

/** Pads cells to their column widths; the last column and empty trailing cells are not padded. */
function alignCells(rows: string[][], separators: string[]): string[] {
  const columns = Math.max(0, ...rows.map((r) => r.length));
  const widths: number[] = [];
  for (let c = 0; c < columns; c++) {
    const lengths = rows.filter((r) => c < r.length - 1 && r.slice(c + 1).some((x) => x !== '')).map((r) => r[c].length);
    if (lengths.length === 0) {
      widths.push(0);
      continue;
    }
    const cap = Math.min(...lengths) + outlierSlack;
    widths.push(Math.max(...lengths.filter((l) => l <= cap)));
  }
  return rows.map((row) => {
    let lastFilled = row.length - 1;
    while (lastFilled > 0 && row[lastFilled] === '') lastFilled--;
    let out = '';
    for (let c = 0; c <= lastFilled; c++) {
      if (c > 0) out += separators[Math.min(c - 1, separators.length - 1)];
      out += c < lastFilled ? row[c].padEnd(widths[c]) : row[c];
    }
    return out.replace(/ +$/, '');
  });
}

function layoutHeaders(lines: Line[]): void {
  let run: { line: Line; slots: string[] }[] = [];
  const flush = () => {
    if (run.length) {
      const keyword = run[0].line.tokens[0].text;
      // Columns empty on every line are dropped; two spaces go before a description, one
      // between other columns.
      const slotCount = run[0].slots.length;
      const kept = Array.from({ length: slotCount }, (_, c) => c).filter((c) => run.some((r) => r.slots[c] !== ''));
      const separators = kept.slice(1).map((c) => (c === slotCount - 1 && keyword !== 'field' ? '  ' : ' '));
      const texts = alignCells(
        run.map((r) => kept.map((c) => r.slots[c])),
        separators,
      );
      run.forEach((r, i) => (r.line.text = withComment(r.line.indent + texts[i], r.line.comment)));
    }
    run = [];
  };
  for (const line of lines) {
    if (line.role !== 'header') {
      flush();
      continue;
    }
    const slots = headerSlots(line.tokens);
    if (!slots || (run.length && run[0].line.tokens[0].text !== line.tokens[0].text)) flush();
    if (!slots) {
      line.text = withComment(line.indent + join(line.tokens), line.comment);
      continue;
    }
    run.push({ line, slots });
  }
  flush();
}

// ---- step lines ---------------------------------------------------------------------------

function layoutSteps(lines: Line[]): void {
  let run: Line[] = [];
  const flush = () => {
    const heads = run.map((line) => {
      const colon = line.tokens.findIndex((t) => t.kind === T.Colon);
      return { line, head: join(line.tokens.slice(0, colon + 1)), actions: join(line.tokens.slice(colon + 1)) };
    });
    const width = Math.max(0, ...heads.map((h) => h.head.length));
    for (const { line, head, actions } of heads) {
      line.text = withComment((line.indent + head.padEnd(width) + (actions ? ' ' + actions : '')).trimEnd(), line.comment);
      // Continuation lines line up with the first action.
      for (let i = line.index + 1; i < lines.length && lines[i].step === line.step && lines[i].role !== 'step'; i++) {
        const cont = lines[i];
        if (cont.role === 'stepCont') cont.text = withComment(' '.repeat(line.indent.length + width + 1) + join(cont.tokens), cont.comment);
        else if (cont.role === 'comment') cont.text = ' '.repeat(line.indent.length + width + 1) + cont.comment;
      }
    }
    run = [];
  };
  for (const line of lines) {
    if (line.role === 'step' && line.tokens.some((t) => t.kind === T.Colon)) {
      if (run.length && run[0].decl !== line.decl) flush();
      run.push(line);
    } else if (line.role === 'stepCont' || (line.role === 'comment' && (line.decl?.kind === 'class' || line.decl?.kind === 'phase'))) {
      // Comment lines inside a body do not break the alignment of the steps around them.
      continue;
    } else {
      flush();
    }
  }
  flush();
}

// ---- rows of word, address and map bodies -----------------------------------------------------

/** Splits a body line into cells, each a list of sub-cells aligned separately. */
function rowCells(line: Line): string[][] | undefined {
  const tokens = line.tokens;
  const cells: string[][] = [];
  let i = 0;
  const take = (k: T) => (tokens[i]?.kind === k ? tokens[i++] : undefined);
  const range = (): string | undefined => {
    const lo = take(T.Number);
    if (!lo) return undefined;
    if (tokens[i]?.kind === T.DotDot) {
      i++;
      const hi = take(T.Number);
      if (!hi) return undefined;
      return `${lo.text}..${hi.text}`;
    }
    return lo.text;
  };
  while (i < tokens.length) {
    if (line.role === 'row') {
      const width = line.decl?.kind === 'map' ? Math.max(1, line.decl.inputs.length) : 1;
      const patterns: string[] = [];
      while (patterns.length < width && (tokens[i]?.kind === T.Number || tokens[i]?.kind === T.Pattern)) patterns.push(tokens[i++].text);
      const value = take(T.Ident);
      if (patterns.length < width || !value) return undefined;
      cells.push([...patterns, value.text + (take(T.Comma) ? ',' : '')]);
      continue;
    }
    const name = take(T.Ident);
    if (!name) return undefined;
    let label = name.text;
    if (tokens[i]?.kind === T.LBracket) {
      const close = tokens.findIndex((t, j) => j > i && t.kind === T.RBracket);
      if (close < 0) return undefined;
      label += join(tokens.slice(i, close + 1));
      i = close + 1;
    }
    const bits = range();
    if (bits === undefined) return undefined;
    cells.push([label, bits + (take(T.Comma) ? ',' : '')]);
  }
  return cells;
}

function layoutRows(lines: Line[], role: Role): void {
  let run: { line: Line; cells: string[][] }[] = [];
  const flush = () => {
    if (run.length) {
      const nColumns = Math.max(...run.map((r) => r.cells.length));
      const widths: number[][] = [];
      for (let c = 0; c < nColumns; c++) {
        const inColumn = run.map((r) => r.cells[c]).filter((x): x is string[] => !!x);
        const parts = Math.max(...inColumn.map((cell) => cell.length));
        widths.push(Array.from({ length: parts }, (_, p) => Math.max(...inColumn.map((cell) => (cell[p] ?? '').length))));
      }
      for (const { line, cells } of run) {
        const columnTexts = cells.map((cell, c) => cell.map((part, p) => part.padEnd(widths[c][p])).join(' '));
        const total = columnTexts.map((text, c) => (c < columnTexts.length - 1 ? text.padEnd(widths[c].reduce((a, b) => a + b, 0) + widths[c].length - 1) : text)).join(cellGap);
        line.text = withComment((line.indent + total).trimEnd(), line.comment);
      }
    }
    run = [];
  };
  for (const line of lines) {
    if (line.role !== role) {
      flush();
      continue;
    }
    if (run.length && run[0].line.decl !== line.decl) flush();
    const cells = rowCells(line);
    if (!cells) {
      flush();
      line.text = withComment(line.indent + join(line.tokens), line.comment);
      continue;
    }
    run.push({ line, cells });
  }
  flush();
}

// ---- the safety check ------------------------------------------------------------------------

/** True when the formatted lines hold exactly the original tokens and line breaks. */
function sameTokens(analysis: Analysis, lines: Line[], formatted: string[]): boolean {
  const significant = (tokens: Token[]) =>
    tokens.filter((t) => t.kind !== T.Whitespace && t.kind !== T.Newline && t.kind !== T.Eof).map((t) => `${t.kind}:${t.kind === T.Comment ? t.text.trimEnd() : t.text}`);
  for (let i = 0; i < lines.length; i++) {
    if (formatted[i] === lines[i].original) continue;
    if (/[\r\n]/.test(formatted[i])) return false;
    const before = significant(scan(lines[i].original));
    const after = significant(scan(formatted[i]));
    if (before.length !== after.length || before.some((t, j) => t !== after[j])) return false;
  }
  void analysis;
  return true;
}
