// The editor side of the debugger: VS Code starts the bundled adapter (dist/debug.js) with its
// own Node runtime for `phasewright` launch configurations, and F5 on a .pwt file without a
// launch.json gets a configuration for the table in the editor (the program is asked for).
// Everything the debugger shows comes from the adapter.
import * as vscode from 'vscode';

export function registerDebugger(context: vscode.ExtensionContext): vscode.Disposable[] {
  const adapter = context.asAbsolutePath('dist/debug.js');
  return [
    vscode.debug.registerDebugAdapterDescriptorFactory('phasewright', {
      // The extension host's own executable runs the adapter; in desktop VS Code it is Electron,
      // which acts as Node with ELECTRON_RUN_AS_NODE.
      createDebugAdapterDescriptor: () => new vscode.DebugAdapterExecutable(process.execPath, [adapter], { env: { ELECTRON_RUN_AS_NODE: '1' } }),
    }),
    vscode.debug.registerDebugConfigurationProvider('phasewright', {
      async resolveDebugConfiguration(folder, config) {
        if (!config.type && !config.request) {
          const editor = vscode.window.activeTextEditor;
          if (editor?.document.languageId !== 'phasewright') return config;
          Object.assign(config, { type: 'phasewright', request: 'launch', name: 'Debug a program on this table', table: editor.document.uri.fsPath, lockStep: true, stopOnEntry: true });
        }
        if (!config.program) {
          const picked = await vscode.window.showOpenDialog({ title: 'RV32I program to debug on the table', openLabel: 'Debug', filters: { 'ELF programs': ['elf'], 'All files': ['*'] } });
          if (!picked?.length) return undefined;
          config.program = picked[0].fsPath;
        }
        if (!config.cwd && folder) config.cwd = folder.uri.fsPath;
        return config;
      },
    }),
  ];
}
