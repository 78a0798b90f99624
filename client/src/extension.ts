// The VS Code side of Phasewright: starts the bundled language server (dist/server.js) over
// Node IPC, and wires the editor-only parts: the status-bar item, the six commands (new
// machine, build images, timing diagram, listing, run a program, bring-up view), the listing
// documents, the `phasewright` task type and the `phasewright` debugger (debugAdapter.ts) with
// its bring-up view (bringUpPanel.ts).
// Everything about the notation happens in the server; nothing here reads or runs workspace
// code, so the extension is safe in untrusted workspaces (building asks for trust first).
import * as vscode from 'vscode';
import { LanguageClient, type LanguageClientOptions, type ServerOptions, TransportKind } from 'vscode-languageclient/node';
import { BringUpPanel } from './bringUpPanel';
import { buildImagesCommand } from './buildCommand';
import { registerDebugger } from './debugAdapter';
import { newMachineCommand } from './newMachine';
import { runProgramCommand } from './runCommand';
import { LibraryProvider, libraryScheme } from './libraryView';
import { ListingProvider, listingScheme, showListingCommand } from './listingView';
import { ServerCommands } from './serverCommands';
import { StatusBar } from './statusBar';
import { PhasewrightTaskProvider, taskType } from './tasks';
import { TimingPanel } from './timingPanel';

let client: LanguageClient | undefined;

function phasewrightEditor(): vscode.TextEditor | undefined {
  const editor = vscode.window.activeTextEditor;
  if (editor?.document.languageId === 'phasewright') return editor;
  // A command run from a webview or the output leaves no active text editor: use a visible one.
  return vscode.window.visibleTextEditors.find((e) => e.document.languageId === 'phasewright');
}

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const serverModule = context.asAbsolutePath('dist/server.js');
  const serverOptions: ServerOptions = {
    run: { module: serverModule, transport: TransportKind.ipc },
    debug: { module: serverModule, transport: TransportKind.ipc, options: { execArgv: ['--nolazy', '--inspect=6019'] } },
  };
  const clientOptions: LanguageClientOptions = {
    // Files on disk and unsaved ones only: the listing and standard-library documents are
    // read-only views, not tables to analyse.
    documentSelector: [
      { language: 'phasewright', scheme: 'file' },
      { language: 'phasewright', scheme: 'untitled' },
    ],
    synchronize: { configurationSection: 'phasewright' },
    outputChannelName: 'Phasewright Language Server',
  };
  client = new LanguageClient('phasewright', 'Phasewright Language Server', serverOptions, clientOptions);
  const server = new ServerCommands(client);
  const output = vscode.window.createOutputChannel('Phasewright');
  const listings = new ListingProvider(server);

  context.subscriptions.push(
    output,
    listings,
    vscode.workspace.registerTextDocumentContentProvider(listingScheme, listings),
    vscode.workspace.registerTextDocumentContentProvider(libraryScheme, new LibraryProvider()),
    vscode.commands.registerCommand('phasewright.newMachine', () => newMachineCommand(context.extensionUri)),
    vscode.commands.registerCommand('phasewright.buildImages', () => buildImagesCommand(server, output, phasewrightEditor()?.document)),
    vscode.commands.registerCommand('phasewright.runProgram', () => runProgramCommand(server, output, phasewrightEditor()?.document)),
    vscode.commands.registerCommand('phasewright.showListing', () => showListingCommand(listings, phasewrightEditor()?.document)),
    vscode.commands.registerCommand('phasewright.showTimingDiagram', () => {
      const editor = phasewrightEditor();
      if (!editor) {
        void vscode.window.showWarningMessage('Phasewright: open a .pwt file to see the timing diagram of its classes.');
        return;
      }
      TimingPanel.show(server, editor);
    }),
    vscode.tasks.registerTaskProvider(taskType, new PhasewrightTaskProvider(context.asAbsolutePath('dist/cli.js'))),
    { dispose: () => TimingPanel.current?.dispose() },
    vscode.commands.registerCommand('phasewright.showBringUp', () => BringUpPanel.show()),
    ...BringUpPanel.register(),
    ...registerDebugger(context),
  );

  await client.start();
  context.subscriptions.push(new StatusBar(server));
}

export async function deactivate(): Promise<void> {
  if (client) await client.stop();
  client = undefined;
}
