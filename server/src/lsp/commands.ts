// The registry behind `workspace/executeCommand`. Features that the editor triggers as commands
// register here, before the server starts listening, so the server can list their ids in its
// capabilities:
//
//   registerCommand('phasewright.build', async (args, context) => { ... });
//
// A handler receives the command's arguments as the client sent them (check them: they come
// from outside) and a context giving the open documents' analyses, the connection (for logging
// and progress) and the cancellation token. What it returns is the request's result. Throwing a
// ResponseError reports a failure to the user; any other exception is logged and answered with
// null by the guard. Issue 4 adds `phasewright.build` and issue 6 `phasewright.run` this way.
import type { CancellationToken, Connection } from 'vscode-languageserver';
import { LSPErrorCodes, ResponseError } from 'vscode-languageserver';
import type { Analysis } from '../core/analysis';

export interface CommandContext {
  connection: Connection;
  token: CancellationToken;
  /** The analysis of an open document by URI, or undefined when it is not open (or too large). */
  analysisOf(uri: string): Analysis | undefined;
  /** The client's workspace folders as paths (none when the client opened single files). */
  workspaceFolders?(): readonly string[];
}

export type CommandHandler = (args: unknown[], context: CommandContext) => unknown | Promise<unknown>;

const registry = new Map<string, CommandHandler>();

/** Registers a command; an id may be registered once. */
export function registerCommand(id: string, handler: CommandHandler): void {
  if (registry.has(id)) throw new Error(`command ${id} is already registered`);
  registry.set(id, handler);
}

/** The ids to announce in the server's capabilities. */
export function commandIds(): string[] {
  return [...registry.keys()];
}

export async function executeCommand(id: string, args: unknown[] | undefined, context: CommandContext): Promise<unknown> {
  const handler = registry.get(id);
  if (!handler) throw new ResponseError(LSPErrorCodes.RequestFailed, `phasewright: unknown command '${id}'; known commands: ${commandIds().join(', ') || 'none'}`);
  return handler(args ?? [], context);
}
