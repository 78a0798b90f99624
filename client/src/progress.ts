// Progress for the commands that wait on the language server (build, run, listing, diagram):
// a notification with the work's title while it runs, so a long build or run never looks
// frozen. One place, so every command shows it the same way.
import * as vscode from 'vscode';

export function withProgressNotification<T>(title: string, work: () => Thenable<T>): Thenable<T> {
  return vscode.window.withProgress({ location: vscode.ProgressLocation.Notification, title: `Phasewright: ${title}`, cancellable: false }, work);
}
