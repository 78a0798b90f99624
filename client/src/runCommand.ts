// The "Run program on this table" command: asks for an RV32I program (an ELF executable, or a
// raw binary with its load address), has the language server run it through the open table in
// lock-step with the reference interpreter (`phasewright.run`, the same code as
// `phasewright run`), shows the program's output and the summary in the Phasewright output
// channel, and on a divergence or machine fault offers to jump to the step that made the
// difference. The program is simulated, never executed on this machine.
import * as path from 'node:path';
import * as vscode from 'vscode';
import { withProgressNotification } from './progress';
import type { ServerCommands } from './serverCommands';

export async function runProgramCommand(server: ServerCommands, output: vscode.OutputChannel, document: vscode.TextDocument | undefined): Promise<void> {
  if (!document || document.languageId !== 'phasewright') {
    void vscode.window.showWarningMessage('Phasewright: open a .pwt file to run a program through its table.');
    return;
  }
  const base = vscode.workspace.getWorkspaceFolder(document.uri)?.uri ?? (document.uri.scheme === 'file' ? vscode.Uri.file(path.dirname(document.uri.fsPath)) : undefined);
  const picked = await vscode.window.showOpenDialog({
    title: 'RV32I program to run through this table',
    defaultUri: base,
    canSelectMany: false,
    openLabel: 'Run',
    filters: { 'RV32I programs': ['elf', 'bin', ''], 'All files': ['*'] },
  });
  if (!picked?.[0]) return;
  const program = picked[0].fsPath;
  let loadAddress: number | undefined;
  if (program.endsWith('.bin')) {
    const text = await vscode.window.showInputBox({ title: 'Load address of the raw binary', value: '0x00000000', validateInput: (v) => (/^(0x[0-9a-f]+|[0-9]+)$/i.test(v.trim()) ? undefined : 'a number, e.g. 0x10000') });
    if (text === undefined) return;
    loadAddress = Number(text.trim());
  }
  const answer = await withProgressNotification(`running ${path.basename(program)} through the table`, () => server.run({ uri: document.uri.toString(), program, loadAddress }));
  const stamp = new Date().toLocaleTimeString();
  if (!answer.ok) {
    output.appendLine(`[${stamp}] run of ${path.basename(program)} refused: ${answer.reason}`);
    void vscode.window.showErrorMessage(`Phasewright: ${answer.reason}`);
    return;
  }
  output.appendLine(`[${stamp}] ${path.basename(program)} on ${path.basename(document.uri.fsPath)}: ${answer.ending}`);
  if (answer.stdout) output.append(answer.stdout.endsWith('\n') ? answer.stdout : answer.stdout + '\n');
  if (answer.stderr) output.append(answer.stderr.endsWith('\n') ? answer.stderr : answer.stderr + '\n');
  if (answer.outputTruncated) output.appendLine('(output shortened)');
  output.append(answer.summary.endsWith('\n') ? answer.summary : answer.summary + '\n');
  if (answer.problem) output.append(answer.problem.report.endsWith('\n') ? answer.problem.report : answer.problem.report + '\n');
  output.show(true);
  if (!answer.problem) {
    void vscode.window.showInformationMessage(`Phasewright: ${answer.ending} (${answer.instructions.toLocaleString()} instructions).`);
    return;
  }
  const choice = await vscode.window.showErrorMessage(`Phasewright: ${answer.problem.message}`, 'Go to Step', 'Show Report');
  if (choice === 'Go to Step') {
    const target = await vscode.workspace.openTextDocument(vscode.Uri.parse(answer.problem.uri));
    const { start, end } = answer.problem.range;
    const range = new vscode.Range(start.line, start.character, end.line, end.character);
    await vscode.window.showTextDocument(target, { selection: range });
  } else if (choice === 'Show Report') {
    output.show(false);
  }
}
