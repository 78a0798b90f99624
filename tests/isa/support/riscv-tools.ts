// Shared helpers for the ISA tests that compare our RV32I layer with outside tools: running a
// program under qemu-riscv32 user mode and under our reference interpreter, and scratch folders
// under tests/.tmp. Not a test file itself.
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createReferenceMachine, describeStop, type Rv32iReference, type StopReason } from '../../../server/src/core/isa/interp';

export const REPO_ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..', '..');
export const QEMU = 'qemu-riscv32';
/** A plain RV32I hart: every standard extension qemu enables by default is switched off. */
export const QEMU_CPU = 'rv32,m=false,a=false,f=false,d=false,c=false';

/** A fresh folder under tests/.tmp (git-ignored) for one test file's scratch files. */
export function scratchDir(prefix: string): string {
  const base = join(REPO_ROOT, 'tests', '.tmp');
  mkdirSync(base, { recursive: true });
  return mkdtempSync(join(base, `${prefix}-`));
}

export interface QemuRun {
  stdout: Buffer;
  stderr: Buffer;
  /** Exit status, or null when qemu died from a signal. */
  exitCode: number | null;
  signal: NodeJS.Signals | null;
}

export function runQemu(elfPath: string, extraArgs: string[] = [], timeoutMs = 60_000): QemuRun {
  const result = spawnSync(QEMU, ['-cpu', QEMU_CPU, ...extraArgs, elfPath], { timeout: timeoutMs, maxBuffer: 64 * 1024 * 1024 });
  if (result.error) throw result.error;
  return { stdout: result.stdout, stderr: result.stderr, exitCode: result.status, signal: result.signal };
}

export interface ReferenceRun {
  stdout: Buffer;
  stderr: Buffer;
  stop: StopReason | null;
  machine: Rv32iReference;
}

/** Loads `elfPath` into our interpreter and runs it; `prepare` may alter the machine first. */
export function runReference(elfPath: string, maxInstructions = 200_000_000, prepare?: (machine: Rv32iReference) => void): ReferenceRun {
  const created = createReferenceMachine(new Uint8Array(readFileSync(elfPath)));
  if (!created.ok) throw new Error(`${elfPath}: ${created.error}`);
  const machine = created.machine;
  prepare?.(machine);
  const { stop } = machine.run(maxInstructions);
  return {
    stdout: Buffer.from(machine.environment.stdout()),
    stderr: Buffer.from(machine.environment.stderr()),
    stop,
    machine,
  };
}

export { describeStop };

/** qemu's ending as the exit status a shell shows: the code, or 128 + the signal number (SIGTRAP 5 at EBREAK, SIGILL 4). */
export function qemuStatus(run: QemuRun): number | null {
  if (run.signal === 'SIGTRAP') return 128 + 5;
  if (run.signal === 'SIGILL') return 128 + 4;
  return run.exitCode;
}
