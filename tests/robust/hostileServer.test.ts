// Hostile documents sent to the language server: binary-looking text with NUL and control
// characters, lone surrogates (what an editor shows for invalid UTF-8), and a 50 MB document.
// Each gets diagnostics (or the one "too large" diagnostic) and the server keeps answering.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { LspClient, ensureBuilt, root } from '../lsp/support/client';
import { bigMapTable, store24Table } from '../support/hostile';

let client: LspClient;
const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');

beforeAll(async () => {
  await ensureBuilt();
  client = await LspClient.start();
}, 120_000);

afterAll(async () => {
  expect(await client.stop()).toBe(0);
});

describe('hostile documents in the language server', () => {
  it('analyses binary-looking text with NUL bytes, control characters and lone surrogates', async () => {
    const binary = Array.from({ length: 4096 }, (_, i) => String.fromCharCode((i * 37) % 256)).join('');
    const uris = ['nul', 'surrogates'].map((n) => `file:///hostile/${n}.pwt`);
    client.open(uris[0], 'bus a\u0000 8\n' + binary, 1);
    client.open(uris[1], 'bus \ud800 32\n' + demo.slice(0, 500) + '\udc00\ud83d', 1);
    for (const uri of uris) {
      const published = await client.diagnosticsOf(uri, 1);
      expect(published.diagnostics.length).toBeGreaterThan(0);
      expect(published.diagnostics.every((d) => typeof d.message === 'string' && d.message.length > 0)).toBe(true);
    }
  });

  it('declines a 50 MB document with one diagnostic instead of freezing, and keeps answering', async () => {
    const uri = 'file:///hostile/huge.pwt';
    const huge = demo.repeat(Math.ceil((50 * 1024 * 1024) / demo.length));
    client.open(uri, huge, 1);
    const published = await client.diagnosticsOf(uri, 1);
    expect(published.diagnostics.map((d) => d.code)).toEqual(['file-too-large']);
    const small = 'file:///hostile/after.pwt';
    client.open(small, demo, 1);
    expect((await client.diagnosticsOf(small, 1)).diagnostics).toEqual([]);
    const hover = await client.request<{ contents: { value: string } } | null>('textDocument/hover', { textDocument: { uri: small }, position: { line: demo.split('\n').findIndex((l) => l.startsWith('bus left')), character: 5 } });
    expect(hover?.contents.value).toContain('bus `left`');
  }, 120_000);
});

describe('quadratic documents in the language server', () => {
  it('publishes the capped map-overlap diagnostics of a 12 000-row map and keeps answering', async () => {
    const uri = 'file:///hostile/map.pwt';
    client.open(uri, bigMapTable(12_000, 'overlapping'), 1);
    const published = await client.diagnosticsOf(uri, 1);
    expect(published.diagnostics.filter((d) => d.code === 'map-overlap')).toHaveLength(101);
    expect(await client.request('workspace/executeCommand', { command: 'phasewright._testEcho', arguments: [2] })).toEqual({ echo: [2] });
  }, 60_000);
});

describe('hostile files named in editor commands', () => {
  it('refuses a table uri that is /dev/zero or a FIFO (not open in the editor) and keeps answering', async () => {
    const tmp = join(root, 'tests/.tmp/hostile-server');
    rmSync(tmp, { recursive: true, force: true });
    mkdirSync(tmp, { recursive: true });
    const fifo = join(tmp, 'table.pwt');
    execFileSync('mkfifo', [fifo]);
    const cases: [string, string][] = [
      ['file:///dev/zero', '/dev/zero is a character device, not a regular file'],
      [pathToFileURL(fifo).href, `${fifo} is a FIFO (named pipe), not a regular file`],
    ];
    for (const [uri, reason] of cases) {
      const answer = await client.request<{ ok: boolean; reason: string }>('workspace/executeCommand', { command: 'phasewright.run', arguments: [{ uri, program: '/dev/zero' }] });
      expect(answer).toEqual({ ok: false, reason: `cannot read the table: ${reason}; give a .pwt file` });
    }
    const program = await client.request<{ ok: boolean; reason: string }>('workspace/executeCommand', { command: 'phasewright.run', arguments: [{ uri: pathToFileURL(join(root, 'examples/halyard-32.pwt')).href, program: '/dev/zero' }] });
    expect(program).toEqual({ ok: false, reason: 'cannot read the program: /dev/zero is a character device, not a regular file; give an ELF file or a raw binary image' });
    expect(await client.request('workspace/executeCommand', { command: 'phasewright._testEcho', arguments: [1] })).toEqual({ echo: [1] });
  }, 60_000);
});

describe('phasewright.build over a real connection', () => {
  it('writes inside the workspace folder it was given and refuses a folder outside, creating nothing there', async () => {
    const workspace = join(root, 'tests/.tmp/hostile-server-ws');
    const outside = join(root, 'tests/.tmp/hostile-server-outside');
    for (const dir of [workspace, outside]) rmSync(dir, { recursive: true, force: true });
    mkdirSync(workspace, { recursive: true });
    const ws = await LspClient.start({ workspaceFolders: [workspace] });
    try {
      const uri = pathToFileURL(join(workspace, 'halyard-32.pwt')).href;
      ws.open(uri, demo, 1);
      await ws.diagnosticsOf(uri, 1);
      const build = (outputFolder: string) => ws.request<{ ok: boolean; reason?: string; files?: string[] }>('workspace/executeCommand', { command: 'phasewright.build', arguments: [{ uri, outputFolder, formats: ['bin'] }] });
      expect(await build(join(outside, 'out'))).toEqual({ ok: false, reason: `the output folder ${join(outside, 'out')} is outside the workspace folder (${workspace}); choose a folder inside` });
      expect(existsSync(outside)).toBe(false);
      expect(await build(join(workspace, 'out'))).toMatchObject({ ok: true, files: expect.arrayContaining(['halyard-32.main.chip0.bin']) });
    } finally {
      expect(await ws.stop()).toBe(0);
    }
  }, 60_000);
});

describe('a store of 24 address lines in the editor', () => {
  it('answers the listing with its first 8 MB and a note, builds the images, and keeps answering, within a 256 MB heap', async () => {
    const workspace = join(root, 'tests/.tmp/hostile-server-wide');
    rmSync(workspace, { recursive: true, force: true });
    mkdirSync(workspace, { recursive: true });
    const wide = await LspClient.start({ workspaceFolders: [workspace], nodeArgs: ['--max-old-space-size=256'] });
    try {
      const uri = pathToFileURL(join(workspace, 'wide.pwt')).href;
      wide.open(uri, store24Table(demo), 1);
      await wide.diagnosticsOf(uri, 1);
      const listing = await wide.request<{ ok: boolean; listings: { text: string }[] }>('workspace/executeCommand', { command: 'phasewright.listing', arguments: [{ uri }] });
      expect(listing.ok).toBe(true);
      const text = listing.listings[0].text;
      expect(text.length).toBeLessThanOrEqual(8 * 1024 * 1024 + 200);
      expect(text.endsWith('# ... the listing goes on; the editor shows its first 8 MB. Build the images (with the listing format) for all of wide.main.lst.\n')).toBe(true);
      const build = await wide.request<{ ok: boolean; files: string[] }>('workspace/executeCommand', { command: 'phasewright.build', arguments: [{ uri, outputFolder: join(workspace, 'out'), formats: ['bin'] }] });
      expect(build).toMatchObject({ ok: true, files: ['wide.main.chip0.bin', 'wide.main.chip1.bin', 'wide.main.chip2.bin', 'wide.main.chip3.bin'] });
      const summary = await wide.request<{ ok: boolean; stores: { text: string }[] }>('workspace/executeCommand', { command: 'phasewright.summary', arguments: [{ uri }] });
      expect(summary.stores[0].text).toBe('16M×32');
    } finally {
      expect(await wide.stop()).toBe(0);
      rmSync(workspace, { recursive: true, force: true });
    }
  }, 120_000);
});

