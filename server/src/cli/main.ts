// The `phasewright` command line: parses arguments, dispatches to a command module and
// returns the exit code. Every command takes an Io so tests can run it in-process.
import { runCommand } from './commands';
import { commandLineArguments } from './fsPath';
import { nodeIo } from './io';

// A reader that stops early (`phasewright check ... | head`) closes the pipe: stop quietly.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw err;
  });
}

// File names on the command line that are not UTF-8 are kept exact (fsPath.ts).
runCommand(commandLineArguments(), nodeIo()).then(
  (code) => {
    process.exitCode = code;
  },
  (err) => {
    process.stderr.write(`phasewright: internal error (please report it): ${(err as Error)?.stack ?? String(err)}\n`);
    process.exitCode = 70;
  },
);
