// The language-server soak: drives a real server over stdio with thousands of random edits of
// the demo (insertions, deletions, pastes of the whole file, undo storms), interleaved with
// hover, completion and formatting requests, then checks that it never crashed or logged an
// internal error, that every response was well-formed, that its last diagnostics equal a fresh
// analysis of the final text, and how its memory grew. Used by tests/robust/soak.test.ts (a
// short seeded run in CI) and bench/robust.bench.ts (10 000 edits, with figures).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { TextDocumentContentChangeEvent } from 'vscode-languageserver-protocol';
import { analyse } from '../../server/src/core/analysis';
import { LineIndex } from '../../server/src/core/text/lineIndex';
import { LspClient, root } from '../lsp/support/client';

export interface SoakResult {
  edits: number;
  requests: number;
  malformed: string[];
  internalErrors: string[];
  crashed: boolean;
  finalMatches: boolean;
  finalDetail: string;
  responseMs: number[];
  /** Right after opening the demo. */
  rssOpenBytes: number;
  /** After the warm-up edits: the baseline growth is measured from. */
  rssBeforeBytes: number;
  rssAfterBytes: number;
  heapBeforeBytes: number;
  heapAfterBytes: number;
}

/** A small seeded generator (mulberry32), so a failing soak reproduces. */
function random(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = Math.imul(state ^ (state >>> 15), state | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const snippets = [' ', '\n', ',', ': ', 'alu.oe', 'x.rs1.oe, ', 'done', '3 if taken: pc.inc, done\n', '#', '"', '{', '}', 'field f 2 { a=0 }\n', 'strobe z enable t -> left\n', '->', '..', '0x', 'é', '😀', '\r\n'];

export async function soak(options: { edits: number; seed: number; requestEvery?: number }): Promise<SoakResult> {
  const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
  const uri = 'file:///soak/halyard-32.pwt';
  const client = await LspClient.start({ nodeArgs: ['--expose-gc', ...(process.env.SOAK_NODE_ARGS ? process.env.SOAK_NODE_ARGS.split(' ') : [])] });
  const rnd = random(options.seed);
  const pick = <T>(list: readonly T[]): T => list[Math.floor(rnd() * list.length)];
  const result: SoakResult = { edits: 0, requests: 0, malformed: [], internalErrors: [], crashed: false, finalMatches: false, finalDetail: '', responseMs: [], rssOpenBytes: 0, rssBeforeBytes: 0, rssAfterBytes: 0, heapBeforeBytes: 0, heapAfterBytes: 0 };
  let text = demo;
  let version = 1;
  client.open(uri, text, version);
  await client.diagnosticsOf(uri, version);
  const memory = () => client.request<NodeJS.MemoryUsage>('phasewright/_testMemory', {});
  // Warm up every kind of request first, so one-time costs (compiled code, lazily built
  // tables) are in the baseline and the comparison shows growth only.
  const warm = { textDocument: { uri }, position: { line: 30, character: 10 } };
  await client.request('textDocument/hover', warm);
  await client.request('textDocument/completion', warm);
  await client.request('textDocument/formatting', { textDocument: { uri }, options: { tabSize: 2, insertSpaces: true } });
  version++;
  client.change(uri, version, [{ text: demo }]);
  await client.diagnosticsOf(uri, version);
  const opened = await memory();
  result.rssOpenBytes = opened.rss;
  // The baseline is taken after a warm-up share of the edits: V8's one-time growth (optimised
  // code, heap sizing) is not growth of the server's own data.
  const warmUpEdits = Math.max(1000, Math.floor(options.edits / 10));
  let baselineTaken = false;

  const applyLocal = (start: number, end: number, insert: string): TextDocumentContentChangeEvent => {
    const lines = new LineIndex(text);
    const from = lines.position(start);
    const to = lines.position(end);
    text = text.slice(0, start) + insert + text.slice(end);
    return { range: { start: { line: from.line, character: from.col }, end: { line: to.line, character: to.col } }, text: insert };
  };
  const send = (changes: TextDocumentContentChangeEvent[]) => {
    version++;
    client.change(uri, version, changes);
    result.edits++;
  };
  const timed = async <T>(what: string, call: () => Promise<T>, wellFormed: (r: T) => boolean) => {
    const started = performance.now();
    try {
      const r = await call();
      result.responseMs.push(performance.now() - started);
      if (!wellFormed(r)) result.malformed.push(`${what}: ${JSON.stringify(r).slice(0, 200)}`);
    } catch (err) {
      // A request overtaken by a newer version may be cancelled; anything else is a failure.
      const code = (err as { code?: number }).code;
      if (code !== -32800) result.malformed.push(`${what}: ${(err as Error).message}`);
    }
    result.requests++;
  };

  let nextRequestAt = options.requestEvery ?? 10;
  let requestRounds = 0;
  let nextSyncAt = 200;
  while (result.edits < options.edits) {
    if (!baselineTaken && result.edits >= warmUpEdits) {
      baselineTaken = true;
      const saved = text;
      send([applyLocal(0, text.length, demo)]);
      await client.diagnosticsOf(uri, version);
      const before = await memory();
      result.rssBeforeBytes = before.rss;
      result.heapBeforeBytes = before.heapUsed;
      send([applyLocal(0, text.length, saved)]);
    }
    const kind = rnd();
    if (kind < 0.45) {
      const at = Math.floor(rnd() * (text.length + 1));
      send([applyLocal(at, at, pick(snippets))]);
    } else if (kind < 0.8) {
      const at = Math.floor(rnd() * (text.length + 1));
      send([applyLocal(at, Math.min(text.length, at + Math.floor(rnd() * 40)), '')]);
    } else if (kind < 0.88) {
      // Paste the whole file somewhere, or replace everything with it (a big paste).
      if (rnd() < 0.5 || text.length > 60_000) send([applyLocal(0, text.length, demo)]);
      else {
        const at = Math.floor(rnd() * (text.length + 1));
        send([applyLocal(at, at, demo)]);
      }
    } else {
      // An undo storm: an edit and its inverse, over and over, as fast as the editor sends them.
      const at = Math.floor(rnd() * (text.length + 1));
      const insert = pick(snippets);
      for (let i = 0; i < 10 && result.edits < options.edits; i++) {
        send([applyLocal(at, at, insert)]);
        send([applyLocal(at, at + insert.length, '')]);
      }
    }
    if (result.edits >= nextRequestAt) {
      nextRequestAt = result.edits + (options.requestEvery ?? 10);
      const offset = Math.floor(rnd() * (text.length + 1));
      const pos = new LineIndex(text).position(offset);
      const position = { line: pos.line, character: pos.col };
      const doc = { textDocument: { uri }, position };
      await timed('hover', () => client.request<unknown>('textDocument/hover', doc), (r) => r === null || (typeof r === 'object' && r !== null && 'contents' in r));
      await timed('completion', () => client.request<unknown>('textDocument/completion', doc), (r) => r === null || Array.isArray(r) || (typeof r === 'object' && r !== null && 'items' in r));
      if (++requestRounds % 5 === 0) {
        await timed('formatting', () => client.request<unknown>('textDocument/formatting', { textDocument: { uri }, options: { tabSize: 2, insertSpaces: true } }), (r) => r === null || Array.isArray(r));
      }
    }
    if (result.edits >= nextSyncAt) {
      nextSyncAt = result.edits + 200;
      await client.diagnosticsOf(uri, version);
    }
  }
  const last = await client.diagnosticsOf(uri, version);
  const fresh = analyse(text);
  const lines = new LineIndex(text);
  const expected = fresh.diagnostics.map((d) => `${lines.position(d.span.start).line}:${lines.position(d.span.start).col} ${d.code} ${d.message}`).sort();
  const got = last.diagnostics.map((d) => `${d.range.start.line}:${d.range.start.character} ${d.code} ${d.message}`).sort();
  result.finalMatches = JSON.stringify(expected) === JSON.stringify(got);
  if (!result.finalMatches) result.finalDetail = `expected ${expected.length} diagnostics, got ${got.length}; first expected: ${expected[0]}; first got: ${got[0]}`;
  // Back to the demo text, so the memory compared is that of the same document.
  send([applyLocal(0, text.length, demo)]);
  await client.diagnosticsOf(uri, version);
  const after = await memory();
  result.rssAfterBytes = after.rss;
  result.heapAfterBytes = after.heapUsed;
  result.internalErrors = client.logs.filter((l) => /internal error|Error:|exception/i.test(l) && !/deliberate/.test(l));
  result.crashed = client.child.exitCode !== null;
  const code = await client.stop();
  if (code !== 0) result.crashed = true;
  return result;
}

export function percentile(values: number[], p: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] : 0;
}
