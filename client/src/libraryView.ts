// The standard library's read-only document (`phasewright-library:` scheme): go to definition on
// a part's kind opens it. The text is the core's own constant (no analysis happens here), so
// what the editor shows is exactly what the language server reads.
import * as vscode from 'vscode';
import { standardLibraryText } from '../../server/src/core/parts/library/standard';

export const libraryScheme = 'phasewright-library';

export class LibraryProvider implements vscode.TextDocumentContentProvider {
  provideTextDocumentContent(): string {
    return standardLibraryText;
  }
}
