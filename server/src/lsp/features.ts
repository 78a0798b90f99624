// The language feature handlers. Each is short: find the document's analysis (by URI and
// version, through the store), call the core, convert offsets to positions. All run inside the
// guard (see guard.ts); a document that is not open or too large gets an empty answer. No
// editor logic lives here: what to answer is decided in core/ide.
import {
  type CodeAction,
  CodeActionKind,
  type CodeLens,
  type CompletionItem,
  CompletionItemKind,
  type Connection,
  type DocumentSymbol,
  type FoldingRange,
  FoldingRangeKind,
  InsertTextFormat,
  LSPErrorCodes,
  type Location,
  MarkupKind,
  ResponseError,
  SemanticTokensBuilder,
  type SymbolInformation,
  SymbolKind,
  type TextEdit,
  type WorkspaceEdit,
} from 'vscode-languageserver';
import type { Analysis } from '../core/analysis';
import { classLenses } from '../core/ide/codeLens';
import type { DocumentProof } from '../core/ide/proofView';
import { quickFixes } from '../core/ide/codeActions';
import { type CompletionKind, complete } from '../core/ide/completion';
import { foldingRanges } from '../core/ide/folding';
import { formatDocument } from '../core/ide/format';
import { hover } from '../core/ide/hover';
import { stepWordHints } from '../core/ide/inlayHints';
import { definition, prepareRename, references, rename } from '../core/ide/navigation';
import { semanticTokenModifiers, semanticTokenTypes, semanticTokens } from '../core/ide/semanticTokens';
import { LineIndex } from '../core/text/lineIndex';
import { standardLibraryName, standardLibraryText } from '../core/parts/library';
import { type OutlineKind, type OutlineSymbol, documentSymbols, flatSymbols, matchesQuery } from '../core/ide/symbols';
import type { TextEdit as CoreEdit } from '../core/text/diagnostic';
import { executeCommand } from './commands';
import { toOffset, toPosition, toRange, toSpan } from './convert';
import type { DocumentStore } from './documents';
import { guarded } from './guard';

export const semanticTokensLegend = { tokenTypes: [...semanticTokenTypes], tokenModifiers: [...semanticTokenModifiers] };

const completionKinds: Record<CompletionKind, CompletionItemKind> = {
  keyword: CompletionItemKind.Keyword,
  class: CompletionItemKind.Snippet,
  kind: CompletionItemKind.TypeParameter,
  strobe: CompletionItemKind.Variable,
  field: CompletionItemKind.Field,
  value: CompletionItemKind.EnumMember,
  map: CompletionItemKind.Function,
  bus: CompletionItemKind.Struct,
  part: CompletionItemKind.Class,
  port: CompletionItemKind.Property,
  phase: CompletionItemKind.Module,
  input: CompletionItemKind.Constant,
  flag: CompletionItemKind.Constant,
  setting: CompletionItemKind.Property,
  chip: CompletionItemKind.Value,
};

/** The standard library as the client shows it: a read-only document of its own scheme. */
export const libraryUri = `phasewright-library:/${standardLibraryName}`;
let libraryIndex: LineIndex | undefined;
function libraryLines(): LineIndex {
  return (libraryIndex ??= new LineIndex(standardLibraryText));
}

const symbolKinds: Record<OutlineKind, SymbolKind> = {
  section: SymbolKind.Package,
  machine: SymbolKind.Module,
  bus: SymbolKind.Struct,
  part: SymbolKind.Object,
  strobe: SymbolKind.Variable,
  field: SymbolKind.Field,
  value: SymbolKind.EnumMember,
  store: SymbolKind.Module,
  word: SymbolKind.Array,
  address: SymbolKind.Array,
  map: SymbolKind.Function,
  phase: SymbolKind.Namespace,
  class: SymbolKind.Class,
  step: SymbolKind.Event,
  use: SymbolKind.Event,
  kind: SymbolKind.Interface,
  port: SymbolKind.Property,
};

function toLspEdits(analysis: Analysis, edits: readonly CoreEdit[]): TextEdit[] {
  return edits.map((e) => ({ range: toRange(analysis.lines, e.span), newText: e.newText }));
}

export function registerFeatures(connection: Connection, store: DocumentStore, options: { testHooks: boolean; workspaceFolders?: () => readonly string[]; proofOf?: (uri: string, version: number) => DocumentProof | undefined }): void {
  const analysisOf = (uri: string) => store.analysisOf(uri);
  /** The finished proof of the document's current version, if any. */
  const proofOf = (uri: string) => {
    const state = store.stateOf(uri);
    return state && options.proofOf?.(uri, state.version);
  };

  connection.onHover(
    guarded(connection, 'hover', () => null, (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return null;
      const result = hover(analysis, toOffset(analysis.lines, params.position), proofOf(params.textDocument.uri));
      return result ? { contents: { kind: MarkupKind.Markdown, value: result.markdown }, range: toRange(analysis.lines, result.span) } : null;
    }),
  );

  connection.onCompletion(
    guarded(connection, 'completion', () => [] as CompletionItem[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      const result = complete(analysis, toOffset(analysis.lines, params.position));
      const range = toRange(analysis.lines, result.replace);
      return result.items.map((item, index) => ({
        label: item.label,
        kind: completionKinds[item.kind],
        detail: item.detail,
        documentation: item.documentation ? { kind: MarkupKind.Markdown, value: item.documentation } : undefined,
        textEdit: { range, newText: item.insertText ?? item.label },
        insertTextFormat: InsertTextFormat.PlainText,
        sortText: String(index).padStart(4, '0'),
      }));
    }),
  );

  connection.onDefinition(
    guarded(connection, 'definition', () => null, (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return null;
      const found = definition(analysis, toOffset(analysis.lines, params.position));
      if (!found) return null;
      // A standard-library kind lives in the library's read-only document (the client shows it).
      if (found.symbol.origin === 'library') return { uri: libraryUri, range: toRange(libraryLines(), found.span) } satisfies Location;
      return { uri: params.textDocument.uri, range: toRange(analysis.lines, found.span) } satisfies Location;
    }),
  );

  connection.onReferences(
    guarded(connection, 'references', () => [] as Location[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      return references(analysis, toOffset(analysis.lines, params.position), params.context.includeDeclaration).map((span) => ({ uri: params.textDocument.uri, range: toRange(analysis.lines, span) }));
    }),
  );

  connection.onPrepareRename(
    guarded(connection, 'prepareRename', () => null, (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return null;
      const result = prepareRename(analysis, toOffset(analysis.lines, params.position));
      if (!result) return null;
      if ('error' in result) return new ResponseError(LSPErrorCodes.RequestFailed, result.error);
      return { range: toRange(analysis.lines, result.span), placeholder: result.placeholder };
    }),
  );

  connection.onRenameRequest(
    guarded(connection, 'rename', () => null, (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return null;
      const result = rename(analysis, toOffset(analysis.lines, params.position), params.newName);
      if ('error' in result) return new ResponseError(LSPErrorCodes.RequestFailed, `cannot rename: ${result.error}`);
      return { changes: { [params.textDocument.uri]: toLspEdits(analysis, result.edits) } } satisfies WorkspaceEdit;
    }),
  );

  connection.onDocumentSymbol(
    guarded(connection, 'documentSymbol', () => [] as DocumentSymbol[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      const convert = (s: OutlineSymbol): DocumentSymbol => ({
        name: s.name,
        detail: s.detail,
        kind: symbolKinds[s.kind],
        range: toRange(analysis.lines, s.span),
        selectionRange: toRange(analysis.lines, s.selection),
        children: s.children.map(convert),
      });
      return documentSymbols(analysis).map(convert);
    }),
  );

  connection.onWorkspaceSymbol(
    guarded(connection, 'workspaceSymbol', () => [] as SymbolInformation[], (params, token) => {
      const result: SymbolInformation[] = [];
      for (const document of store.documents.all()) {
        if (token.isCancellationRequested) break;
        const analysis = analysisOf(document.uri);
        if (!analysis) continue;
        for (const s of flatSymbols(analysis)) {
          if (!matchesQuery(s.name, params.query)) continue;
          result.push({ name: s.name, kind: symbolKinds[s.kind], containerName: s.container, location: { uri: document.uri, range: toRange(analysis.lines, s.span) } });
        }
      }
      return result;
    }),
  );

  connection.onFoldingRanges(
    guarded(connection, 'foldingRange', () => [] as FoldingRange[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      return foldingRanges(analysis).map((f) => ({
        startLine: analysis.lines.position(f.span.start).line,
        endLine: analysis.lines.position(f.span.end).line,
        kind: f.kind === 'comment' ? FoldingRangeKind.Comment : FoldingRangeKind.Region,
      }));
    }),
  );

  connection.languages.semanticTokens.on(
    guarded(connection, 'semanticTokens', () => ({ data: [] as number[] }), (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return { data: [] };
      const builder = new SemanticTokensBuilder();
      for (const token of semanticTokens(analysis)) {
        const at = analysis.lines.position(token.start);
        let modifiers = 0;
        for (const m of token.modifiers) modifiers |= 1 << semanticTokenModifiers.indexOf(m);
        builder.push(at.line, at.col, token.length, semanticTokenTypes.indexOf(token.type), modifiers);
      }
      return builder.build();
    }),
  );

  connection.onDocumentFormatting(
    guarded(connection, 'formatting', () => [] as TextEdit[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      return toLspEdits(analysis, formatDocument(analysis));
    }),
  );

  connection.onCodeAction(
    guarded(connection, 'codeAction', () => [] as CodeAction[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      if (params.context.only && !params.context.only.some((kind) => CodeActionKind.QuickFix.startsWith(kind))) return [];
      const requested = params.context.diagnostics
        .filter((d) => d.source === undefined || d.source === 'phasewright')
        .map((d) => ({ code: d.code === undefined ? undefined : String(d.code), span: toSpan(analysis.lines, d.range), message: typeof d.message === 'string' ? d.message : d.message.value }));
      const fixes = quickFixes(analysis, toSpan(analysis.lines, params.range), params.context.diagnostics.length ? requested : []);
      const version = store.documents.get(params.textDocument.uri)?.version ?? null;
      return fixes.map((fix) => ({
        title: fix.title,
        kind: CodeActionKind.QuickFix,
        isPreferred: fix.preferred,
        diagnostics: fix.requestIndex !== undefined ? [params.context.diagnostics.filter((d) => d.source === undefined || d.source === 'phasewright')[fix.requestIndex]] : undefined,
        edit: { documentChanges: [{ textDocument: { uri: params.textDocument.uri, version }, edits: toLspEdits(analysis, fix.edits) }] },
      }));
    }),
  );

  connection.languages.inlayHint.on(
    guarded(connection, 'inlayHint', () => [], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      return stepWordHints(analysis, toSpan(analysis.lines, params.range)).map((hint) => ({
        position: toPosition(analysis.lines, hint.offset),
        label: hint.label,
        paddingLeft: true,
        tooltip: { kind: MarkupKind.Markdown, value: hint.tooltip },
      }));
    }),
  );

  connection.onCodeLens(
    guarded(connection, 'codeLens', () => [] as CodeLens[], (params) => {
      const analysis = analysisOf(params.textDocument.uri);
      if (!analysis) return [];
      return classLenses(analysis, proofOf(params.textDocument.uri)).map((lens) => ({ range: toRange(analysis.lines, lens.span), command: { title: lens.title, command: '' } }));
    }),
  );

  connection.onExecuteCommand(
    guarded(connection, 'executeCommand', () => null, (params, token) => executeCommand(params.command, params.arguments, { connection, token, analysisOf, workspaceFolders: options.workspaceFolders }) as Promise<null>),
  );

  if (options.testHooks) {
    // Test-only: proves that an exception inside a handler is logged and answered, and that
    // the server keeps serving. Enabled only when PHASEWRIGHT_TEST_HOOKS=1.
    connection.onRequest(
      'phasewright/_testThrow',
      guarded(connection, 'phasewright/_testThrow', () => ({ survived: true }), () => {
        throw new Error('deliberate failure requested by a test');
      }),
    );
    // Test-only: the server's memory after a full collection (when started with --expose-gc),
    // so a soak test can tell growth from garbage not yet collected.
    connection.onRequest('phasewright/_testMemory', () => {
      (globalThis as { gc?: () => void }).gc?.();
      return process.memoryUsage();
    });
  }
}
