// The `phasewright` command line: parses arguments, dispatches to a command module and
// returns the exit code. Every command takes an Io so tests can run it in-process.
import { runCommand } from './commands';
import { nodeIo } from './io';

// A reader that stops early (`phasewright check ... | head`) closes the pipe: stop quietly.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw err;
  });
}

runCommand(process.argv.slice(2), nodeIo()).then(
  (code) => {
    process.exitCode = code;
  },
  (err) => {
    process.stderr.write(`phasewright: internal error (please report it): ${(err as Error)?.stack ?? String(err)}\n`);
    process.exitCode = 70;
  },
);
