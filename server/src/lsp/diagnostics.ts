// Publishing diagnostics. Each change (re)starts a short timer for its document, so a burst of
// edits is analysed once, after the last one. When the timer fires the current version is
// analysed and published with its version number. Versions only go up: a version older than
// one already published is never sent, and a closed document's diagnostics are cleared.
// A version without errors is then proved in the background (proofs.ts); when its proof
// arrives and the document is still at that version, the version is published again with the
// proof's diagnostics added.
import { type Connection, type Diagnostic as LspDiagnostic, DiagnosticSeverity, DiagnosticTag } from 'vscode-languageserver';
import type { Analysis } from '../core/analysis';
import type { Diagnostic } from '../core/text/diagnostic';
import { toRange } from './convert';
import type { DocumentState, DocumentStore } from './documents';
import { describeError } from './guard';
import type { ProofService } from './proofs';

const severities = { error: DiagnosticSeverity.Error, warning: DiagnosticSeverity.Warning, info: DiagnosticSeverity.Information } as const;

export function toLspDiagnostic(analysis: Analysis, uri: string, d: Diagnostic): LspDiagnostic {
  return {
    range: toRange(analysis.lines, d.span),
    severity: severities[d.severity],
    code: d.code,
    source: 'phasewright',
    message: d.message,
    tags: d.code === 'unused-name' ? [DiagnosticTag.Unnecessary] : undefined,
    relatedInformation: d.related?.map((r) => ({ location: { uri, range: toRange(analysis.lines, r.span) }, message: r.message })),
  };
}

export function diagnosticsOf(state: DocumentState, uri: string): LspDiagnostic[] {
  if (state.kind === 'tooLarge') {
    return [
      {
        range: { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } },
        severity: DiagnosticSeverity.Warning,
        code: 'file-too-large',
        source: 'phasewright',
        message: `This file is ${state.sizeKB} KB, more than phasewright.maxFileSizeKB (${state.limitKB} KB), so it is not analysed: no diagnostics, hovers or other features. Raise the setting to analyse it.`,
      },
    ];
  }
  const list = state.analysis.diagnostics.map((d) => toLspDiagnostic(state.analysis, uri, d));
  if (state.analysis.truncated) {
    list.push({
      range: { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } },
      severity: DiagnosticSeverity.Information,
      code: 'truncated',
      source: 'phasewright',
      message: `${state.analysis.diagnostics.length} shown of ${state.analysis.diagnostics.length + state.analysis.truncated} diagnostics (errors first); fix these first`,
    });
  }
  return list;
}

export class DiagnosticsPublisher {
  private readonly timers = new Map<string, ReturnType<typeof setTimeout>>();
  private readonly published = new Map<string, number>();

  constructor(
    private readonly connection: Connection,
    private readonly store: DocumentStore,
    /** Resolves once the first settings are known, so nothing is published with defaults first. */
    private readonly ready: Promise<void>,
    private readonly debounceMillis: number,
    private readonly proofs?: { readonly service: ProofService; readonly enabled: () => boolean },
  ) {}

  /** A proof of `version` arrived: publish it if the document is still there and at that version. */
  proved(uri: string, version: number): void {
    if (this.store.documents.get(uri)?.version === version) void this.run(uri);
  }

  schedule(uri: string, delay = this.debounceMillis): void {
    const pending = this.timers.get(uri);
    if (pending) clearTimeout(pending);
    this.timers.set(
      uri,
      setTimeout(() => {
        this.timers.delete(uri);
        void this.run(uri);
      }, delay),
    );
  }

  scheduleAll(): void {
    for (const document of this.store.documents.all()) this.schedule(document.uri, 0);
  }

  closed(uri: string): void {
    const pending = this.timers.get(uri);
    if (pending) clearTimeout(pending);
    this.timers.delete(uri);
    this.published.delete(uri);
    void this.connection.sendDiagnostics({ uri, diagnostics: [] });
  }

  private async run(uri: string): Promise<void> {
    try {
      await this.ready;
      const document = this.store.documents.get(uri);
      // A newer change restarted the timer, or the document was closed: this work is stale.
      if (!document || this.timers.has(uri)) return;
      const version = document.version;
      const state = this.store.stateOf(uri);
      if (!state || state.version !== version || this.store.documents.get(uri)?.version !== version) return;
      const last = this.published.get(uri);
      if (last !== undefined && last > version) return;
      this.published.set(uri, version);
      const diagnostics = diagnosticsOf(state, uri);
      if (this.proofs?.enabled() && state.kind === 'analysed' && state.analysis.counts.error === 0) {
        const proof = this.proofs.service.proofOf(uri, version);
        if (proof) diagnostics.push(...proof.diagnostics.map((d) => toLspDiagnostic(state.analysis, uri, d)));
        else this.proofs.service.prove(uri, version, state.analysis.text, this.store.currentSettings.severities);
      }
      await this.connection.sendDiagnostics({ uri, version, diagnostics });
    } catch (err) {
      this.connection.console.error(`phasewright: publishing diagnostics for ${uri} failed (please report it): ${describeError(err)}`);
    }
  }
}
