// Helpers for the simulator tests: the demo table (and variants made by replacing one of its
// lines), hand-assembled programs (words from the ISA layer's encoder, checked against GNU as in
// tests/outside/isa-gnu-as.test.ts) loaded at an address, and a runner. Not a test file itself.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { expect } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { SparseMemory } from '../../server/src/core/isa/memory';
import { encodeInstruction, type EncodeOperands } from '../../server/src/core/isa/rv32i';
import { ProgramRun, type ProgramRunOptions, type RunEnding } from '../../server/src/core/sim/lockstep';
import { SimPlan } from '../../server/src/core/sim/plan';
import type { BusSimulator } from '../../server/src/core/sim/simulator';
import type { LoadedProgram } from '../../server/src/core/sim/program';

export const REPO = join(__dirname, '..', '..');
export const DEMO_TEXT = readFileSync(join(REPO, 'examples', 'halyard-32.pwt'), 'utf8');

/** The demo table with `from` replaced by `to` (the text must occur exactly once). */
export function demoWith(from: string, to: string): string {
  const at = DEMO_TEXT.indexOf(from);
  expect(at, `"${from}" occurs in the demo table`).toBeGreaterThanOrEqual(0);
  expect(DEMO_TEXT.indexOf(from, at + 1), `"${from}" occurs once`).toBe(-1);
  return DEMO_TEXT.slice(0, at) + to + DEMO_TEXT.slice(at + from.length);
}

/** The simulator's plan of a table (tables with check errors are allowed: the simulator must cope). */
export function planOf(text: string): SimPlan {
  const built = SimPlan.build(analyse(text).machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  return built.plan;
}

/** One instruction word; throws on operands the encoder refuses. */
export function ins(mnemonic: string, operands: EncodeOperands = {}): number {
  const encoded = encodeInstruction(mnemonic, operands);
  if (!encoded.ok) throw new Error(encoded.error);
  return encoded.word;
}

export const PROGRAM_ORIGIN = 0x1000;

/** Words (and optional data bytes) in a fresh memory, entry at the first word. */
export function programOf(words: number[], data: { address: number; bytes: number[] }[] = [], origin = PROGRAM_ORIGIN): LoadedProgram {
  const memory = new SparseMemory();
  words.forEach((w, i) => memory.store32(origin + 4 * i, w));
  for (const d of data) memory.writeBytes(d.address, Uint8Array.from(d.bytes));
  return { memory, entry: origin, warnings: [] };
}

/** `li a7, 93; ecall` with a0 already set: the exit system call (RISC-V Linux: a7 = 93). */
export function exitWords(): number[] {
  return [ins('addi', { rd: 17, rs1: 0, imm: 93 }), ins('ecall')];
}

/** Runs to the end (or the step limit) and returns the run and its ending. */
export function runToEnd(plan: SimPlan, program: LoadedProgram, options: ProgramRunOptions = {}, maxSteps = 1_000_000): { run: ProgramRun; ending: RunEnding | null } {
  const run = new ProgramRun(plan, program, options);
  const ending = run.advance(maxSteps);
  return { run, ending };
}

/** An assembly item: a word, a label, or an instruction whose word needs label addresses. */
export type AsmItem = number | { label: string } | ((at: number, addressOf: (label: string) => number) => number);

/** Two-pass assembly of `items` at `origin`: labels get addresses, then every word is made. */
export function assemble(items: AsmItem[], origin = PROGRAM_ORIGIN): number[] {
  const labels = new Map<string, number>();
  let at = origin;
  for (const item of items) {
    if (typeof item === 'object') labels.set(item.label, at);
    else at += 4;
  }
  const addressOf = (label: string) => {
    const address = labels.get(label);
    if (address === undefined) throw new Error(`no label ${label}`);
    return address;
  };
  const words: number[] = [];
  at = origin;
  for (const item of items) {
    if (typeof item === 'object') continue;
    words.push(typeof item === 'number' ? item : item(at, addressOf));
    at += 4;
  }
  return words;
}

/** A branch or jal to a label: the offset is the label's address minus the instruction's. */
export function toLabel(mnemonic: string, label: string, operands: EncodeOperands = {}): AsmItem {
  return (at, addressOf) => ins(mnemonic, { ...operands, imm: addressOf(label) - at });
}

export const CLI = join(REPO, 'dist', 'cli.js');

/** Builds dist/cli.js (scripts/build.mjs) when it is missing or older than the simulator's sources. */
export function ensureCli(): void {
  // Any source the CLI bundles (the model, the checks and the library as well as the simulator).
  const sources = readdirSync(join(REPO, 'server/src'), { recursive: true, encoding: 'utf8' }).filter((f) => f.endsWith('.ts')).map((f) => join(REPO, 'server/src', f));
  const newest = Math.max(...sources.map((f) => statSync(f).mtimeMs));
  if (existsSync(CLI) && statSync(CLI).mtimeMs >= newest) return;
  execFileSync(process.execPath, [join(REPO, 'scripts', 'build.mjs')], { cwd: REPO, stdio: 'pipe' });
}

/** The state both machines must agree on after a step (a bus's value counts only while it is defined). */
export function stateOf(sim: BusSimulator): string {
  const buses = [...sim.busValue].map((v, b) => (sim.isBusDefined(b) ? (v >>> 0).toString(16) : '-'));
  return [`step ${sim.step} of ${sim.steps}, retired ${sim.instructionsRetired}`, `x ${[...sim.regs].map((v) => (v >>> 0).toString(16)).join(' ')}`, `parts ${[...sim.partValue].map((v) => (v >>> 0).toString(16)).join(' ')}`, `flags ${[...sim.flags].join('')}`, `buses ${buses.join(' ')}`, `writes ${JSON.stringify(sim.writes(true))}`, `stop ${JSON.stringify(sim.stopReason)}`].join('\n');
}

/** Whether two machines hold the same state after a step (typed arrays compared in place: this runs every step). */
export function sameState(a: BusSimulator, b: BusSimulator): boolean {
  if (a.step !== b.step || a.steps !== b.steps || a.instructionsRetired !== b.instructionsRetired || a.definedMask !== b.definedMask || a.writeCount !== b.writeCount || a.lastWriteCount !== b.lastWriteCount) return false;
  for (let i = 0; i < a.regs.length; i++) if (a.regs[i] !== b.regs[i]) return false;
  for (let i = 0; i < a.partValue.length; i++) if (a.partValue[i] !== b.partValue[i]) return false;
  for (let i = 0; i < a.flags.length; i++) if (a.flags[i] !== b.flags[i]) return false;
  for (let i = 0; i < a.busValue.length; i++) if (a.isBusDefined(i) && a.busValue[i] !== b.busValue[i]) return false;
  for (let i = 0; i < Math.min(Math.max(a.writeCount, a.lastWriteCount), a.writeAddress.length); i++) if (a.writeAddress[i] !== b.writeAddress[i] || a.writeSize[i] !== b.writeSize[i] || a.writeValue[i] !== b.writeValue[i]) return false;
  return true;
}

/**
 * Runs two machines one step at a time until both stop (or `maxSteps`), expecting the same
 * state after every step; returns the steps run. The readable comparison, and its report, is
 * made only where the quick one finds a difference.
 */
export function runSideBySide(one: BusSimulator, two: BusSimulator, maxSteps: number): number {
  expect(stateOf(two)).toBe(stateOf(one));
  let steps = 0;
  while (steps < maxSteps) {
    const x = one.run(1);
    const y = two.run(1);
    steps++;
    if (!sameState(one, two) || x.kind !== y.kind) expect({ step: steps, outcome: y, state: stateOf(two) }).toEqual({ step: steps, outcome: x, state: stateOf(one) });
    if (x.kind === 'stopped') break;
  }
  expect(stateOf(two)).toBe(stateOf(one));
  expect(two.environment.stdoutText()).toBe(one.environment.stdoutText());
  return steps;
}
