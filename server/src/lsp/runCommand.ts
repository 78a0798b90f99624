// The server side of the editor's `phasewright.run` command: runs an RV32I program through the
// open table (its text as the editor has it, saved or not) in lock-step with the reference
// interpreter, the way `phasewright run` does, and answers with the summary, the program's
// output, and on a divergence or machine fault the table line to jump to (uri and range of the
// step that made the difference). The run yields to the event loop between chunks, so the
// server keeps answering, and stops early when the client cancels.
//
// Arguments, either form: `[{ uri, program, loadAddress?, reference?, maxSteps? }]` (as the other
// editor commands take an object) or `[uri, programPath]`. A relative program path is taken
// from the table's folder. Failures the user can act on come back as `{ ok: false, reason }`.
// It does not decide what the editor shows.
import { dirname, isAbsolute, resolve, basename } from 'node:path';
import type { Range } from 'vscode-languageserver';
import { DEFAULT_MAX_STEPS, endingText, exitCodeOf, prepareRun } from '../core/sim/session';
import type { RunEnding } from '../core/sim/lockstep';
import { figuresOf, formatFigures } from '../core/sim/summary';
import { type CommandContext, registerCommand } from './commands';
import { toRange } from './convert';
import { pathFromFileUri } from '../cli/fsPath';
import { inputLimits, readInputFile } from '../cli/inputFile';
import { readSource } from '../cli/readSource';

export const runCommandId = 'phasewright.run';

export type Refusal = { ok: false; reason: string };

export interface RunAnswer {
  ok: true;
  exitCode: number;
  /** How the run ended, one line. */
  ending: string;
  /** Instructions, steps, CPI per class, wall time: the CLI's summary. */
  summary: string;
  stdout: string;
  stderr: string;
  /** True when stdout or stderr was longer than the answer carries (the first part is kept). */
  outputTruncated: boolean;
  instructions: number;
  steps: number;
  /** On a divergence or machine fault: where to look, and the whole report. */
  problem?: { kind: 'divergence' | 'fault'; uri: string; range: Range; message: string; report: string };
}

/** Most output characters returned per stream; the editor shows output, it does not archive it. */
const MAX_OUTPUT_CHARS = 256 * 1024;
const CHUNK_STEPS = 1_000_000;

interface RunArguments {
  uri: string;
  program: string;
  loadAddress?: number;
  reference: boolean;
  maxSteps: number;
}

function readArguments(args: unknown[]): RunArguments | Refusal {
  const [first, second] = args;
  if (typeof first === 'string') {
    if (typeof second !== 'string' || second === '') return { ok: false, reason: 'phasewright.run needs the table uri and a program path' };
    return { uri: first, program: second, reference: true, maxSteps: DEFAULT_MAX_STEPS };
  }
  if (typeof first !== 'object' || first === null || Array.isArray(first)) return { ok: false, reason: 'phasewright.run needs { uri, program } or the table uri and a program path' };
  const a = first as Record<string, unknown>;
  if (typeof a.uri !== 'string') return { ok: false, reason: 'the command argument has no "uri" string' };
  if (typeof a.program !== 'string' || a.program === '') return { ok: false, reason: 'the command argument has no "program" path' };
  if (a.loadAddress !== undefined && (typeof a.loadAddress !== 'number' || !Number.isInteger(a.loadAddress) || a.loadAddress < 0 || a.loadAddress > 0xffffffff)) {
    return { ok: false, reason: '"loadAddress" must be a 32-bit unsigned integer' };
  }
  if (a.maxSteps !== undefined && (typeof a.maxSteps !== 'number' || !Number.isInteger(a.maxSteps) || a.maxSteps <= 0)) return { ok: false, reason: '"maxSteps" must be a positive integer' };
  return { uri: a.uri, program: a.program, loadAddress: a.loadAddress as number | undefined, reference: a.reference !== false, maxSteps: (a.maxSteps as number | undefined) ?? DEFAULT_MAX_STEPS };
}

function filePathOf(uri: string): string | undefined {
  return pathFromFileUri(uri);
}

function isRefusal(value: unknown): value is Refusal {
  return typeof value === 'object' && value !== null && (value as Refusal).ok === false;
}

/** The table's text: the open document's, else the file's on disk (through the common reader). */
function tableText(uri: string, context: Pick<CommandContext, 'analysisOf'>): string | Refusal {
  const open = context.analysisOf(uri);
  if (open) return open.text;
  const path = filePathOf(uri);
  if (!path) return { ok: false, reason: 'the table is not open in the editor and its uri is not a file' };
  const source = readSource(path);
  return source.ok ? source.text : { ok: false, reason: `cannot read the table: ${source.reason}` };
}

function readProgram(path: string): Uint8Array | Refusal {
  const read = readInputFile(path, inputLimits.program);
  return read.ok ? read.bytes : { ok: false, reason: `cannot read the program: ${read.reason}` };
}

function clip(text: string): { text: string; clipped: boolean } {
  return text.length > MAX_OUTPUT_CHARS ? { text: text.slice(0, MAX_OUTPUT_CHARS), clipped: true } : { text, clipped: false };
}

/** `phasewright.run`: see the module comment. */
export async function runProgram(args: unknown[], context: Pick<CommandContext, 'analysisOf' | 'token'>): Promise<RunAnswer | Refusal> {
  const a = readArguments(args);
  if (isRefusal(a)) return a;
  const text = tableText(a.uri, context);
  if (isRefusal(text)) return text;
  const tablePath = filePathOf(a.uri);
  if (!isAbsolute(a.program) && !tablePath) return { ok: false, reason: 'give the program as an absolute path (the table has no folder to start from)' };
  const programPath = isAbsolute(a.program) ? a.program : resolve(dirname(tablePath!), a.program);
  const bytes = readProgram(programPath);
  if (isRefusal(bytes)) return bytes;
  const sourceName = tablePath ? basename(tablePath) : 'table.pwt';
  const prepared = prepareRun({ text, sourceName, program: bytes, loadAddress: a.loadAddress, reference: a.reference });
  if (!prepared.ok) return { ok: false, reason: prepared.reason };
  const run = prepared.run;
  const started = performance.now();
  let ending: RunEnding | null = null;
  let remaining = a.maxSteps;
  while (remaining > 0) {
    const before = run.sim.steps;
    ending = run.advance(Math.min(remaining, CHUNK_STEPS));
    remaining -= run.sim.steps - before;
    if (ending || run.sim.steps === before) break;
    // Let the server answer other requests between chunks, and notice a cancellation.
    await new Promise<void>((done) => setImmediate(done));
    if (context.token.isCancellationRequested) return { ok: false, reason: `cancelled after ${run.sim.instructionsRetired} instructions` };
  }
  const wallMs = performance.now() - started;
  const stdout = clip(run.sim.environment.stdoutText());
  const stderr = clip(run.sim.environment.stderrText());
  const figures = figuresOf(run.sim, run.loopChecks);
  const answer: RunAnswer = {
    ok: true,
    exitCode: exitCodeOf(ending),
    ending: endingText(ending, a.maxSteps),
    summary: formatFigures(figures, wallMs),
    stdout: stdout.text,
    stderr: stderr.text,
    outputTruncated: stdout.clipped || stderr.clipped,
    instructions: figures.instructions,
    steps: figures.steps,
  };
  if (ending && (ending.kind === 'divergence' || ending.kind === 'fault')) {
    const span = ending.report.source ?? { start: 0, end: 0 };
    answer.problem = { kind: ending.kind, uri: a.uri, range: toRange(prepared.analysis.lines, span), message: ending.report.headline, report: ending.report.text };
  }
  return answer;
}

/** Registers `phasewright.run` (the server calls this once, before it starts listening). */
export function registerRunCommand(register: (id: string, handler: (args: unknown[], context: CommandContext) => unknown) => void = registerCommand): void {
  register(runCommandId, runProgram);
}
