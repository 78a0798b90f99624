// Proofs in the editor, over a real LSP connection to dist/server.js with background proofs on:
// the server's proof worker (a child process running Z3's WebAssembly build) proves each
// version without errors and the server publishes that version again with the proof's
// diagnostics; lenses say `proved N/N` and the class hover lists each instruction's verdict.
// The faulty table swaps the SLT and SLTU rows of a decode map: the RISC-V Unprivileged ISA
// (20191213, section 2.4) makes SLT the signed compare and SLTU the unsigned one.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeLens, Hover, PublishDiagnosticsParams } from 'vscode-languageserver-protocol';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { LspClient, ensureBuilt, root } from './support/client';

const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
const swapped = readFileSync(join(root, 'examples/faults/proof/proof-refuted.pwt'), 'utf8');
const uri = 'file:///proofs/machine.pwt';

let client: LspClient;

beforeAll(async () => {
  await ensureBuilt();
  client = await LspClient.start({ settings: { proofs: { enabled: true } } });
}, 60_000);

afterAll(() => client?.kill());

const lenses = () => client.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } });

/** Asks for the lenses until one says `want` (the proof runs in the background; no fixed wait). */
async function lensSaying(want: RegExp, timeoutMillis = 90_000): Promise<string[]> {
  const until = Date.now() + timeoutMillis;
  for (;;) {
    const titles = (await lenses()).map((l) => l.command?.title ?? '');
    if (titles.some((t) => want.test(t))) return titles;
    if (Date.now() > until) throw new Error(`no lens matched ${want} within ${timeoutMillis} ms: ${JSON.stringify(titles)}; logs: ${client.logs.join('\n')}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const proofErrors = (p: PublishDiagnosticsParams) => p.diagnostics.filter((d) => d.code === 'proof-refuted');

describe('background proofs', () => {
  it('the demo proves: every class lens says proved N/N, the hover lists the verdicts, no diagnostic appears', { timeout: 120_000 }, async () => {
    client.open(uri, demo, 1);
    expect((await client.diagnosticsOf(uri, 1)).diagnostics).toEqual([]);
    const titles = await lensSaying(/proved 10\/10/);
    // Every class that decodes RV32I instructions says how many it proved (MISC-MEM's FENCE included).
    expect(titles.filter((t) => /instructions: /.test(t)).every((t) => /proved (\d+)\/\1$/.test(t))).toBe(true);
    const at = demo.indexOf('class OP ') + 'class '.length;
    const hover = await client.request<Hover | null>('textDocument/hover', { textDocument: { uri }, position: TextDocument.create(uri, 'x', 1, demo).positionAt(at) });
    const text = (hover?.contents as { value: string }).value;
    if (process.env.SHOW) console.log(titles.join('\n') + '\n' + text);
    expect(text).toMatch(/- \*\*proof\*\* 10 of 10 proved for all operand values, against the RISC-V Unprivileged ISA: add, sub, sll, slt, sltu, xor, srl, sra, or, and \(\d+(-\d+)? ms each\)/);
    expect(text).toMatch(/\*\*proof covers\*\* the table over the datapath as described, for RV32I in user mode/);
    // The republished version 1 has no proof diagnostics either.
    expect(client.published.filter((p) => p.uri === uri).every((p) => p.diagnostics.length === 0)).toBe(true);
  });

  it('an edit that swaps two decode-map rows is refuted on those rows, with the counterexample and the steps as related locations', { timeout: 120_000 }, async () => {
    client.change(uri, 2, [{ text: swapped }]);
    const published = await client.waitForDiagnostics(uri, (p) => p.version === 2 && proofErrors(p).length > 0, 90_000);
    const errors = proofErrors(published);
    const row = swapped.split('\n').findIndex((l) => l.includes('010 0 sltu'));
    expect(errors.map((d) => [d.range.start.line, d.severity, (d.message as string).split(' ')[0]])).toEqual([
      [row, 1, 'slt'],
      [row, 1, 'sltu'],
    ]);
    expect(errors[0].message).toMatch(/Counterexample for slt .*expected 0x0000000[01] \(RV32I\), obtained 0x0000000[01] \(table\)/);
    expect(errors[0].relatedInformation!.filter((r) => r.message.startsWith('ran step')).map((r) => r.location.uri)).toEqual([uri, uri, uri]);
    expect(await lensSaying(/refuted 2 of 10 \(slt, sltu\)/)).toBeTruthy();
    const at = swapped.indexOf('class OP ') + 'class '.length;
    const hover = await client.request<Hover | null>('textDocument/hover', { textDocument: { uri }, position: TextDocument.create(uri, 'x', 2, swapped).positionAt(at) });
    const text = (hover?.contents as { value: string }).value;
    expect(text).toMatch(/\*\*proof\*\* 8 of 10 proved .*: add, sub, sll, xor, srl, sra, or, and /);
    expect(text).toMatch(/  - slt: \*\*refuted\*\* — all address bits fixed; steps 0,1,2/);
  });

  it('a burst of edits ends with the proof of the last version; a fixed table loses its proof errors', { timeout: 120_000 }, async () => {
    client.change(uri, 3, [{ text: demo }]);
    client.change(uri, 4, [{ text: swapped }]);
    client.change(uri, 5, [{ text: demo }]);
    await client.diagnosticsOf(uri, 5);
    await lensSaying(/proved 10\/10/);
    const last = client.published.filter((p) => p.uri === uri).at(-1)!;
    expect(last.version).toBe(5);
    expect(last.diagnostics).toEqual([]);
    // Versions only go up, proof publications included.
    const versions = client.published.filter((p) => p.uri === uri).map((p) => p.version!);
    expect(versions).toEqual([...versions].sort((a, b) => a - b));
  });

  it('turning proofs off republishes without proof diagnostics and drops the verdicts from the lenses', { timeout: 120_000 }, async () => {
    client.change(uri, 6, [{ text: swapped }]);
    await client.waitForDiagnostics(uri, (p) => p.version === 6 && proofErrors(p).length > 0, 90_000);
    const before = client.published.length;
    await client.changeSettings({ proofs: { enabled: false } });
    const after = await client.waitForDiagnostics(uri, (p) => client.published.indexOf(p) >= before && p.version === 6);
    expect(proofErrors(after)).toEqual([]);
    expect((await lenses()).some((l) => /proved|refuted/.test(l.command?.title ?? ''))).toBe(false);
  });
});
