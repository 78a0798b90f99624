// Diagnostics over a real LSP connection to dist/server.js: the demo is clean, every fault
// example reports its own code, settings change severities and the size limit, and a burst
// of incremental edits ends with the diagnostics of the last version, never an older one.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { LspClient, ensureBuilt, root } from './support/client';

const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
const faults = readdirSync(join(root, 'examples/faults'))
  .filter((f) => f.endsWith('.pwt'))
  .sort()
  .map((f) => ({ code: f.replace(/\.pwt$/, ''), text: readFileSync(join(root, 'examples/faults', f), 'utf8') }));

let client: LspClient;

beforeAll(async () => {
  await ensureBuilt();
  client = await LspClient.start();
});

afterAll(() => client?.kill());

describe('initialize', () => {
  it('announces the features and incremental sync', () => {
    const caps = client.initializeResult!.capabilities;
    expect(caps.textDocumentSync).toMatchObject({ openClose: true, change: 2 });
    expect(caps.hoverProvider).toBe(true);
    expect(caps.renameProvider).toEqual({ prepareProvider: true });
    expect(caps.semanticTokensProvider?.legend.tokenTypes).toEqual(['keyword', 'type', 'variable', 'property', 'enumMember', 'function', 'namespace', 'number', 'string', 'comment', 'operator', 'parameter', 'class', 'struct']);
    expect(caps.executeCommandProvider?.commands).toContain('phasewright._testEcho');
    expect(client.initializeResult!.serverInfo?.name).toBe('phasewright');
  });
});

describe('published diagnostics', () => {
  it('the demo has none', async () => {
    client.open('file:///demo.pwt', demo, 1);
    const published = await client.diagnosticsOf('file:///demo.pwt', 1);
    expect(published.diagnostics).toEqual([]);
  });

  it('each fault example reports its own code, with position, severity and source', async () => {
    faults.forEach((f, i) => client.open(`file:///faults/${f.code}.pwt`, f.text, 10 + i));
    for (const [i, f] of faults.entries()) {
      const published = await client.diagnosticsOf(`file:///faults/${f.code}.pwt`, 10 + i);
      expect(published.diagnostics.length).toBeGreaterThan(0);
      expect([...new Set(published.diagnostics.map((d) => d.code))]).toEqual([f.code]);
      expect(published.diagnostics.every((d) => d.source === 'phasewright')).toBe(true);
    }
    const contention = await client.diagnosticsOf('file:///faults/bus-contention.pwt', 10 + faults.findIndex((f) => f.code === 'bus-contention'));
    const d = contention.diagnostics[0];
    const line = faults.find((f) => f.code === 'bus-contention')!.text.split('\n').findIndex((l) => l.includes('0: a.oe, b.oe'));
    expect(d.severity).toBe(1);
    expect(d.range).toEqual({ start: { line, character: 11 }, end: { line, character: 15 } });
    expect(d.message).toContain('both drive bus `result`');
    expect(d.relatedInformation?.length).toBe(2);
  });

  it('clears the diagnostics of a closed document', async () => {
    const uri = 'file:///faults/step-gap.pwt';
    const before = client.published.length;
    client.close(uri);
    const cleared = await client.waitForDiagnostics(uri, (p) => p.diagnostics.length === 0 && client.published.indexOf(p) >= before);
    expect(cleared.version).toBeUndefined();
  });
});

describe('a burst of incremental edits', () => {
  it('ends with the diagnostics of the last version and never publishes an older one after a newer', async () => {
    const uri = 'file:///burst.pwt';
    const start = faults.find((f) => f.code === 'undefined-name')!.text.replace('0: a.oe, a.ce', '0: a.oe, a.oe');
    client.open(uri, start, 1);
    expect((await client.diagnosticsOf(uri, 1)).diagnostics.map((d) => d.code)).toEqual(['repeated-strobe']);
    // Twenty edits sent back to back, each replacing the first name of step 0's second action.
    const line = start.split('\n').findIndex((l) => l.startsWith('  0: a.oe, a.oe'));
    const names = ['b.ck', 'x.q', 'a.oe', 'done', 'a.ck', 'b.oe', 'zz', 'a.oe', 'b.ck', 'done'];
    let current = 'a.oe';
    for (let version = 2; version <= 21; version++) {
      const next = version === 21 ? 'a.ce' : names[version % names.length];
      client.change(uri, version, [{ range: { start: { line, character: 11 }, end: { line, character: 11 + current.length } }, text: next }]);
      current = next;
    }
    const last = await client.diagnosticsOf(uri, 21);
    expect(last.diagnostics.map((d) => [d.code, d.message])).toEqual([['undefined-name', 'no strobe or field is named `a.ce`; did you mean `a.oe`?']]);
    const versions = client.published.filter((p) => p.uri === uri).map((p) => p.version!);
    for (let i = 1; i < versions.length; i++) expect(versions[i]).toBeGreaterThan(versions[i - 1]);
    expect(versions[versions.length - 1]).toBe(21);
    // The burst was coalesced: far fewer analyses were published than edits were sent.
    expect(versions.length).toBeLessThan(21);
  });
});

describe('settings', () => {
  it('follows phasewright.severity, pulled again on didChangeConfiguration', async () => {
    const uri = 'file:///settings.pwt';
    const text = faults.find((f) => f.code === 'step-gap')!.text;
    client.open(uri, text, 1);
    expect((await client.diagnosticsOf(uri, 1)).diagnostics.map((d) => [d.code, d.severity])).toEqual([['step-gap', 2]]);
    const count = client.published.length;
    await client.changeSettings({ severity: { 'step-gap': 'error', 'not-a-code': 'off' } });
    const raised = await client.waitForDiagnostics(uri, (p) => client.published.indexOf(p) >= count);
    expect(raised.diagnostics.map((d) => [d.code, d.severity])).toEqual([['step-gap', 1]]);
    const count2 = client.published.length;
    await client.changeSettings({ severity: { 'step-gap': 'off' } });
    const silenced = await client.waitForDiagnostics(uri, (p) => client.published.indexOf(p) >= count2);
    expect(silenced.diagnostics).toEqual([]);
    expect(client.logs.some((l) => l.includes("unknown diagnostic code 'not-a-code'"))).toBe(true);
    await client.changeSettings({});
  });

  it('refuses to analyse a file over phasewright.maxFileSizeKB, with one diagnostic', async () => {
    const count = client.published.length;
    await client.changeSettings({ maxFileSizeKB: 2 });
    const big = await client.waitForDiagnostics('file:///demo.pwt', (p) => client.published.indexOf(p) >= count);
    expect(big.diagnostics.length).toBe(1);
    expect(big.diagnostics[0].code).toBe('file-too-large');
    expect(big.diagnostics[0].message).toMatch(/^This file is \d+ KB, more than phasewright.maxFileSizeKB \(2 KB\), so it is not analysed/);
    expect(await client.request('textDocument/hover', { textDocument: { uri: 'file:///demo.pwt' }, position: { line: 30, character: 9 } })).toBeNull();
    const count2 = client.published.length;
    await client.changeSettings({});
    const back = await client.waitForDiagnostics('file:///demo.pwt', (p) => client.published.indexOf(p) >= count2);
    expect(back.diagnostics).toEqual([]);
  });
});

describe('a client without workspace/configuration', () => {
  it('takes the settings from didChangeConfiguration itself', async () => {
    const other = await LspClient.start({ configuration: false });
    try {
      const uri = 'file:///push.pwt';
      other.open(uri, faults.find((f) => f.code === 'step-gap')!.text, 1);
      expect((await other.diagnosticsOf(uri, 1)).diagnostics.map((d) => d.severity)).toEqual([2]);
      const count = other.published.length;
      await other.changeSettings({ severity: { 'step-gap': 'info' } });
      const changed = await other.waitForDiagnostics(uri, (p) => other.published.indexOf(p) >= count);
      expect(changed.diagnostics.map((d) => d.severity)).toEqual([3]);
      expect(await other.stop()).toBe(0);
    } finally {
      other.kill();
    }
  });
});
