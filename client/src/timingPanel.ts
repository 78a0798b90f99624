// The "Show timing diagram" webview panel. It follows the class under the cursor of the `.pwt`
// file it was opened for, redraws a moment after edits, keeps the guard choice per class, and
// saves the picture as a standalone SVG (light and dark readable) where the user says. The
// picture itself comes from the language server (`phasewright.diagram`).
import { randomBytes } from 'node:crypto';
import * as vscode from 'vscode';
import { withProgressNotification } from './progress';
import type { DiagramAnswer, ServerCommands } from './serverCommands';
import { type FromPage, type ToPage, timingHtml } from './timingWebview';

const editDelayMillis = 350;
const cursorDelayMillis = 120;

export class TimingPanel implements vscode.Disposable {
  static current: TimingPanel | undefined;

  private readonly panel: vscode.WebviewPanel;
  private readonly disposables: vscode.Disposable[] = [];
  private document: vscode.TextDocument;
  private className: string | undefined;
  /** The guard choice per class, as `name -> bits`. */
  private readonly guards = new Map<string, Map<string, string>>();
  private all = false;
  /** The loop count chosen in the panel (undefined: the server's default). */
  private loopCount: number | undefined;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private generation = 0;
  private ready = false;
  private drawn = false;

  static show(server: ServerCommands, editor: vscode.TextEditor): TimingPanel {
    if (TimingPanel.current) {
      TimingPanel.current.follow(editor.document, editor.document.offsetAt(editor.selection.active));
      TimingPanel.current.panel.reveal(vscode.ViewColumn.Beside, true);
      return TimingPanel.current;
    }
    TimingPanel.current = new TimingPanel(server, editor);
    return TimingPanel.current;
  }

  private constructor(
    private readonly server: ServerCommands,
    editor: vscode.TextEditor,
  ) {
    this.document = editor.document;
    this.panel = vscode.window.createWebviewPanel('phasewright.timing', 'Timing diagram', { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true }, { enableScripts: true, localResourceRoots: [] });
    this.panel.webview.html = timingHtml(this.panel.webview.cspSource, randomBytes(16).toString('base64'));
    this.disposables.push(
      this.panel.onDidDispose(() => this.dispose()),
      this.panel.webview.onDidReceiveMessage((m: FromPage) => void this.onMessage(m)),
      vscode.window.onDidChangeTextEditorSelection((e) => {
        if (e.textEditor.document.languageId !== 'phasewright') return;
        this.follow(e.textEditor.document, e.textEditor.document.offsetAt(e.selections[0].active), cursorDelayMillis);
      }),
      vscode.workspace.onDidChangeTextDocument((e) => {
        if (e.document === this.document && e.contentChanges.length) this.schedule(editDelayMillis);
      }),
    );
    this.pendingOffset = editor.document.offsetAt(editor.selection.active);
  }

  private pendingOffset: number | undefined;

  /** Follows the class at `offset` in `document` (a class name wins over the cursor when the user picked one). */
  private follow(document: vscode.TextDocument, offset: number, delayMillis = 0): void {
    if (document !== this.document) {
      this.document = document;
      this.className = undefined;
    }
    this.pendingOffset = offset;
    this.schedule(delayMillis);
  }

  private schedule(delayMillis: number): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => void this.redraw(), delayMillis);
  }

  /** The guard choices of every class as texts (`taken=1,funct3=101`), for the server to pick from. */
  private guardTexts(): Record<string, string> {
    const texts: Record<string, string> = {};
    for (const [className, chosen] of this.guards) texts[className] = [...chosen].map(([name, bits]) => `${name}=${bits}`).join(',');
    return texts;
  }

  private async redraw(): Promise<void> {
    if (!this.ready) return;
    const generation = ++this.generation;
    const offset = this.pendingOffset;
    this.pendingOffset = undefined;
    // The server draws the class under the cursor when it stands in one, else the current class.
    const request = () => this.server.diagram({ uri: this.document.uri.toString(), offset, className: this.className, guards: this.guardTexts(), all: this.all, loopCount: this.loopCount, theme: 'host' });
    // The first picture shows progress; redraws that follow the cursor stay quiet.
    const result = this.drawn ? await request() : await withProgressNotification('drawing the timing diagram', request);
    this.drawn = true;
    if (generation !== this.generation) return;
    if (!result.ok) {
      // A guard the table no longer accepts (an input renamed) is dropped rather than kept failing.
      if (this.className && this.guards.has(this.className)) {
        this.guards.delete(this.className);
        this.schedule(0);
      }
      this.post({ type: 'problem', text: `Phasewright: ${result.reason}` });
      return;
    }
    this.className = result.className;
    this.render(result);
  }

  private render(answer: DiagramAnswer): void {
    this.panel.title = `Timing: ${answer.className}`;
    this.post({
      type: 'render',
      svg: answer.svg,
      className: answer.className,
      classes: answer.classes,
      inputs: answer.inputs,
      instruction: answer.instruction,
      all: this.all,
      loopCount: answer.loopCount,
      errors: answer.errors,
      source: vscode.workspace.asRelativePath(this.document.uri),
    });
  }

  private post(message: ToPage): void {
    void this.panel.webview.postMessage(message);
  }

  private async onMessage(message: FromPage): Promise<void> {
    switch (message.type) {
      case 'ready':
        this.ready = true;
        this.schedule(0);
        return;
      case 'class':
        this.className = message.name;
        this.schedule(0);
        return;
      case 'guard': {
        if (!this.className) return;
        const chosen = this.guards.get(this.className) ?? new Map<string, string>();
        chosen.set(message.name, message.bits);
        this.guards.set(this.className, chosen);
        this.schedule(0);
        return;
      }
      case 'all':
        this.all = message.value;
        this.schedule(0);
        return;
      case 'loopCount':
        this.loopCount = message.value;
        this.schedule(0);
        return;
      case 'save':
        await this.save();
        return;
    }
  }

  private async save(): Promise<void> {
    if (!this.className) return;
    const answer = await withProgressNotification('drawing the diagram to save', () =>
      this.server.diagram({ uri: this.document.uri.toString(), className: this.className!, guards: this.guardTexts(), all: this.all, loopCount: this.loopCount, theme: 'auto' }),
    );
    if (!answer.ok) {
      void vscode.window.showErrorMessage(`Phasewright: ${answer.reason}`);
      return;
    }
    const folder = this.document.uri.scheme === 'file' ? vscode.Uri.joinPath(this.document.uri, '..') : vscode.workspace.workspaceFolders?.[0]?.uri;
    const suggested = `${this.document.uri.path.split('/').pop()?.replace(/\.pwt$/i, '') || 'table'}.${answer.className}.svg`;
    const target = await vscode.window.showSaveDialog({ defaultUri: folder ? vscode.Uri.joinPath(folder, suggested) : undefined, filters: { 'SVG image': ['svg'] }, title: 'Save timing diagram' });
    if (!target) return;
    await vscode.workspace.fs.writeFile(target, new TextEncoder().encode(answer.svg));
    void vscode.window.showInformationMessage(`Phasewright: saved ${vscode.workspace.asRelativePath(target)}.`);
  }

  dispose(): void {
    if (TimingPanel.current === this) TimingPanel.current = undefined;
    if (this.timer) clearTimeout(this.timer);
    for (const d of this.disposables) d.dispose();
    this.panel.dispose();
  }
}
