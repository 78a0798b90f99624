// Language-server benchmark: keystroke-to-diagnostics latency over stdio (the time from sending
// a didChange to receiving the publishDiagnostics of that version), p50 and p95 over 200 edits,
// on generated tables of about 1k, 10k and 50k lines; and the server's resident memory after
// opening the 50k table. Targets: p95 <= 30 ms at 10k lines, <= 150 ms at 50k; RSS <= 200 MB.
// Run with `node scripts/bench.mjs lsp` (after `npm run build`, which `npm run bench` does).
import { spawn } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import {
  ConfigurationRequest,
  type PublishDiagnosticsParams,
  PublishDiagnosticsNotification,
  RegistrationRequest,
  StreamMessageReader,
  StreamMessageWriter,
  createProtocolConnection,
} from 'vscode-languageserver-protocol/node';
import { analyse } from '../server/src/core/analysis';
import { generateTable } from './generate';

const root = resolve(process.cwd());
const serverPath = join(root, 'dist/server.js');
// PHASEWRIGHT_BENCH_EDITS and PHASEWRIGHT_BENCH_SIZES (comma-separated line counts) shorten a run
// while tuning; PHASEWRIGHT_BENCH_NODE_ARGS passes Node options to the server.
const edits = Number(process.env.PHASEWRIGHT_BENCH_EDITS ?? 200);
const sizes = (process.env.PHASEWRIGHT_BENCH_SIZES ?? '1000,10000,50000').split(',').map(Number);
/** Node options for the server process (PHASEWRIGHT_BENCH_NODE_ARGS, space-separated), e.g. heap sizes. */
const nodeArgs = (process.env.PHASEWRIGHT_BENCH_NODE_ARGS ?? '').split(' ').filter(Boolean);
const targets: Record<number, number> = { 10000: 30, 50000: 150 };
const rssTargetMB = 200;

function percentile(sorted: number[], p: number): number {
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

function rssMB(pid: number, field = 'VmRSS'): number {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const kB = Number(new RegExp(`${field}:\\s+(\\d+) kB`).exec(status)?.[1] ?? NaN);
  return kB / 1024;
}

async function run(lines: number): Promise<{ ok: boolean }> {
  const text = generateTable({ lines });
  const nLines = text.split('\n').length;
  const local = analyse(text);
  const errors = local.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length || local.diagnostics.length) {
    console.log(`  generated table of ${nLines} lines has ${errors.length} error(s) and ${local.diagnostics.length} diagnostic(s): ${local.diagnostics.slice(0, 3).map((d) => `${d.code} ${d.message}`).join('; ')}`);
    return { ok: false };
  }
  const child = spawn(process.execPath, [...nodeArgs, serverPath, '--stdio'], { stdio: ['pipe', 'pipe', 'inherit'] });
  const connection = createProtocolConnection(new StreamMessageReader(child.stdout!), new StreamMessageWriter(child.stdin!));
  const waiting = new Map<number, (p: PublishDiagnosticsParams) => void>();
  connection.onNotification(PublishDiagnosticsNotification.type, (p) => {
    if (p.version !== undefined) waiting.get(p.version)?.(p);
  });
  connection.onRequest(ConfigurationRequest.type, (params) => params.items.map(() => ({})));
  connection.onRequest(RegistrationRequest.type, () => undefined);
  connection.listen();
  const published = (version: number) => new Promise<PublishDiagnosticsParams>((resolveVersion) => waiting.set(version, resolveVersion));
  await connection.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: { workspace: { configuration: true } } });
  await connection.sendNotification('initialized', {});

  const uri = `file:///bench/generated-${lines}.pwt`;
  const openStarted = performance.now();
  const opened = published(1);
  await connection.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'phasewright', version: 1, text } });
  const first = await opened;
  const openMillis = performance.now() - openStarted;
  const rssAfterOpen = rssMB(child.pid!);
  if (first.diagnostics.length) {
    console.log(`  the server reported ${first.diagnostics.length} diagnostic(s) on the generated table`);
    return { ok: false };
  }

  // Keystrokes in a step line in the middle of the file: type a character into a strobe name,
  // then delete it, so every other version has an error and every version is analysed fully.
  const allLines = text.split('\n');
  const stepLine = allLines.findIndex((l, i) => i > allLines.length / 2 && /^ {2}\d+: r\d+\.oe/.test(l));
  const column = allLines[stepLine].indexOf('.oe') + 3;
  const latencies: number[] = [];
  let withError = 0;
  for (let i = 0; i < edits; i++) {
    const version = i + 2;
    const insert = i % 2 === 0;
    const change = insert
      ? { range: { start: { line: stepLine, character: column }, end: { line: stepLine, character: column } }, text: 'x' }
      : { range: { start: { line: stepLine, character: column }, end: { line: stepLine, character: column + 1 } }, text: '' };
    const done = published(version);
    const sent = performance.now();
    await connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [change] });
    const result = await done;
    latencies.push(performance.now() - sent);
    if (result.diagnostics.length) withError++;
  }
  const peakMB = rssMB(child.pid!, 'VmHWM');
  await connection.sendRequest('shutdown');
  await connection.sendNotification('exit');
  await new Promise((r) => child.on('exit', r));
  connection.dispose();

  latencies.sort((a, b) => a - b);
  const p50 = percentile(latencies, 50);
  const p95 = percentile(latencies, 95);
  console.log(`  table: ${nLines} lines, ${(text.length / 1024).toFixed(0)} KB; first diagnostics after open: ${openMillis.toFixed(0)} ms; RSS after open: ${rssAfterOpen.toFixed(0)} MB`);
  console.log(`  keystroke -> diagnostics over ${edits} edits (${withError} with an error): p50 ${p50.toFixed(1)} ms, p95 ${p95.toFixed(1)} ms, max ${latencies[latencies.length - 1].toFixed(1)} ms; peak RSS ${peakMB.toFixed(0)} MB`);
  const target = targets[lines];
  if (target !== undefined) console.log(`  target p95 <= ${target} ms: ${p95 <= target ? 'met' : 'MISSED'}`);
  if (lines === 50000) console.log(`  target RSS after open <= ${rssTargetMB} MB: ${rssAfterOpen <= rssTargetMB ? 'met' : 'MISSED'}`);
  return { ok: withError === edits / 2 };
}

async function main(): Promise<void> {
  if (!existsSync(serverPath)) {
    console.error('dist/server.js is missing: run `npm run build` first (`npm run bench` does)');
    process.exit(1);
  }
  let failed = false;
  for (const lines of sizes) {
    console.log(`generated table, about ${lines} lines:`);
    const { ok } = await run(lines);
    if (!ok) failed = true;
  }
  if (failed) process.exit(1);
}

void main();
