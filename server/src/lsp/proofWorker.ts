// The proof worker: a child process of the language server (lsp/proofs.ts starts it on the
// first proof) that proves each document version it is sent and answers with the proof's
// diagnostics and verdicts. Only the newest version of a document matters: a job whose
// document has a newer version waiting stops between instructions, and the newest runs next.
// Each document keeps its verdict cache (core/prove/proveTable.ts), so an edit re-decides only
// the instructions whose obligations it changed. It exits when the server goes away.
import { analyse, applySeverities } from '../core/analysis';
import { newProofCache, proveTable, summarise, type ProofCache } from '../core/prove';
import { z3WasmSolver } from '../cli/z3Wasm';
import type { FromWorker, ToWorker } from './proofProtocol';

const solver = z3WasmSolver();
const caches = new Map<string, ProofCache>();
/** The newest job per document, not yet started. */
const waiting = new Map<string, Extract<ToWorker, { type: 'prove' }>>();
/** The version each document is at: a running job for an older one is out of date. */
const newest = new Map<string, number>();
let running = false;

function send(message: FromWorker): void {
  process.send?.(message);
}

async function drain(): Promise<void> {
  if (running) return;
  running = true;
  try {
    for (;;) {
      const next = waiting.entries().next();
      if (next.done) break;
      const [uri, job] = next.value;
      waiting.delete(uri);
      const started = Date.now();
      const analysis = analyse(job.text);
      if (analysis.counts.error > 0) {
        // A table with errors has no meaning to prove; the structural diagnostics say why.
        send({ type: 'proved', uri, version: job.version, diagnostics: [], verdicts: [], milliseconds: 0 });
        continue;
      }
      let cache = caches.get(uri);
      if (!cache) caches.set(uri, (cache = newProofCache()));
      const proof = await proveTable(analysis.machine, solver, { cache, cancelled: () => newest.get(uri) !== job.version });
      if (!proof) continue; // a newer version came: it is waiting
      send({ type: 'proved', uri, version: job.version, diagnostics: applySeverities(proof.diagnostics, job.severities), verdicts: summarise(proof.results), ...(proof.unavailable && { unavailable: proof.unavailable }), milliseconds: Date.now() - started });
    }
  } finally {
    running = false;
  }
}

process.on('message', (message: ToWorker) => {
  if (message.type === 'forget') {
    caches.delete(message.uri);
    waiting.delete(message.uri);
    newest.delete(message.uri);
    return;
  }
  newest.set(message.uri, message.version);
  waiting.set(message.uri, message);
  void drain().catch((e) => process.stderr.write(`phasewright proof worker: ${(e as Error).stack ?? e}\n`));
});
// The server's end of the channel closed: nothing more will come.
process.on('disconnect', () => process.exit(0));
