// The language server over real stdio when the client's byte stream breaks: a header without
// Content-Length, a Content-Length that is not a number, one shorter than the message (the
// body is then not JSON) and one longer than what follows (the message never finishes). Each
// time the server must say why, to the client's log and to stderr, and exit with code 1 so
// the client restarts it, instead of going silent. A valid message first shows it was
// answering before the break.
import { type ChildProcess, spawn } from 'node:child_process';
import { beforeAll, describe, expect, it } from 'vitest';
import { ensureBuilt, root, serverPath } from './support/client';

beforeAll(async () => {
  await ensureBuilt();
}, 120_000);

function frame(body: string): string {
  return `Content-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`;
}

const initialize = frame(JSON.stringify({ jsonrpc: '2.0', id: 1, method: 'initialize', params: { processId: null, rootUri: null, capabilities: {} } }));

interface Ending {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Starts the server, sends `initialize`, waits for its answer, sends `broken`, and waits for the exit. */
function breakStream(broken: string): Promise<Ending> {
  const child: ChildProcess = spawn(process.execPath, [serverPath, '--stdio'], { cwd: root, env: { ...process.env, PHASEWRIGHT_TEST_HOOKS: '1', PHASEWRIGHT_TEST_STALL_MS: '500' } });
  let stdout = '';
  let stderr = '';
  let sent = false;
  child.stdout!.on('data', (data) => {
    stdout += data;
    // The answer to initialize has arrived: now break the stream.
    if (!sent && stdout.includes('"id":1')) {
      sent = true;
      child.stdin!.write(broken);
    }
  });
  child.stderr!.on('data', (data) => (stderr += data));
  child.stdin!.write(initialize);
  // A guard against a hang only; the assertions are on what the server does.
  const guard = setTimeout(() => child.kill(), 30_000);
  return new Promise((resolve) =>
    child.on('exit', (code) => {
      clearTimeout(guard);
      resolve({ code, stdout, stderr });
    }),
  );
}

describe('a broken message stream over stdio', () => {
  const valid = JSON.stringify({ jsonrpc: '2.0', id: 2, method: 'shutdown' });
  const cases: [string, string, string][] = [
    ['no Content-Length', `Content-Type: application/json\r\n\r\n${valid}`, 'Header must provide a Content-Length property.'],
    ['a Content-Length that is not a number', `Content-Length: twelve\r\n\r\n${valid}`, 'Content-Length value must be a number. Got twelve'],
    ['a Content-Length shorter than the message', `Content-Length: 10\r\n\r\n${valid}`, 'the client sent a message the server cannot read'],
    ['a Content-Length longer than what follows', `Content-Length: 5000\r\n\r\n${valid}`, 'the client started a message and sent no more of it'],
  ];
  for (const [what, broken, reason] of cases) {
    it(`after ${what}: logs why and exits with code 1`, async () => {
      const ending = await breakStream(broken);
      expect(ending.stdout).toContain('"id":1');
      expect(ending.code).toBe(1);
      expect(ending.stderr).toContain(reason);
      expect(ending.stderr).toContain('so the server exits (code 1) for the client to restart it');
      // The same line reached the client as a log message before the exit.
      expect(ending.stdout).toContain('window/logMessage');
      expect(ending.stdout).toContain(reason);
    }, 40_000);
  }
});
