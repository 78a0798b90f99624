// The Phasewright language server: the connection (stdio or Node IPC), its capabilities,
// document sync, settings and diagnostics, and the feature handlers. It never exits on bad
// input: handlers run in a guard, notifications are wrapped, and stray exceptions are logged.
// It exits when the client sends `exit` (code 0 after `shutdown`) or its input closes.
import {
  type ClientCapabilities,
  type Connection,
  DidChangeConfigurationNotification,
  type InitializeResult,
  ProposedFeatures,
  TextDocumentSyncKind,
  createConnection,
} from 'vscode-languageserver/node';
import { commandIds, registerCommand } from './commands';
import { DiagnosticsPublisher } from './diagnostics';
import { DocumentStore } from './documents';
import { registerEditorCommands } from './editorCommands';
import { registerRunCommand } from './runCommand';
import { registerFeatures, semanticTokensLegend } from './features';
import { describeError, guardedNotification } from './guard';
import { type ServerSettings, defaultSettings, readSettings } from './settings';

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
}

/** Starts the server on the transport named on the command line. */
export function startServer(options: ServerOptions = {}): Connection {
  const testHooks = options.testHooks ?? process.env.PHASEWRIGHT_TEST_HOOKS === '1';
  const connection = createConnection(ProposedFeatures.all);
  // Nothing may bring the process down but `exit`: log what escapes the handlers.
  process.on('uncaughtException', (err) => connection.console.error(`phasewright: unexpected error (please report it): ${describeError(err)}`));
  process.on('unhandledRejection', (err) => connection.console.error(`phasewright: unexpected error (please report it): ${describeError(err)}`));

  const store = new DocumentStore(defaultSettings());
  let capabilities: ClientCapabilities = {};
  let settingsLoaded!: () => void;
  const ready = new Promise<void>((resolve) => (settingsLoaded = resolve));
  const publisher = new DiagnosticsPublisher(connection, store, ready, options.debounceMillis ?? 4);

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
    if (JSON.stringify(settings) !== before) publisher.scheduleAll();
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

  connection.onInitialize((params): InitializeResult => {
    capabilities = params.capabilities ?? {};
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
    publisher.closed(event.document.uri);
  });

  registerFeatures(connection, store, { testHooks });
  store.documents.listen(connection);
  connection.listen();
  return connection;
}

export type { ServerSettings };
