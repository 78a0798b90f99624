// `phasewright lsp --stdio`: runs the language server in this process, the same server as
// dist/server.js, for editors configured to start the CLI. It answers until the client sends
// `exit`; the server itself ends the process. The connection reads its transport from the
// process arguments; this command only checks that exactly one is named.
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { startServer } from '../../lsp/server';

export const lspCommand = defineCommand({
  name: 'lsp',
  summary: 'run the language server (for editors)',
  operands: '',
  options: [
    { name: 'stdio', oneOf: 'transport', required: true, help: 'talk LSP over stdin and stdout' },
    { name: 'node-ipc', oneOf: 'transport', required: true, help: 'talk LSP over the Node IPC channel (as VS Code starts servers)' },
    { name: 'socket', value: 'PORT', oneOf: 'transport', required: true, help: 'talk LSP over a TCP socket to this port (write --socket=PORT)' },
    { name: 'pipe', value: 'NAME', oneOf: 'transport', required: true, help: 'talk LSP over this named pipe (write --pipe=NAME)' },
    { name: 'clientProcessId', value: 'PID', help: 'exit when this process does (editors pass it)' },
  ],
  exitCodes: [
    [0, 'the client asked the server to exit after shutting it down'],
    [1, 'the client asked it to exit without a shutdown first'],
    [2, 'usage error: no transport, or more than one'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    const transports = this.options.filter((o) => o.oneOf === 'transport' && parsed.options.has(o.name));
    // The connection reads the transport from the process arguments, where a value must follow `=`.
    const detached = transports.find((o) => o.value && !args.some((a) => a.startsWith(`--${o.name}=`)));
    if (detached) parsed.errors.push(`write --${detached.name}=${detached.value}`);
    if (parsed.errors.length || parsed.positionals.length || transports.length !== 1) {
      const reason = parsed.errors[0] ?? (parsed.positionals.length ? `unknown argument '${parsed.positionals[0]}'` : transports.length ? 'name one transport' : 'name a transport');
      io.err(`phasewright lsp: ${reason}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    startServer();
    // The connection keeps the process alive and exits it on `exit`; this never resolves.
    return new Promise<number>(() => undefined);
  },
});
