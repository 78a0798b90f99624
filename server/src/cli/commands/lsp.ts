// `phasewright lsp --stdio`: runs the language server in this process, the same server as
// dist/server.js, for editors configured to start the CLI. It answers until the client sends
// `exit`; the server itself ends the process.
import type { Command } from '../commands';
import { hasTransport, startServer } from '../../lsp/server';

export const lspCommand: Command = {
  name: 'lsp',
  summary: 'run the language server (for editors)',
  usage: 'lsp --stdio | --node-ipc',
  async run(args, io) {
    const unknown = args.filter((a) => !hasTransport([a]) && !a.startsWith('--clientProcessId'));
    if (!hasTransport(args) || unknown.length) {
      io.err(`phasewright lsp: ${unknown.length ? `unknown argument '${unknown[0]}'` : 'name a transport'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    startServer();
    // The connection keeps the process alive and exits it on `exit`; this never resolves.
    return new Promise<number>(() => undefined);
  },
};
