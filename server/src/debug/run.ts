// Starts the debug adapter on this process's stdin and stdout. The session ends the process
// when the client disconnects (stdin closes).
import { PhasewrightDebugSession } from './session';

export function runDebugAdapter(): Promise<number> {
  const session = new PhasewrightDebugSession();
  return new Promise((resolve) => {
    process.stdin.on('end', () => resolve(0));
    session.on('close', () => resolve(0));
    session.start(process.stdin, process.stdout);
  });
}
