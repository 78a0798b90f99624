// The "Show bring-up view" webview panel: beside the debugger, what the board's indicators should
// show at each microcycle of a range of the running `phasewright` debug session (by default the
// last 16 cycles up to the one it stands at), redrawn whenever the session stops. The rows come
// from the debug adapter's custom request `phasewright.bringUp` (core/debug/bringUp.ts, the same
// rows as `phasewright trace`); the picture from core/diagram/bringUpBoard.ts. Picking another
// cycle of the range only redraws; a new range asks the adapter again.
import { randomBytes } from 'node:crypto';
import * as vscode from 'vscode';
import type { BringUpTable } from '../../server/src/core/debug/bringUp';
import { bringUpBoard } from '../../server/src/core/diagram/bringUpBoard';
import { type FromBringUpPage, type ToBringUpPage, bringUpHtml, maxBringUpCount } from './bringUpWebview';

/** The adapter's answer: the rows and the cycle the session stands at. */
type BringUpAnswer = BringUpTable & { current: number };

export class BringUpPanel implements vscode.Disposable {
  static current: BringUpPanel | undefined;

  private readonly panel: vscode.WebviewPanel;
  private readonly disposables: vscode.Disposable[] = [];
  private ready = false;
  private follow = true;
  private from = 0;
  private count = 16;
  /** The cycle picked in the strip (undefined: the session's current one). */
  private picked: number | undefined;
  private answer: BringUpAnswer | undefined;
  private generation = 0;

  static show(): BringUpPanel {
    if (BringUpPanel.current) {
      BringUpPanel.current.panel.reveal(vscode.ViewColumn.Beside, true);
      void BringUpPanel.current.refresh();
      return BringUpPanel.current;
    }
    BringUpPanel.current = new BringUpPanel();
    return BringUpPanel.current;
  }

  /** Follows the stops of every `phasewright` session (an adapter tracker sees its events). */
  static register(): vscode.Disposable[] {
    return [
      vscode.debug.registerDebugAdapterTrackerFactory('phasewright', {
        createDebugAdapterTracker: () => ({
          onDidSendMessage: (message: { type?: string; event?: string }) => {
            if (message.type === 'event' && message.event === 'stopped') BringUpPanel.current?.stopped();
          },
        }),
      }),
      vscode.debug.onDidTerminateDebugSession((session) => {
        if (session.type === 'phasewright') BringUpPanel.current?.post({ type: 'status', text: 'the debug session ended; this is where it last stopped' });
      }),
      { dispose: () => BringUpPanel.current?.dispose() },
    ];
  }

  private constructor() {
    this.panel = vscode.window.createWebviewPanel('phasewright.bringUp', 'Bring-up', { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true }, { enableScripts: true, localResourceRoots: [], retainContextWhenHidden: true });
    this.panel.webview.html = bringUpHtml(this.panel.webview.cspSource, randomBytes(16).toString('base64'));
    this.disposables.push(
      this.panel.onDidDispose(() => this.dispose()),
      this.panel.webview.onDidReceiveMessage((m: FromBringUpPage) => this.onMessage(m)),
    );
  }

  private stopped(): void {
    this.picked = undefined;
    void this.refresh();
  }

  private session(): vscode.DebugSession | undefined {
    const active = vscode.debug.activeDebugSession;
    return active?.type === 'phasewright' ? active : undefined;
  }

  private async refresh(): Promise<void> {
    if (!this.ready) return;
    const session = this.session();
    if (!session) {
      this.post({ type: 'problem', text: 'No Phasewright debug session: start one (F5 on a .pwt file); the board follows it each time it stops.' });
      return;
    }
    const generation = ++this.generation;
    this.post({ type: 'status', text: 'reading the indicators…' });
    let answer: BringUpAnswer;
    try {
      answer = (await session.customRequest('phasewright.bringUp', this.follow ? { count: this.count } : { from: this.from, count: this.count })) as BringUpAnswer;
    } catch (err) {
      if (generation === this.generation) this.post({ type: 'problem', text: `Phasewright: ${err instanceof Error ? err.message : String(err)}` });
      return;
    }
    if (generation !== this.generation) return;
    this.answer = answer;
    this.render();
  }

  private render(): void {
    const answer = this.answer;
    if (!answer) return;
    const board = bringUpBoard(answer, { cycle: this.picked ?? answer.current, current: answer.current, theme: 'host' });
    const from = answer.rows[0]?.cycle ?? this.from;
    this.panel.title = board.cycle === undefined ? 'Bring-up' : `Bring-up: cycle ${board.cycle}`;
    const status = board.cycle === undefined ? (answer.ending ?? 'no cycles in this range') : `cycles ${from}–${answer.rows[answer.rows.length - 1].cycle}, run afresh from reset (edits made in the session are not in them)`;
    this.post({ type: 'render', svg: board.svg, follow: this.follow, from, count: this.count, status });
  }

  private post(message: ToBringUpPage): void {
    void this.panel.webview.postMessage(message);
  }

  private onMessage(message: FromBringUpPage): void {
    switch (message.type) {
      case 'ready':
        this.ready = true;
        void this.refresh();
        return;
      case 'range':
        this.follow = message.follow;
        this.from = Math.max(0, Math.floor(message.from) || 0);
        this.count = Math.min(maxBringUpCount, Math.max(1, Math.floor(message.count) || 1));
        this.picked = undefined;
        void this.refresh();
        return;
      case 'pick':
        this.picked = message.cycle;
        this.render();
        return;
    }
  }

  dispose(): void {
    if (BringUpPanel.current === this) BringUpPanel.current = undefined;
    for (const d of this.disposables) d.dispose();
    this.panel.dispose();
  }
}
