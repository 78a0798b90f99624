// The server survives what clients and users throw at it: a handler that throws (a test-only
// request), malformed requests and bodies, documents it does not know, random edits; it exits
// with 0 after shutdown/exit and 1 on exit without shutdown; `phasewright lsp --stdio` runs the
// same server; and a missing transport is a clear usage error.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fork, spawnSync } from 'node:child_process';
import { IPCMessageReader, IPCMessageWriter, PublishDiagnosticsNotification, createProtocolConnection } from 'vscode-languageserver-protocol/node';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { LspClient, cliPath, ensureBuilt, root, serverPath } from './support/client';

const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
let client: LspClient;

beforeAll(async () => {
  await ensureBuilt();
  client = await LspClient.start();
  client.open('file:///robust/demo.pwt', demo, 1);
  await client.diagnosticsOf('file:///robust/demo.pwt', 1);
});

afterAll(() => client?.kill());

const hoverDemo = () => client.request<{ contents: { value: string } } | null>('textDocument/hover', { textDocument: { uri: 'file:///robust/demo.pwt' }, position: { line: demo.split('\n').findIndex((l) => l.startsWith('bus left')), character: 5 } });

describe('a handler that throws', () => {
  it('is logged, answered with the empty result, and the server answers the next request', async () => {
    expect(await client.request('phasewright/_testThrow', {})).toEqual({ survived: true });
    expect(client.logs.some((l) => l.includes('phasewright/_testThrow failed (please report it): Error: deliberate failure requested by a test'))).toBe(true);
    expect((await hoverDemo())?.contents.value).toMatch(/^\*\*bus `left`\*\*/);
  });
});

describe('bad requests', () => {
  it('answers requests about unknown documents with nothing', async () => {
    const unknown = { textDocument: { uri: 'file:///nowhere.pwt' }, position: { line: 0, character: 0 } };
    expect(await client.request('textDocument/hover', unknown)).toBeNull();
    expect(await client.request('textDocument/completion', unknown)).toEqual([]);
    expect(await client.request('textDocument/documentSymbol', { textDocument: unknown.textDocument })).toEqual([]);
    expect(await client.request('textDocument/formatting', { textDocument: unknown.textDocument, options: { tabSize: 2, insertSpaces: true } })).toEqual([]);
  });

  it('survives malformed parameters and positions past the end', async () => {
    expect(await client.request('textDocument/hover', { textDocument: { uri: 'file:///robust/demo.pwt' } })).toBeNull();
    expect(await client.request('textDocument/hover', { textDocument: { uri: 'file:///robust/demo.pwt' }, position: { line: 99999, character: 99999 } })).toBeNull();
    expect(await client.request('textDocument/codeAction', { textDocument: { uri: 'file:///robust/demo.pwt' }, range: null, context: null })).toEqual([]);
    const refused = await client.request('textDocument/rename', { textDocument: { uri: 'file:///robust/demo.pwt' }, position: { line: -5, character: 3 }, newName: 42 }).catch((e: { message: string }) => e);
    expect(refused).toMatchObject({ message: 'cannot rename: there is no declared name here to rename' });
    const notAName = await client.request('textDocument/rename', { textDocument: { uri: 'file:///robust/demo.pwt' }, position: { line: demo.split('\n').findIndex((l) => l.startsWith('bus left')), character: 5 }, newName: 42 }).catch((e: { message: string }) => e);
    expect(notAName).toMatchObject({ message: expect.stringContaining('is not a valid name') });
    expect((await hoverDemo())?.contents.value).toMatch(/^\*\*bus `left`\*\*/);
  });

  it('survives a message body that is not JSON', async () => {
    const body = '{"jsonrpc": "2.0", "id": 99, "method": ';
    client.child.stdin!.write(`Content-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`);
    expect((await hoverDemo())?.contents.value).toMatch(/^\*\*bus `left`\*\*/);
  });

  it('survives every prefix of the demo, analysing each version', async () => {
    const uri = 'file:///robust/prefixes.pwt';
    client.open(uri, '', 1);
    const cuts = Array.from({ length: 40 }, (_, i) => Math.floor((demo.length * (i + 1)) / 40));
    for (const [i, cut] of cuts.entries()) client.change(uri, i + 2, [{ text: demo.slice(0, cut) + '\u0000é"{' }]);
    const last = await client.diagnosticsOf(uri, cuts.length + 1);
    expect(last.diagnostics.map((d) => d.code)).toContain('syntax-error');
    expect((await hoverDemo())?.contents.value).toMatch(/^\*\*bus `left`\*\*/);
  });
});

describe('process lifetime', () => {
  it('exits with 0 after shutdown and exit', async () => {
    const other = await LspClient.start();
    expect(await other.stop()).toBe(0);
  });

  it('exits with 1 on exit without shutdown', async () => {
    const other = await LspClient.start();
    const code = new Promise((resolve) => other.child.on('exit', resolve));
    await other.connection.sendNotification('exit');
    expect(await code).toBe(1);
    other.kill();
  });

  it('runs the same server through `phasewright lsp --stdio`', async () => {
    const other = await LspClient.start({ viaCli: true });
    other.open('file:///cli/demo.pwt', demo.replace('  2: pc.inc, done', '  2: pc.inc, don'), 1);
    const published = await other.diagnosticsOf('file:///cli/demo.pwt', 1);
    expect(published.diagnostics.map((d) => d.code)).toContain('undefined-name');
    expect(await other.stop()).toBe(0);
  });

  it('speaks Node IPC with --node-ipc, as VS Code starts it', async () => {
    const child = fork(serverPath, ['--node-ipc'], { stdio: ['ignore', 'ignore', 'pipe', 'ipc'] });
    const connection = createProtocolConnection(new IPCMessageReader(child), new IPCMessageWriter(child));
    const diagnostics = new Promise<unknown[]>((resolve) => connection.onNotification(PublishDiagnosticsNotification.type, (p) => resolve(p.diagnostics)));
    connection.listen();
    await connection.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: {} });
    await connection.sendNotification('initialized', {});
    await connection.sendNotification('textDocument/didOpen', { textDocument: { uri: 'file:///ipc.pwt', languageId: 'phasewright', version: 1, text: demo } });
    expect(await diagnostics).toEqual([]);
    const exited = new Promise((resolve) => child.on('exit', resolve));
    await connection.sendRequest('shutdown');
    await connection.sendNotification('exit');
    expect(await exited).toBe(0);
    connection.dispose();
  });

  it('refuses to start without a transport, with a usage message', () => {
    const server = spawnSync(process.execPath, [serverPath], { encoding: 'utf8' });
    expect(server.status).toBe(2);
    expect(server.stderr).toContain('name a transport: --stdio or --node-ipc');
    const cli = spawnSync(process.execPath, [cliPath, 'lsp'], { encoding: 'utf8' });
    expect(cli.status).toBe(2);
    expect(cli.stderr).toBe('phasewright lsp: name a transport\nusage: phasewright lsp (--stdio | --node-ipc | --socket PORT | --pipe NAME) [--clientProcessId PID]\n');
  });
});
