// The editor's proofs: after a document version's structural diagnostics are out and show no
// error, its text goes to the proof worker (proofWorker.ts, a child process started on the first
// proof, so neither the solver nor its memory costs anything until then). The answer is kept per
// document for the version it proved; the publisher then sends that version's diagnostics again
// with the proof's added, and code lenses are refreshed. An answer for a version the document
// has left is dropped. If the worker dies it is started again on the next proof (at most a few
// times: a worker that keeps dying is reported once and proofs stop for the session).
import { type ChildProcess, fork } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { SeverityConfig } from '../core/analysis';
import type { DocumentProof } from '../core/ide/proofView';
import type { Diagnostic } from '../core/text/diagnostic';
import type { FromWorker, ToWorker } from './proofProtocol';

export interface ProofOfVersion extends DocumentProof {
  readonly version: number;
  readonly diagnostics: Diagnostic[];
}

const MAX_STARTS = 3;

export class ProofService {
  private worker: ChildProcess | undefined;
  private starts = 0;
  private readonly proofs = new Map<string, ProofOfVersion>();

  constructor(
    /** Called when a proof of `version` has arrived (the caller checks it is still current). */
    private readonly onProved: (uri: string, version: number) => void,
    private readonly log: (message: string) => void,
    private readonly workerPath = join(__dirname, 'proofWorker.js'),
  ) {}

  /** The proof of this version of the document, once it has arrived. */
  proofOf(uri: string, version: number): ProofOfVersion | undefined {
    const proof = this.proofs.get(uri);
    return proof?.version === version ? proof : undefined;
  }

  prove(uri: string, version: number, text: string, severities: SeverityConfig): void {
    if (this.proofOf(uri, version)) return;
    this.post({ type: 'prove', uri, version, text, severities });
  }

  forget(uri: string): void {
    this.proofs.delete(uri);
    if (this.worker) this.post({ type: 'forget', uri });
  }

  /** Settings changed: every proof is redone at the new severities. */
  forgetAll(): void {
    this.proofs.clear();
  }

  dispose(): void {
    this.worker?.kill();
    this.worker = undefined;
  }

  private post(message: ToWorker): void {
    const worker = this.worker ?? this.start();
    if (!worker) return;
    try {
      worker.send(message);
    } catch (e) {
      this.log(`phasewright: the proof worker did not take a job: ${(e as Error).message}`);
    }
  }

  private start(): ChildProcess | undefined {
    if (this.starts >= MAX_STARTS) return undefined;
    if (!existsSync(this.workerPath)) {
      this.starts = MAX_STARTS;
      this.log(`phasewright: proofs are off: the proof worker ${this.workerPath} is missing (run the build)`);
      return undefined;
    }
    this.starts++;
    // The worker's stdio is not the LSP stream: its stdout and stderr go to the server's log.
    const worker = fork(this.workerPath, [], { stdio: ['ignore', 'pipe', 'pipe', 'ipc'], execArgv: [] });
    worker.stdout?.on('data', (d: Buffer) => this.log(`phasewright proof worker: ${d.toString().trimEnd()}`));
    worker.stderr?.on('data', (d: Buffer) => this.log(`phasewright proof worker: ${d.toString().trimEnd()}`));
    worker.on('message', (message: FromWorker) => {
      if (message.type !== 'proved') return;
      this.proofs.set(message.uri, { version: message.version, diagnostics: message.diagnostics, verdicts: message.verdicts, ...(message.unavailable && { unavailable: message.unavailable }) });
      this.onProved(message.uri, message.version);
    });
    worker.on('exit', (code, signal) => {
      if (this.worker !== worker) return;
      this.worker = undefined;
      this.log(`phasewright: the proof worker stopped (${signal ?? `code ${code}`})${this.starts >= MAX_STARTS ? '; proofs are off for this session' : '; it starts again with the next proof'}`);
    });
    worker.on('error', (e) => this.log(`phasewright: proof worker: ${e.message}`));
    this.worker = worker;
    return worker;
  }
}
