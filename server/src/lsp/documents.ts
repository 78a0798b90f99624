// The open documents and their analyses. An analysis is cached by URI, document version and
// settings generation, so every handler of one version shares one analysis, and a settings
// change re-analyses everything. Files over the size limit are not analysed at all: they get
// one diagnostic saying so, and every feature answers empty for them. It does not publish
// anything (diagnostics.ts does) nor decide when to analyse (the handlers ask).
import { TextDocuments } from 'vscode-languageserver';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { type Analysis, analyse } from '../core/analysis';
import type { ServerSettings } from './settings';

export type DocumentState = { kind: 'analysed'; version: number; analysis: Analysis; millis: number } | { kind: 'tooLarge'; version: number; sizeKB: number; limitKB: number };

interface CacheEntry {
  version: number;
  generation: number;
  state: DocumentState;
}

export class DocumentStore {
  readonly documents = new TextDocuments(TextDocument);
  private readonly cache = new Map<string, CacheEntry>();
  private generation = 0;

  constructor(private settings: ServerSettings) {}

  get currentSettings(): ServerSettings {
    return this.settings;
  }

  /** New settings invalidate every cached analysis. */
  updateSettings(settings: ServerSettings): void {
    this.settings = settings;
    this.generation++;
    this.cache.clear();
  }

  forget(uri: string): void {
    this.cache.delete(uri);
  }

  /** The state of the current version of an open document, analysing it if needed. */
  stateOf(uri: string): DocumentState | undefined {
    const document = this.documents.get(uri);
    if (!document) return undefined;
    const cached = this.cache.get(uri);
    if (cached && cached.version === document.version && cached.generation === this.generation) return cached.state;
    const text = document.getText();
    const limitKB = this.settings.maxFileSizeKB;
    // UTF-16 length is a cheap lower bound of the UTF-8 size; measure bytes only near the limit.
    const sizeBytes = text.length * 3 <= limitKB * 1024 ? text.length : Buffer.byteLength(text, 'utf8');
    let state: DocumentState;
    if (sizeBytes > limitKB * 1024) {
      state = { kind: 'tooLarge', version: document.version, sizeKB: Math.ceil(sizeBytes / 1024), limitKB };
    } else {
      const started = performance.now();
      const analysis = analyse(text, { severities: this.settings.severities });
      state = { kind: 'analysed', version: document.version, analysis, millis: performance.now() - started };
    }
    this.cache.set(uri, { version: document.version, generation: this.generation, state });
    return state;
  }

  /** The analysis of an open document, or undefined when it is not open or too large. */
  analysisOf(uri: string): Analysis | undefined {
    const state = this.stateOf(uri);
    return state?.kind === 'analysed' ? state.analysis : undefined;
  }
}
