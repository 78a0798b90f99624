// What `phasewright run` and the editor's run command share: from a table's text and a program's
// bytes to a ready ProgramRun (refusing a table with errors, as `phasewright build` does, or a
// machine the simulator cannot run), and from a run's ending to its exit code and one line of
// text. The exit codes:
//   0..255  the program's own exit code (exit / exit_group system call)
//   133     EBREAK: qemu-riscv32 dies from SIGTRAP there, which a shell shows as 128 + 5
//   132     illegal instruction (both machines agree it is one): 128 + SIGILL (4), as a shell
//           shows for qemu-riscv32
//   2       nothing ran: usage, file or program errors, a table with errors (unless forced), a
//           machine the simulator cannot run, a trace that could not be written
//   3       lock-step divergence: the table's machine and the RV32I reference disagree
//   4       the simulated machine stopped where a native run would not: a machine fault (bus
//           contention, an undefined value loaded, a combinational loop, a control code that
//           names no operation), an unsupported system call, the output limit
//   124     the step limit was reached first (as timeout(1) reports a time-out)
// Codes 2, 3 and 4 can also be a program's own exit code; the summary line says which it is.
//
// Deliberately not here: files, clocks, printing (the adapters do that).
import { analyse, errorCount, type Analysis, type SeverityConfig } from '../analysis';
import { ProgramRun, type RunEnding } from './lockstep';
import { SimPlan } from './plan';
import { loadProgram, type LoadedProgram } from './program';
import { stopText } from './describe';

export const EXIT_REFUSED = 2;
export const EXIT_DIVERGENCE = 3;
export const EXIT_MACHINE_STOPPED = 4;
export const EXIT_ILLEGAL_INSTRUCTION = 128 + 4;
export const EXIT_EBREAK = 128 + 5;
export const EXIT_STEP_LIMIT = 124;

/** Default step limit: well above the 63 million steps the longest test program takes on the demo table. */
export const DEFAULT_MAX_STEPS = 200_000_000;

export interface RunRequest {
  /** The table's text and the name to show for it. */
  text: string;
  sourceName: string;
  program: Uint8Array;
  /** For raw binary images: where they load and start. */
  loadAddress?: number;
  /** Compare with the reference interpreter (default true). */
  reference?: boolean;
  /** Run a table with errors anyway (its result then says nothing about a correct table). */
  force?: boolean;
  severities?: SeverityConfig;
}

export type PreparedTable =
  /** `untrusted`: set when forced past errors; the run shows a table that would not build. */
  | { ok: true; plan: SimPlan; program: LoadedProgram; analysis: Analysis; warnings: readonly string[]; untrusted?: string }
  | { ok: false; reason: string };

export type PreparedRun =
  | { ok: true; run: ProgramRun; analysis: Analysis; warnings: readonly string[]; untrusted?: string }
  | { ok: false; reason: string };

/** The table checked and planned and the program loaded, for a run or a debug session. */
export function prepareTable(request: RunRequest): PreparedTable {
  const analysis = analyse(request.text, { severities: request.severities });
  const errors = errorCount(analysis.diagnostics);
  if (errors > 0 && !request.force) {
    return { ok: false, reason: `${request.sourceName} has ${errors} error(s); nothing was run. Fix them first (\`phasewright check ${request.sourceName}\`), or pass --force to run it anyway (the result is then untrusted).` };
  }
  const untrusted =
    errors > 0 ? `UNTRUSTED: ${request.sourceName} has ${errors} error(s) and runs only because of --force; what it does says nothing about a correct table, and its images must not be programmed.` : undefined;
  const planned = SimPlan.build(analysis.machine);
  if (!planned.ok) return { ok: false, reason: `${request.sourceName} cannot be simulated: ${planned.errors.join('; ')}` };
  const loaded = loadProgram(request.program, request.loadAddress);
  if (!loaded.ok) return { ok: false, reason: `the program cannot be loaded: ${loaded.error}` };
  return { ok: true, plan: planned.plan, program: loaded.program, analysis, warnings: loaded.program.warnings, untrusted };
}

export function prepareRun(request: RunRequest): PreparedRun {
  const prepared = prepareTable(request);
  if (!prepared.ok) return prepared;
  const { plan, program, analysis, warnings, untrusted } = prepared;
  const run = new ProgramRun(plan, program, { reference: request.reference ?? true, loopFormulas: true, format: { lines: analysis.lines, file: request.sourceName } });
  return { ok: true, run, analysis, warnings, untrusted };
}

/** The exit code for a run that ended (`null`: the step limit came first). */
export function exitCodeOf(ending: RunEnding | null): number {
  if (!ending) return EXIT_STEP_LIMIT;
  switch (ending.kind) {
    case 'exit':
      return ending.exitCode;
    case 'ebreak':
      return EXIT_EBREAK;
    case 'stopped':
      return ending.stop.kind === 'illegal-instruction' ? EXIT_ILLEGAL_INSTRUCTION : EXIT_MACHINE_STOPPED;
    case 'divergence':
      return EXIT_DIVERGENCE;
    case 'fault':
      return EXIT_MACHINE_STOPPED;
  }
}

/** One line saying how the run ended. */
export function endingText(ending: RunEnding | null, maxSteps: number): string {
  if (!ending) return `stopped after the step limit of ${maxSteps} steps (raise it with --max-steps)`;
  switch (ending.kind) {
    case 'exit':
      return `program exited with code ${ending.exitCode}`;
    case 'ebreak':
      return `program stopped at EBREAK (${'0x' + ending.pc.toString(16).padStart(8, '0')}); exit code ${EXIT_EBREAK} as for SIGTRAP`;
    case 'stopped':
      return stopText(ending.stop);
    case 'divergence':
      return `lock-step divergence: ${ending.report.headline}`;
    case 'fault':
      return ending.report.headline;
  }
}
