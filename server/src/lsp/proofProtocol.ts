// The messages between the language server and its proof worker (proofWorker.ts), a child
// process so that the solver's seconds and its 33 MB of WebAssembly stay out of the server's
// event loop and memory. Node's IPC channel carries them as JSON.
import type { SeverityConfig } from '../core/analysis';
import type { Diagnostic } from '../core/text/diagnostic';
import type { VerdictSummary } from '../core/prove/proveTable';

export type ToWorker =
  | { readonly type: 'prove'; readonly uri: string; readonly version: number; readonly text: string; readonly severities: SeverityConfig }
  | { readonly type: 'forget'; readonly uri: string };

export interface FromWorker {
  readonly type: 'proved';
  readonly uri: string;
  readonly version: number;
  /** Proof diagnostics at the given severities, spans as offsets into that version's text. */
  readonly diagnostics: Diagnostic[];
  readonly verdicts: VerdictSummary[];
  readonly unavailable?: string;
  readonly milliseconds: number;
}
