// The "Show control-word listing" command: a read-only virtual document
// (`phasewright-listing:` scheme) holding the listing of the current file's store(s), exactly as
// `phasewright build --format list` writes it. The listing is asked from the language server
// when the document opens and again when the source changes while the listing is open.
import * as vscode from 'vscode';
import { withProgressNotification } from './progress';
import type { ServerCommands } from './serverCommands';

export const listingScheme = 'phasewright-listing';

export class ListingProvider implements vscode.TextDocumentContentProvider, vscode.Disposable {
  private readonly changed = new vscode.EventEmitter<vscode.Uri>();
  readonly onDidChange = this.changed.event;
  private readonly disposables: vscode.Disposable[] = [this.changed];
  private timer: ReturnType<typeof setTimeout> | undefined;

  constructor(private readonly server: ServerCommands) {
    this.disposables.push(
      vscode.workspace.onDidChangeTextDocument((e) => {
        if (e.document.languageId !== 'phasewright') return;
        const listing = this.listingUriFor(e.document.uri);
        if (!vscode.workspace.textDocuments.some((d) => d.uri.toString() === listing.toString())) return;
        if (this.timer) clearTimeout(this.timer);
        this.timer = setTimeout(() => this.changed.fire(listing), 500);
      }),
    );
  }

  /** The listing document of a source: its name in the path, the source URI in the query. */
  listingUriFor(source: vscode.Uri): vscode.Uri {
    const name = source.path.split('/').pop()?.replace(/\.pwt$/i, '') || 'table';
    return vscode.Uri.from({ scheme: listingScheme, path: `/${name}.lst`, query: source.toString() });
  }

  async provideTextDocumentContent(uri: vscode.Uri): Promise<string> {
    const answer = await this.server.listing({ uri: uri.query });
    if (!answer.ok) return `# Phasewright: no listing: ${answer.reason}\n`;
    const warning = answer.errors > 0 ? `# WARNING: the table has ${answer.errors} error(s); this listing shows what it would encode, not images to program.\n` : '';
    return warning + answer.listings.map((l) => l.text).join('\n');
  }

  dispose(): void {
    if (this.timer) clearTimeout(this.timer);
    for (const d of this.disposables) d.dispose();
  }
}

export async function showListingCommand(provider: ListingProvider, document: vscode.TextDocument | undefined): Promise<void> {
  if (!document || document.languageId !== 'phasewright') {
    void vscode.window.showWarningMessage('Phasewright: open a .pwt file to see its control-word listing.');
    return;
  }
  const listing = await withProgressNotification('encoding the control-word listing', () => vscode.workspace.openTextDocument(provider.listingUriFor(document.uri)));
  await vscode.window.showTextDocument(listing, { viewColumn: vscode.ViewColumn.Beside, preview: false });
}
