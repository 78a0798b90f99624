// The "Build control-store images" command: resolves `phasewright.outputFolder` for the file,
// asks for workspace trust first (building writes files), has the language server write the
// images (atomically, read back, with a manifest) and shows its summary in the Phasewright
// output channel. The images themselves are made by the server's `phasewright.build`, the same
// code as `phasewright build`; this module only gathers settings and reports.
import * as path from 'node:path';
import * as vscode from 'vscode';
import { withProgressNotification } from './progress';
import type { ServerCommands } from './serverCommands';

/** The absolute output folder for a document: the setting, relative to its workspace folder or its own folder. */
export function outputFolderFor(document: vscode.TextDocument): string | undefined {
  if (document.uri.scheme !== 'file') return undefined;
  const setting = vscode.workspace.getConfiguration('phasewright', document.uri).get<string>('outputFolder') || 'out';
  if (path.isAbsolute(setting)) return setting;
  const base = vscode.workspace.getWorkspaceFolder(document.uri)?.uri.fsPath ?? path.dirname(document.uri.fsPath);
  return path.resolve(base, setting);
}

export async function buildImagesCommand(server: ServerCommands, output: vscode.OutputChannel, document: vscode.TextDocument | undefined): Promise<void> {
  if (!document || document.languageId !== 'phasewright') {
    void vscode.window.showWarningMessage('Phasewright: open a .pwt file to build its control-store images.');
    return;
  }
  if (!vscode.workspace.isTrusted) {
    const choice = await vscode.window.showWarningMessage(
      'Phasewright: building writes image files into the workspace. Trust this workspace to build.',
      'Manage Workspace Trust',
    );
    if (choice) await vscode.commands.executeCommand('workbench.trust.manage');
    return;
  }
  const folder = outputFolderFor(document);
  if (!folder) {
    void vscode.window.showWarningMessage('Phasewright: images are built from files on disk only; save the file to a folder first.');
    return;
  }
  const config = vscode.workspace.getConfiguration('phasewright', document.uri);
  const answer = await withProgressNotification('building control-store images', () =>
    server.build({ uri: document.uri.toString(), outputFolder: folder, formats: config.get<string[]>('formats'), severity: config.get('severity') }),
  );
  const stamp = new Date().toLocaleTimeString();
  if (!answer.ok) {
    output.appendLine(`[${stamp}] build of ${path.basename(document.uri.fsPath)} refused: ${answer.reason}`);
    void vscode.window.showErrorMessage(`Phasewright: ${answer.reason}`, 'Show Problems').then((c) => c && vscode.commands.executeCommand('workbench.actions.view.problems'));
    return;
  }
  output.appendLine(`[${stamp}] build of ${path.basename(document.uri.fsPath)} into ${answer.folder}`);
  output.append(answer.summary);
  output.appendLine('');
  output.show(true);
  const shown = vscode.workspace.asRelativePath(answer.folder);
  const pick = await vscode.window.showInformationMessage(`Phasewright: wrote ${answer.files.length} files to ${shown}.`, 'Show Summary');
  if (pick) output.show(false);
}
