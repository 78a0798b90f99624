// The status-bar item of the active `.pwt` file: its machine's name, its error count and the
// size of its control store(s), e.g. "Halyard-32: 0 errors · 8K×32". The error count comes from
// the editor's own diagnostics (what the Problems panel shows); the name and the store sizes
// from the server's `phasewright.summary`, asked again a moment after each edit. Clicking it
// opens the Problems panel. It shows nothing for other files.
import * as vscode from 'vscode';
import type { ServerCommands } from './serverCommands';

const refreshDelayMillis = 300;

export class StatusBar implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('phasewright.status', vscode.StatusBarAlignment.Left, 100);
  private readonly disposables: vscode.Disposable[] = [];
  private summary: { uri: string; title?: string; stores: { name: string; text: string }[] } | undefined;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private generation = 0;

  constructor(private readonly server: ServerCommands) {
    this.item.name = 'Phasewright';
    this.item.command = 'workbench.actions.view.problems';
    this.disposables.push(
      this.item,
      vscode.window.onDidChangeActiveTextEditor(() => this.refreshSoon(0)),
      vscode.languages.onDidChangeDiagnostics((e) => {
        const doc = this.activeDocument();
        if (doc && e.uris.some((u) => u.toString() === doc.uri.toString())) this.render();
      }),
      vscode.workspace.onDidChangeTextDocument((e) => {
        if (e.document === this.activeDocument()) this.refreshSoon(refreshDelayMillis);
      }),
    );
    this.refreshSoon(0);
  }

  private activeDocument(): vscode.TextDocument | undefined {
    const doc = vscode.window.activeTextEditor?.document;
    return doc?.languageId === 'phasewright' ? doc : undefined;
  }

  /** Asks the server for the name and store sizes after a short pause (edits come in bursts). */
  refreshSoon(delayMillis: number): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => void this.refresh(), delayMillis);
  }

  private async refresh(): Promise<void> {
    const doc = this.activeDocument();
    if (!doc) {
      this.item.hide();
      return;
    }
    const generation = ++this.generation;
    this.render();
    const answer = await this.server.summary({ uri: doc.uri.toString() });
    if (generation !== this.generation) return;
    this.summary = answer.ok ? { uri: doc.uri.toString(), title: answer.title, stores: answer.stores } : undefined;
    this.render();
  }

  private render(): void {
    const doc = this.activeDocument();
    if (!doc) {
      this.item.hide();
      return;
    }
    const diagnostics = vscode.languages.getDiagnostics(doc.uri);
    const errors = diagnostics.filter((d) => d.severity === vscode.DiagnosticSeverity.Error).length;
    const warnings = diagnostics.filter((d) => d.severity === vscode.DiagnosticSeverity.Warning).length;
    const summary = this.summary?.uri === doc.uri.toString() ? this.summary : undefined;
    const name = summary?.title || doc.uri.path.split('/').pop() || 'Phasewright';
    const sizes = summary?.stores.map((s) => (summary.stores.length > 1 ? `${s.name} ${s.text}` : s.text)).join(', ');
    this.item.text = `$(circuit-board) ${name}: ${errors} error${errors === 1 ? '' : 's'}${sizes ? ` · ${sizes}` : ''}`;
    const tooltip = new vscode.MarkdownString(undefined, true);
    tooltip.appendMarkdown(`**${name}** — ${errors} error${errors === 1 ? '' : 's'}, ${warnings} warning${warnings === 1 ? '' : 's'}\n\n`);
    for (const s of summary?.stores ?? []) tooltip.appendMarkdown(`- store \`${s.name}\`: ${s.text} (words × bits)\n`);
    tooltip.appendMarkdown('\nClick to open the Problems panel.');
    this.item.tooltip = tooltip;
    this.item.backgroundColor = errors > 0 ? new vscode.ThemeColor('statusBarItem.errorBackground') : undefined;
    this.item.show();
  }

  dispose(): void {
    if (this.timer) clearTimeout(this.timer);
    for (const d of this.disposables) d.dispose();
  }
}
