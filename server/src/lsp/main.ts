// Entry point of dist/server.js, the language server the editor starts:
// `node dist/server.js --stdio` (or `--node-ipc`, as VS Code's IPC transport passes).
import { hasTransport, startServer } from './server';

if (!hasTransport(process.argv.slice(2))) {
  process.stderr.write('phasewright language server: name a transport: --stdio or --node-ipc (or --socket=PORT, --pipe=NAME)\n');
  process.exit(2);
}
startServer();
