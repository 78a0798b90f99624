// The Phasewright language server: the connection (stdio or Node IPC), its capabilities,
// document sync, settings and diagnostics, and the feature handlers. It never exits on bad
// input: handlers run in a guard, notifications are wrapped, and stray exceptions are logged.
// It exits when the client sends `exit` (code 0 after `shutdown`) or its input closes. Over
// stdio it also exits, with code 1 after saying why (to the client's log and to stderr), when
// the client's byte stream breaks: a header without a usable Content-Length, a body that is
// not the JSON its length announced, or a message left unfinished for `stallMillis`. Nothing
// after such a break can be trusted to start where a message starts, and a server that waits
// in silence leaves the client waiting too; exiting lets the client restart it.
import {
  type ClientCapabilities,
  type Connection,
  DidChangeConfigurationNotification,
  type InitializeResult,
  ProposedFeatures,
  StreamMessageReader,
  StreamMessageWriter,
  TextDocumentSyncKind,
  createConnection,
} from 'vscode-languageserver/node';
import { commandIds, registerCommand } from './commands';
import { DiagnosticsPublisher } from './diagnostics';
import { DocumentStore } from './documents';
import { ProofService } from './proofs';
import { registerEditorCommands } from './editorCommands';
import { registerRunCommand } from './runCommand';
import { registerFeatures, semanticTokensLegend } from './features';
import { describeError, guardedNotification } from './guard';
import { type ServerSettings, defaultSettings, readSettings } from './settings';
import { WorkspaceFolders } from './workspaceFolders';

export const transportFlags = ['--stdio', '--node-ipc', '--socket', '--pipe'];

/** True when the arguments name a transport the connection understands. */
export function hasTransport(argv: readonly string[]): boolean {
  return argv.some((arg) => transportFlags.some((flag) => arg === flag || arg.startsWith(`${flag}=`)));
}

export interface ServerOptions {
  /** Milliseconds between the last change of a burst and its analysis. */
  debounceMillis?: number;
  /** Enables the test-only request `phasewright/_testThrow` and command `phasewright._testEcho`. */
  testHooks?: boolean;
  /** How long a message may stay unfinished on stdio before the server gives up (30 s). */
  stallMillis?: number;
}

/**
 * The connection over stdio with the stream watched for breaks (see the module comment), or
 * the library's own choice of transport from the command line for the others (Node IPC carries
 * whole messages, so it cannot lose its framing).
 */
function openConnection(stallMillis: number): Connection {
  if (!process.argv.includes('--stdio')) return createConnection(ProposedFeatures.all);
  const reader = new StreamMessageReader(process.stdin);
  const writer = new StreamMessageWriter(process.stdout);
  const connection = createConnection(ProposedFeatures.all, reader, writer);
  let shutdownReceived = false;
  connection.onShutdown(() => {
    shutdownReceived = true;
  });
  let failing = false;
  const giveUp = (why: string) => {
    if (failing) return;
    failing = true;
    const message = `phasewright language server: ${why}; the message stream cannot be followed any further, so the server exits (code 1) for the client to restart it`;
    process.stderr.write(`${message}\n`);
    try {
      connection.console.error(message);
    } catch {
      // The output may be broken too; stderr has the message.
    }
    // Give the log message a moment to leave before the process ends.
    setTimeout(() => process.exit(1), 100);
  };
  reader.onError((error) => giveUp(`the client sent a message the server cannot read (${error.message.split('\n')[0]})`));
  reader.partialMessageTimeout = stallMillis;
  reader.onPartialMessage((info) => giveUp(`the client started a message and sent no more of it for ${Math.round(info.waitingTime / 1000)} s (is its Content-Length larger than the message?)`));
  reader.onClose(() => process.exit(shutdownReceived ? 0 : 1));
  return connection;
}

/** Starts the server on the transport named on the command line. */
export function startServer(options: ServerOptions = {}): Connection {
  const testHooks = options.testHooks ?? process.env.PHASEWRIGHT_TEST_HOOKS === '1';
  // Tests shorten the stall limit; nothing else may change it.
  const testStall = testHooks ? Number(process.env.PHASEWRIGHT_TEST_STALL_MS) : NaN;
  const connection = openConnection(options.stallMillis ?? (Number.isFinite(testStall) && testStall > 0 ? testStall : 30_000));
  // Nothing may bring the process down but `exit`: log what escapes the handlers.
  process.on('uncaughtException', (err) => connection.console.error(`phasewright: unexpected error (please report it): ${describeError(err)}`));
  process.on('unhandledRejection', (err) => connection.console.error(`phasewright: unexpected error (please report it): ${describeError(err)}`));

  const store = new DocumentStore(defaultSettings());
  let capabilities: ClientCapabilities = {};
  let settingsLoaded!: () => void;
  const ready = new Promise<void>((resolve) => (settingsLoaded = resolve));
  // Proofs run in a child process; a finished proof republishes its version and refreshes the lenses.
  let publisher!: DiagnosticsPublisher;
  const proofs = new ProofService(
    (uri, version) => {
      publisher.proved(uri, version);
      if (capabilities.workspace?.codeLens?.refreshSupport) void connection.sendRequest('workspace/codeLens/refresh').catch(() => undefined);
    },
    (message) => connection.console.log(message),
  );
  publisher = new DiagnosticsPublisher(connection, store, ready, options.debounceMillis ?? 4, { service: proofs, enabled: () => store.currentSettings.proofs });
  process.on('exit', () => proofs.dispose());

  if (testHooks) {
    registerCommand('phasewright._testEcho', (args) => ({ echo: args }));
  }
  registerEditorCommands();
  registerRunCommand();

  const applySettings = (section: unknown) => {
    const { settings, problems } = readSettings(section);
    for (const problem of problems) connection.console.warn(`phasewright: ${problem}`);
    const before = JSON.stringify(store.currentSettings);
    store.updateSettings(settings);
    if (JSON.stringify(settings) !== before) {
      proofs.forgetAll();
      publisher.scheduleAll();
    }
  };

  const pullSettings = async (): Promise<void> => {
    if (!capabilities.workspace?.configuration) return;
    try {
      const [section] = await connection.workspace.getConfiguration([{ section: 'phasewright' }]);
      applySettings(section);
    } catch (err) {
      connection.console.warn(`phasewright: could not read the settings, using defaults: ${describeError(err)}`);
    }
  };

  const workspaceFolders = new WorkspaceFolders();
  connection.onInitialize((params): InitializeResult => {
    capabilities = params.capabilities ?? {};
    workspaceFolders.initialize(params);
    return {
      capabilities: {
        textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental },
        hoverProvider: true,
        completionProvider: { triggerCharacters: ['=', '>', ',', ':', '(', '{', '&', '!', '.'], resolveProvider: false },
        definitionProvider: true,
        referencesProvider: true,
        renameProvider: { prepareProvider: true },
        documentSymbolProvider: true,
        workspaceSymbolProvider: true,
        foldingRangeProvider: true,
        semanticTokensProvider: { legend: semanticTokensLegend, full: true },
        documentFormattingProvider: true,
        codeActionProvider: { codeActionKinds: ['quickfix'] },
        inlayHintProvider: true,
        codeLensProvider: { resolveProvider: false },
        executeCommandProvider: { commands: commandIds() },
        workspace: { workspaceFolders: { supported: true, changeNotifications: true } },
      },
      serverInfo: { name: 'phasewright', version: '0.1.0' },
    };
  });

  connection.onInitialized(
    guardedNotification(connection, 'initialized', async () => {
      if (capabilities.workspace?.didChangeConfiguration?.dynamicRegistration) {
        await connection.client.register(DidChangeConfigurationNotification.type, { section: 'phasewright' });
      }
      // Diagnostics wait for the first settings, but never for long: a client that does not
      // answer the configuration request gets the defaults.
      const timeout = new Promise<void>((resolve) => setTimeout(resolve, 2000).unref());
      await Promise.race([pullSettings(), timeout]);
      settingsLoaded();
    }),
  );

  connection.onDidChangeConfiguration(
    guardedNotification(connection, 'didChangeConfiguration', async (params) => {
      if (capabilities.workspace?.configuration) await pullSettings();
      else applySettings((params.settings as Record<string, unknown> | undefined)?.phasewright);
    }),
  );

  store.documents.onDidChangeContent((change) => {
    // The previous version's analysis is of no further use; letting it go before the next one
    // is built keeps one analysis in memory instead of two.
    store.forget(change.document.uri);
    publisher.schedule(change.document.uri);
  });
  store.documents.onDidClose((event) => {
    store.forget(event.document.uri);
    proofs.forget(event.document.uri);
    publisher.closed(event.document.uri);
  });

  connection.onNotification(
    'workspace/didChangeWorkspaceFolders',
    guardedNotification(connection, 'didChangeWorkspaceFolders', (params: { event: Parameters<WorkspaceFolders['change']>[0] }) => workspaceFolders.change(params.event)),
  );
  registerFeatures(connection, store, { testHooks, workspaceFolders: () => workspaceFolders.list(), proofOf: (uri, version) => (store.currentSettings.proofs ? proofs.proofOf(uri, version) : undefined) });
  store.documents.listen(connection);
  connection.listen();
  return connection;
}

export type { ServerSettings };
