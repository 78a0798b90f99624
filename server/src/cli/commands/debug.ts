// `phasewright debug --dap`: runs the debug adapter (Debug Adapter Protocol over stdin and
// stdout) in this process, the same adapter as dist/debug.js, for editors that start the CLI.
// The client's `launch` request names the table and the program (see docs/debugging.md).
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { runDebugAdapter } from '../../debug/run';

export const debugCommand = defineCommand({
  name: 'debug',
  summary: 'run the debug adapter (Debug Adapter Protocol, for editors)',
  operands: '',
  options: [{ name: 'dap', required: true, help: 'talk the Debug Adapter Protocol over stdin and stdout' }],
  details: ['The launch request takes { "table": FILE.pwt, "program": PROGRAM.elf, "lockStep": true, "stopOnEntry": true }; docs/debugging.md lists every attribute.'],
  exitCodes: [
    [0, 'the client disconnected'],
    [2, 'usage error: --dap missing'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length || !parsed.options.has('dap')) {
      io.err(`phasewright debug: ${parsed.errors[0] ?? (parsed.positionals.length ? `unknown argument '${parsed.positionals[0]}'` : 'give --dap')}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    return runDebugAdapter();
  },
});
