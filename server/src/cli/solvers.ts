// Which solver decides the prover's obligations: Z3's WebAssembly build from npm (`wasm`, carried
// by the extension and the CLI bundle), or the z3 program (`z3`, Debian package z3, the one the
// outside checks hold the prover to). `auto` takes the WebAssembly build when it loads, else the
// program: in one process it answers the demo's obligations about 3.7 times faster than starting
// the program for each (3.7 s against 13.4 s for the 40 instructions, measured with both here).
import { spawnSync } from 'node:child_process';
import type { Solver } from '../core/prove';
import { z3Solver } from './z3Solver';
import { z3WasmAvailable, z3WasmSolver } from './z3Wasm';

export const SOLVER_CHOICES = ['auto', 'z3', 'wasm'] as const;
export type SolverChoice = (typeof SOLVER_CHOICES)[number];

let binaryRuns: boolean | undefined;

/** Whether Debian's z3 (or any `z3` on PATH) starts. */
export function z3BinaryRuns(): boolean {
  binaryRuns ??= spawnSync('z3', ['-version'], { stdio: 'ignore', timeout: 10_000 }).status === 0;
  return binaryRuns;
}

export function solverFor(choice: SolverChoice, options: { timeoutMs?: number } = {}): Solver {
  if (choice === 'z3') return z3Solver(options);
  if (choice === 'wasm' || z3WasmAvailable()) return z3WasmSolver(options);
  return z3Solver(options);
}
