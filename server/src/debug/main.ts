// Entry point of dist/debug.js: the Phasewright debug adapter over stdin and stdout, as VS Code
// starts it for a `phasewright` launch configuration (and `phasewright debug --dap` runs it from
// the CLI for other editors).
import { runDebugAdapter } from './run';

runDebugAdapter();
