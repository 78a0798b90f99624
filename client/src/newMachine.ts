// The "New machine" command: writes a new control table into a workspace folder under a name the
// user types, never over an existing file, reads it back, and opens it. The user picks what it
// holds: the starter table (the "New machine" snippet with its defaults, starterTable.ts) or a
// copy of the Halyard-32 demo (examples/halyard-32.pwt, packaged with the extension). The
// language server then checks it like any table.
import * as vscode from 'vscode';
import { starterTable, tableFileName } from './starterTable';

interface Template {
  label: string;
  description: string;
  name: string;
  /** The table's text, from the files packaged with the extension. */
  text(extensionUri: vscode.Uri): Promise<string | undefined>;
}

const readText = async (uri: vscode.Uri) => new TextDecoder().decode(await vscode.workspace.fs.readFile(uri));

export const templates: readonly Template[] = [
  {
    label: 'Starter table',
    description: 'buses, a few parts and strobes, fetch and one class: a skeleton to grow',
    name: 'machine.pwt',
    text: async (extensionUri) => starterTable(await readText(vscode.Uri.joinPath(extensionUri, 'snippets', 'phasewright.json'))),
  },
  {
    label: 'Halyard-32 demo',
    description: 'the complete demo machine: three buses, all 40 RV32I instructions',
    name: 'halyard-32.pwt',
    text: (extensionUri) => readText(vscode.Uri.joinPath(extensionUri, 'examples', 'halyard-32.pwt')),
  },
];

export async function newMachineCommand(extensionUri: vscode.Uri): Promise<vscode.Uri | undefined> {
  const folders = vscode.workspace.workspaceFolders ?? [];
  const folder = folders.length > 1 ? await vscode.window.showWorkspaceFolderPick({ placeHolder: 'Folder for the new control table' }) : folders[0];
  if (!folder) {
    if (folders.length === 0) void vscode.window.showWarningMessage('Phasewright: open a folder first; the new control table is written into it.');
    return undefined;
  }
  const template = await vscode.window.showQuickPick(templates, { title: 'Phasewright: New machine', placeHolder: 'What the new control table holds' });
  if (!template) return undefined;
  const typed = await vscode.window.showInputBox({
    title: 'Phasewright: New machine',
    prompt: `File name of the new control table in ${folder.name}`,
    value: template.name,
    validateInput: (text) => {
      const checked = tableFileName(text);
      return checked.ok ? undefined : checked.reason;
    },
  });
  if (typed === undefined) return undefined;
  const checked = tableFileName(typed);
  if (!checked.ok) return undefined;
  const target = vscode.Uri.joinPath(folder.uri, checked.name);
  const text = await template.text(extensionUri).catch(() => undefined);
  if (!text) {
    void vscode.window.showErrorMessage(`Phasewright: the ${template.label.toLowerCase()} is missing from this installation; reinstall the extension.`);
    return undefined;
  }
  const bytes = new TextEncoder().encode(text);
  // A workspace edit that creates the file refuses to replace one that exists.
  const edit = new vscode.WorkspaceEdit();
  edit.createFile(target, { overwrite: false, ignoreIfExists: false, contents: bytes });
  if (!(await vscode.workspace.applyEdit(edit))) {
    void vscode.window.showErrorMessage(`Phasewright: ${checked.name} already exists in ${folder.name} or cannot be created; choose another name.`);
    return undefined;
  }
  const written = await vscode.workspace.fs.readFile(target);
  if (new TextDecoder().decode(written) !== text) {
    void vscode.window.showErrorMessage(`Phasewright: ${checked.name} reads back different from what was written; check the disk.`);
    return undefined;
  }
  await vscode.window.showTextDocument(await vscode.workspace.openTextDocument(target));
  return target;
}
