// Which solver decides the prover's obligations: Debian's z3 binary (`z3`, the one the outside
// checks use), or Z3's WebAssembly build from npm (`wasm`, carried by the extension, for machines
// without the binary). `auto` takes the binary when it runs, else the WebAssembly build.
import { spawnSync } from 'node:child_process';
import type { Solver } from '../core/prove';
import { z3Solver } from './z3Solver';
import { z3WasmSolver } from './z3Wasm';

export const SOLVER_CHOICES = ['auto', 'z3', 'wasm'] as const;
export type SolverChoice = (typeof SOLVER_CHOICES)[number];

let binaryRuns: boolean | undefined;

/** Whether Debian's z3 (or any `z3` on PATH) starts. */
export function z3BinaryRuns(): boolean {
  binaryRuns ??= spawnSync('z3', ['-version'], { stdio: 'ignore', timeout: 10_000 }).status === 0;
  return binaryRuns;
}

export function solverFor(choice: SolverChoice, options: { timeoutMs?: number } = {}): Solver {
  if (choice === 'z3' || (choice === 'auto' && z3BinaryRuns())) return z3Solver(options);
  return z3WasmSolver(options);
}
