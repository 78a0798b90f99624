// A real LSP client for the tests: spawns the bundled server (dist/server.js) over stdio,
// speaks JSON-RPC through vscode-languageserver-protocol, answers the server's configuration
// requests from a settings object, and records every published diagnostics notification so a
// test can wait for the one it needs (by version), never for a fixed time.
import { type ChildProcess, execFileSync, spawn } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, rmSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import {
  ConfigurationRequest,
  DidChangeConfigurationNotification,
  type InitializeResult,
  LogMessageNotification,
  type ProtocolConnection,
  PublishDiagnosticsNotification,
  type PublishDiagnosticsParams,
  RegistrationRequest,
  StreamMessageReader,
  StreamMessageWriter,
  type TextDocumentContentChangeEvent,
  createProtocolConnection,
} from 'vscode-languageserver-protocol/node';

/** The repository root: the nearest folder above this file (or the bundle made of it) holding the demo. */
export const root = (() => {
  let dir = __dirname;
  while (!existsSync(join(dir, 'examples/halyard-32.pwt')) && dirname(dir) !== dir) dir = dirname(dir);
  return existsSync(join(dir, 'examples/halyard-32.pwt')) ? dir : resolve(__dirname, '../../..');
})();
export const serverPath = join(root, 'dist/server.js');
export const cliPath = join(root, 'dist/cli.js');

function newestSource(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const path = join(dir, entry.name);
    if (entry.isDirectory()) newest = Math.max(newest, newestSource(path));
    else if (entry.name.endsWith('.ts')) newest = Math.max(newest, statSync(path).mtimeMs);
  }
  return newest;
}

/**
 * Builds dist/ when a server source is newer than the bundle (`npm test` builds first, so this
 * is for `npx vitest run tests/lsp`). A lock folder keeps concurrent test files from building at
 * the same time.
 */
export async function ensureBuilt(): Promise<void> {
  const lock = join(root, 'tests/.tmp/build.lock');
  mkdirSync(join(root, 'tests/.tmp'), { recursive: true });
  for (;;) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      // Another test file is building; a lock older than two minutes is left over from a crash.
      if (existsSync(lock) && Date.now() - statSync(lock).mtimeMs > 120_000) rmSync(lock, { recursive: true, force: true });
      await new Promise((r) => setTimeout(r, 100));
    }
  }
  try {
    const fresh = existsSync(serverPath) && existsSync(cliPath) && statSync(serverPath).mtimeMs >= newestSource(join(root, 'server/src'));
    if (!fresh) execFileSync(process.execPath, ['scripts/build.mjs'], { cwd: root, stdio: 'pipe' });
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

/**
 * The settings with background proofs off unless the test sets `proofs` itself: most tests are
 * about structural diagnostics, and a proof's second publication of a version would race them.
 */
function withoutProofs(settings: Record<string, unknown>): Record<string, unknown> {
  return 'proofs' in settings ? settings : { proofs: { enabled: false }, ...settings };
}

export interface StartOptions {
  /** The `phasewright` settings section the client hands out. */
  settings?: Record<string, unknown>;
  /** Extra environment for the server. */
  env?: Record<string, string>;
  /** Use `dist/cli.js lsp --stdio` instead of `dist/server.js --stdio`. */
  viaCli?: boolean;
  /** Advertise workspace/configuration support (default true). */
  configuration?: boolean;
  /** Options for the server's Node process, e.g. `--expose-gc`. */
  nodeArgs?: string[];
  /** Workspace folders (paths) the client says it has open. */
  workspaceFolders?: string[];
}

export class LspClient {
  readonly published: PublishDiagnosticsParams[] = [];
  readonly logs: string[] = [];
  settings: Record<string, unknown>;
  initializeResult?: InitializeResult;
  private waiters: { test: (p: PublishDiagnosticsParams) => boolean; resolve: (p: PublishDiagnosticsParams) => void }[] = [];
  private exitCode?: Promise<number | null>;

  private constructor(
    readonly child: ChildProcess,
    readonly connection: ProtocolConnection,
    private readonly options: StartOptions,
  ) {
    this.settings = withoutProofs(options.settings ?? {});
  }

  static async start(options: StartOptions = {}): Promise<LspClient> {
    const args = options.viaCli ? [cliPath, 'lsp', '--stdio'] : [serverPath, '--stdio'];
    const child = spawn(process.execPath, [...(options.nodeArgs ?? []), ...args], { cwd: root, env: { ...process.env, PHASEWRIGHT_TEST_HOOKS: '1', ...options.env }, stdio: ['pipe', 'pipe', 'pipe'] });
    const connection = createProtocolConnection(new StreamMessageReader(child.stdout!), new StreamMessageWriter(child.stdin!));
    const client = new LspClient(child, connection, options);
    client.exitCode = new Promise((resolveExit) => child.on('exit', (code) => resolveExit(code)));
    child.stderr!.on('data', (data) => client.logs.push(`stderr: ${data}`));
    connection.onNotification(PublishDiagnosticsNotification.type, (params) => {
      client.published.push(params);
      client.waiters = client.waiters.filter((w) => {
        if (!w.test(params)) return true;
        w.resolve(params);
        return false;
      });
    });
    connection.onNotification(LogMessageNotification.type, (params) => {
      client.logs.push(params.message);
    });
    connection.onRequest(ConfigurationRequest.type, (params) => params.items.map((item) => (item.section === 'phasewright' ? client.settings : null)));
    connection.onRequest(RegistrationRequest.type, () => undefined);
    connection.listen();
    client.initializeResult = await connection.sendRequest('initialize', {
      processId: process.pid,
      rootUri: null,
      workspaceFolders: options.workspaceFolders?.map((folder) => ({ uri: pathToFileURL(folder).href, name: folder })) ?? null,
      capabilities: {
        workspace: { configuration: options.configuration ?? true, didChangeConfiguration: { dynamicRegistration: true } },
        textDocument: { publishDiagnostics: { versionSupport: true } },
      },
    });
    await connection.sendNotification('initialized', {});
    return client;
  }

  open(uri: string, text: string, version = 1): void {
    void this.connection.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'phasewright', version, text } });
  }

  change(uri: string, version: number, changes: TextDocumentContentChangeEvent[]): void {
    void this.connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: changes });
  }

  close(uri: string): void {
    void this.connection.sendNotification('textDocument/didClose', { textDocument: { uri } });
  }

  /** Changes the settings and tells the server, which pulls them again. */
  async changeSettings(settings: Record<string, unknown>): Promise<void> {
    this.settings = withoutProofs(settings);
    await this.connection.sendNotification(DidChangeConfigurationNotification.type, { settings: this.options.configuration === false ? { phasewright: settings } : null });
  }

  /** The first published diagnostics (already received or still to come) that pass `test`. */
  waitForDiagnostics(uri: string, test: (p: PublishDiagnosticsParams) => boolean = () => true, timeoutMillis = 20_000): Promise<PublishDiagnosticsParams> {
    const full = (p: PublishDiagnosticsParams) => p.uri === uri && test(p);
    const already = this.published.find(full);
    if (already) return Promise.resolve(already);
    return new Promise((resolveWait, reject) => {
      const timer = setTimeout(() => reject(new Error(`no diagnostics for ${uri} matching the test within ${timeoutMillis} ms; published: ${JSON.stringify(this.published.filter((p) => p.uri === uri).map((p) => p.version))}; logs: ${this.logs.join('\n')}`)), timeoutMillis);
      this.waiters.push({
        test: full,
        resolve: (p) => {
          clearTimeout(timer);
          resolveWait(p);
        },
      });
    });
  }

  /** Waits for the diagnostics of one version of a document. */
  diagnosticsOf(uri: string, version: number): Promise<PublishDiagnosticsParams> {
    return this.waitForDiagnostics(uri, (p) => p.version === version);
  }

  request<R>(method: string, params: unknown): Promise<R> {
    return this.connection.sendRequest(method, params) as Promise<R>;
  }

  /** shutdown, exit, and the server's exit code. */
  async stop(): Promise<number | null> {
    await this.connection.sendRequest('shutdown');
    await this.connection.sendNotification('exit');
    const code = await this.exitCode;
    this.connection.dispose();
    return code!;
  }

  /** Ends the server without the protocol's goodbye, for tests that failed midway. */
  kill(): void {
    if (this.child.exitCode === null) this.child.kill();
    this.connection.dispose();
  }
}
