// `phasewright run FILE PROGRAM [--trace OUT.vcd] [--trace-steps N] [--max-steps N]
// [--no-reference] [--load-address ADDR] [--force] [--config FILE]`: runs an RV32I program through the table's encoded
// control store, step by step, in lock-step with the RV32I reference interpreter unless
// --no-reference. The program's stdout and stderr go to ours, its exit code is ours; a summary
// (how it ended, instructions, steps, CPI per class, wall time, instructions per second) and any
// divergence or fault report follow on stderr. Exit codes: see core/sim/session.ts (2 when
// nothing ran, 3 divergence, 4 machine stopped, 124 step limit, 132 illegal instruction,
// 133 EBREAK, else the program's own). The trace is a VCD file written atomically and read back.
// A table with errors is refused unless --force; a forced run says it is untrusted first and last.
// On a terminal, a progress line on stderr counts the steps of a long run.
//
// The program's output bytes are passed on as UTF-8 text (the CLI's output channel carries
// text): ASCII and valid UTF-8 come out unchanged, other bytes as U+FFFD.
import { mkdirSync } from 'node:fs';
import { basename, dirname, resolve } from 'node:path';
import { parseNumber } from '../../core/model/numbers';
import { figuresOf, formatFigures } from '../../core/sim/summary';
import {
  DEFAULT_MAX_STEPS,
  EXIT_DIVERGENCE,
  EXIT_EBREAK,
  EXIT_ILLEGAL_INSTRUCTION,
  EXIT_MACHINE_STOPPED,
  EXIT_REFUSED,
  EXIT_STEP_LIMIT,
  endingText,
  exitCodeOf,
  prepareRun,
} from '../../core/sim/session';
import { VcdTrace } from '../../core/sim/vcd';
import type { RunEnding } from '../../core/sim/lockstep';
import { parseArgs } from '../args';
import { loadSeverityConfig } from '../config';
import { defineCommand } from '../help';
import { progressLine } from '../progress';
import { OutputError, writeFileSafely } from '../output/safeWriter';
import { fsPath } from '../fsPath';
import { inputLimits, readInputFile } from '../inputFile';
import { describeFsError, readSource } from '../readSource';
import { VERSION } from '../version';

/** Steps dumped into a trace by default; about 200 bytes each on the demo machine. */
export const DEFAULT_TRACE_STEPS = 100_000;
/** Steps between output flushes. */
const CHUNK_STEPS = 4_000_000;

function positiveNumber(text: string | true | undefined, name: string, fallback: number): number | string {
  if (text === undefined) return fallback;
  const value = typeof text === 'string' ? parseNumber(text) : undefined;
  if (value === undefined || value <= 0) return `--${name} needs a positive number, e.g. --${name} 1000000`;
  return value;
}

export const runCommand = defineCommand({
  name: 'run',
  summary: 'run an RV32I program through the table, checked against a reference RV32I model',
  operands: 'FILE PROGRAM',
  options: [
    { name: 'trace', value: 'OUT.vcd', help: 'write the waveforms of the first steps as a VCD file' },
    { name: 'trace-steps', value: 'N', help: `steps to trace (default ${DEFAULT_TRACE_STEPS})` },
    { name: 'max-steps', value: 'N', help: `stop after N steps (default ${DEFAULT_MAX_STEPS})` },
    { name: 'no-reference', help: 'do not compare with the RV32I reference interpreter' },
    { name: 'load-address', value: 'ADDR', help: 'PROGRAM is a raw binary image: load it and start at ADDR' },
    { name: 'force', help: 'run a table with errors anyway; the result is untrusted and says so' },
    { name: 'config', value: 'FILE', help: 'severities per code from a JSON file, as for check' },
  ],
  details: [
    'PROGRAM is an ELF32 executable for RV32I (build one with `phasewright compile`) or a raw binary with --load-address. Its write output goes to stdout and stderr; a summary follows on stderr.',
  ],
  exitCodes: [
    ['0..255', 'the program\'s own exit code (exit system call)'],
    [EXIT_REFUSED, 'nothing ran: usage, file or program error, a table with errors (without --force), a machine the simulator cannot run, or the trace could not be written'],
    [EXIT_DIVERGENCE, 'lock-step divergence: the table\'s machine and the RV32I reference disagree'],
    [EXIT_MACHINE_STOPPED, 'the machine stopped: a fault (bus contention, undefined value...), an unsupported system call, the output limit'],
    [EXIT_STEP_LIMIT, 'the step limit was reached first'],
    [EXIT_ILLEGAL_INSTRUCTION, 'illegal instruction (as a shell shows SIGILL)'],
    [EXIT_EBREAK, 'EBREAK (as a shell shows SIGTRAP)'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length !== 2) {
      io.err(`phasewright run: ${parsed.errors[0] ?? 'give a .pwt file and a program (ELF, or a raw image with --load-address)'}\nusage: phasewright ${this.usage}\n`);
      return EXIT_REFUSED;
    }
    const [file, programFile] = parsed.positionals;
    const maxSteps = positiveNumber(parsed.options.get('max-steps'), 'max-steps', DEFAULT_MAX_STEPS);
    const traceSteps = positiveNumber(parsed.options.get('trace-steps'), 'trace-steps', DEFAULT_TRACE_STEPS);
    for (const problem of [maxSteps, traceSteps]) {
      if (typeof problem === 'string') {
        io.err(`phasewright run: ${problem}\n`);
        return EXIT_REFUSED;
      }
    }
    let loadAddress: number | undefined;
    const addressOption = parsed.options.get('load-address');
    if (addressOption !== undefined) {
      loadAddress = typeof addressOption === 'string' ? parseNumber(addressOption) : undefined;
      if (loadAddress === undefined || loadAddress > 0xffffffff) {
        io.err(`phasewright run: --load-address needs a 32-bit address, e.g. --load-address 0x10000\n`);
        return EXIT_REFUSED;
      }
    }
    const traceOption = parsed.options.get('trace');
    const configPath = parsed.options.get('config');
    const config = typeof configPath === 'string' ? loadSeverityConfig(resolve(io.cwd, configPath)) : { ok: true as const, severities: undefined };
    if (!config.ok) {
      io.err(`phasewright run: ${config.reason}\n`);
      return EXIT_REFUSED;
    }
    const source = readSource(resolve(io.cwd, file), undefined, file);
    if (!source.ok) {
      io.err(`phasewright run: ${source.reason}\n`);
      return EXIT_REFUSED;
    }
    // The ELF loader's own limit on loaded bytes is the same as the reader's on programs.
    const program = readInputFile(resolve(io.cwd, programFile), inputLimits.program, programFile);
    if (!program.ok) {
      io.err(`phasewright run: ${program.reason}\n`);
      return EXIT_REFUSED;
    }
    const prepared = prepareRun({
      text: source.text,
      sourceName: file,
      program: program.bytes,
      loadAddress,
      reference: !parsed.options.has('no-reference'),
      force: parsed.options.has('force'),
      severities: config.severities,
    });
    if (!prepared.ok) {
      io.err(`phasewright run: ${prepared.reason}\n`);
      return EXIT_REFUSED;
    }
    if (prepared.untrusted) io.err(`phasewright run: ${prepared.untrusted}\n`);
    for (const warning of prepared.warnings) io.err(`phasewright run: note: ${warning}\n`);
    const run = prepared.run;
    const sim = run.sim;
    const trace = typeof traceOption === 'string' ? new VcdTrace(sim, { maxSteps: traceSteps as number, date: new Date().toUTCString(), version: `Phasewright ${VERSION} bus-level simulator` }) : null;
    if (trace) sim.observer = trace.observe;

    const decoders = { out: new TextDecoder('utf-8'), err: new TextDecoder('utf-8') };
    const flushed = { out: 0, err: 0 };
    const flush = (final: boolean) => {
      const out = sim.environment.stdout();
      const err = sim.environment.stderr();
      if (out.length > flushed.out || final) io.out(decoders.out.decode(out.subarray(flushed.out), { stream: !final }));
      if (err.length > flushed.err || final) io.err(decoders.err.decode(err.subarray(flushed.err), { stream: !final }));
      flushed.out = out.length;
      flushed.err = err.length;
    };

    const progress = progressLine(io, 'running');
    const started = performance.now();
    let ending: RunEnding | null = null;
    let remaining = maxSteps as number;
    while (remaining > 0) {
      // While tracing, stop exactly where the dump is full, then run on without the observer (faster).
      const tracing = trace !== null && sim.observer !== null;
      const chunk = Math.min(remaining, CHUNK_STEPS, tracing ? Math.max(1, (traceSteps as number) - trace!.steps) : CHUNK_STEPS);
      const before = sim.steps;
      ending = run.advance(chunk);
      remaining -= sim.steps - before;
      progress.finish();
      flush(false);
      progress.update(sim.instructionsRetired, 0, 'instructions retired');
      if (ending) break;
      if (tracing && trace!.steps >= (traceSteps as number)) {
        sim.observer = null;
        trace!.truncated = true;
      }
      if (sim.steps === before) break; // nothing can run (cannot happen while the run has not ended)
    }
    const wallMs = performance.now() - started;
    progress.finish();
    flush(true);

    let code = exitCodeOf(ending);
    const lines: string[] = [];
    if (ending && (ending.kind === 'divergence' || ending.kind === 'fault')) lines.push(ending.report.text.trimEnd());
    lines.push(`phasewright run: ${endingText(ending, maxSteps as number)}${run.reference ? '' : ' (no reference comparison)'}`);
    if (prepared.untrusted) lines.push(`phasewright run: ${prepared.untrusted}`);
    if (trace) {
      const path = resolve(io.cwd, traceOption as string);
      try {
        mkdirSync(fsPath(dirname(path)), { recursive: true });
        const written = writeFileSafely(dirname(path), { name: basename(path), bytes: Buffer.from(trace.text(), 'latin1') });
        lines.push(`trace: ${traceOption} (${trace.steps} steps${trace.truncated ? `, the first ${traceSteps} only; raise --trace-steps for more` : ''}, ${written.sizeBytes} bytes)`);
      } catch (err) {
        const message = err instanceof OutputError ? err.message : `cannot write ${traceOption}: ${describeFsError(traceOption as string, err)}`;
        lines.push(`phasewright run: ${message}`);
        code = EXIT_REFUSED;
      }
    }
    io.err(lines.join('\n') + '\n' + formatFigures(figuresOf(sim, run.loopChecks), wallMs));
    return code;
  },
});
