// Semantic highlighting: every token classified by what it means, not just how it looks.
// Declared names take the type of what they name (strobes are variables, fields properties,
// values enum members, maps functions, phases and classes namespaces, parts classes, buses
// structs, flags and address inputs parameters), kinds are types, and the notation's own words
// keywords. Standard LSP token types only, so every theme colours them. Spans in file order,
// never overlapping, never crossing a line. Not a grammar: tokens the model could not
// resolve are left to the editor's syntax colouring.
import type { Analysis } from '../analysis';
import type { SymbolKind } from '../model/types';
import { declarationKeywords } from '../syntax/ast';
import { scan } from '../syntax/scanner';
import { T } from '../syntax/tokens';
import { partKinds, strobeKinds } from '../model/vocabulary';
import { allOccurrences } from './lookup';

export const semanticTokenTypes = [
  'keyword',
  'type',
  'variable',
  'property',
  'enumMember',
  'function',
  'namespace',
  'number',
  'string',
  'comment',
  'operator',
  'parameter',
  'class',
  'struct',
] as const;
export type SemanticTokenType = (typeof semanticTokenTypes)[number];

export const semanticTokenModifiers = ['declaration', 'defaultLibrary'] as const;
export type SemanticTokenModifier = (typeof semanticTokenModifiers)[number];

export interface SemanticToken {
  start: number;
  length: number;
  type: SemanticTokenType;
  modifiers: SemanticTokenModifier[];
}

const typeOfSymbol: Record<SymbolKind, SemanticTokenType> = {
  kind: 'type',
  strobe: 'variable',
  field: 'property',
  value: 'enumMember',
  map: 'function',
  phase: 'namespace',
  class: 'namespace',
  store: 'namespace',
  part: 'class',
  bus: 'struct',
  flag: 'parameter',
  port: 'property',
};

const contextualKeywords = new Set(['isa', 'keeper', 'active', 'high', 'low', 'accept', 'as', 'x', 'use', 'at', 'if', 'else', 'from', 'rv32i']);
const addressInputs = new Set(['step', 'opcode', 'funct3', 'f7b5', 'funct7', 'ir']);
const declarationWords = new Set<string>(declarationKeywords);
const kindWords = new Set<string>([...partKinds, ...strobeKinds]);

export function semanticTokens(analysis: Analysis): SemanticToken[] {
  // Scanned here rather than kept in the analysis: the tokens of a large table are many.
  const tokens = scan(analysis.text);
  const occurrences = allOccurrences(analysis);
  const out: SemanticToken[] = [];
  let next = 0;
  let atLineStart = true;
  for (let i = 0; i < tokens.length; i++) {
    const token = tokens[i];
    const add = (start: number, end: number, type: SemanticTokenType, modifiers: SemanticTokenModifier[] = []) => {
      if (end > start) out.push({ start, length: end - start, type, modifiers });
    };
    switch (token.kind) {
      case T.Newline:
        atLineStart = true;
        continue;
      case T.Whitespace:
        continue;
      case T.Comment:
        add(token.start, token.end, 'comment');
        continue;
      case T.String:
        add(token.start, token.end, 'string');
        break;
      case T.Number:
      case T.Pattern:
        add(token.start, token.end, 'number');
        break;
      case T.Arrow:
      case T.Equals:
      case T.DotDot:
      case T.Amp:
      case T.Bang:
      case T.Plus:
        add(token.start, token.end, 'operator');
        break;
      case T.Ident: {
        while (next < occurrences.length && occurrences[next].span.start < token.start) next++;
        let cursor = token.start;
        let resolved = false;
        while (next < occurrences.length && occurrences[next].span.start < token.end) {
          const occurrence = occurrences[next++];
          if (occurrence.span.start < cursor) continue;
          add(occurrence.span.start, occurrence.span.end, typeOfSymbol[occurrence.symbol.kind], occurrence.declaration ? ['declaration'] : []);
          cursor = occurrence.span.end;
          resolved = true;
        }
        if (resolved) {
          // `x.rs1`: the part is resolved, the rest names one of its ports.
          if (cursor < token.end && token.text[cursor - token.start] === '.') add(cursor + 1, token.end, 'property');
          break;
        }
        const nextToken = tokens[i + 1];
        if (atLineStart && declarationWords.has(token.text)) add(token.start, token.end, 'keyword');
        else if (nextToken?.kind === T.Equals) add(token.start, token.end, 'keyword');
        else if (kindWords.has(token.text)) add(token.start, token.end, 'type', ['defaultLibrary']);
        else if (addressInputs.has(token.text)) add(token.start, token.end, 'parameter', ['defaultLibrary']);
        else if (contextualKeywords.has(token.text)) add(token.start, token.end, 'keyword');
        else if (tokens[i - 1]?.kind === T.Equals) add(token.start, token.end, 'enumMember', ['defaultLibrary']);
        break;
      }
      default:
        break;
    }
    atLineStart = false;
  }
  return out;
}
