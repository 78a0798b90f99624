// Tasks of type `phasewright` (`check` and `build` of one file), run with the CLI bundled in the
// extension (dist/cli.js) so the `$phasewright` problem matcher puts the CLI's diagnostics into
// the Problems panel. It offers a check task per `.pwt` file of the workspace and resolves
// tasks written in tasks.json. It does not run anything itself: the editor's task system does
// (and only in trusted workspaces).
import * as path from 'node:path';
import * as vscode from 'vscode';

export const taskType = 'phasewright';

interface PhasewrightTaskDefinition extends vscode.TaskDefinition {
  command: 'check' | 'build';
  file: string;
}

export class PhasewrightTaskProvider implements vscode.TaskProvider {
  constructor(private readonly cliPath: string) {}

  async provideTasks(): Promise<vscode.Task[]> {
    const files = await vscode.workspace.findFiles('**/*.pwt', '**/node_modules/**', 50);
    const tasks: vscode.Task[] = [];
    for (const file of files) {
      const folder = vscode.workspace.getWorkspaceFolder(file);
      if (!folder) continue;
      const relative = path.relative(folder.uri.fsPath, file.fsPath);
      tasks.push(this.taskFor({ type: taskType, command: 'check', file: relative }, folder));
    }
    return tasks;
  }

  resolveTask(task: vscode.Task): vscode.Task | undefined {
    const definition = task.definition as PhasewrightTaskDefinition;
    if ((definition.command !== 'check' && definition.command !== 'build') || typeof definition.file !== 'string') return undefined;
    const folder = typeof task.scope === 'object' ? task.scope : vscode.workspace.workspaceFolders?.[0];
    if (!folder) return undefined;
    return this.taskFor(definition, folder);
  }

  private taskFor(definition: PhasewrightTaskDefinition, folder: vscode.WorkspaceFolder): vscode.Task {
    const config = vscode.workspace.getConfiguration('phasewright', folder.uri);
    const args = [this.cliPath, definition.command, definition.file];
    if (definition.command === 'build') {
      args.push('--out', config.get<string>('outputFolder') || 'out');
      const formats = config.get<string[]>('formats');
      if (formats?.length) args.push('--format', formats.join(','));
    }
    // The extension host may run inside Electron: make it behave as plain Node for the CLI.
    const execution = new vscode.ProcessExecution(process.execPath, args, { cwd: folder.uri.fsPath, env: { ELECTRON_RUN_AS_NODE: '1' } });
    const task = new vscode.Task(definition, folder, `${definition.command} ${definition.file}`, 'phasewright', execution, ['$phasewright']);
    task.group = definition.command === 'build' ? vscode.TaskGroup.Build : undefined;
    return task;
  }
}
