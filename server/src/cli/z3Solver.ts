// The solver the CLI gives the prover: Debian's z3 (package `z3`) run on each SMT-LIB 2 script
// through its standard input (`z3 -in -smt2`, with a time limit per query). Chosen over the npm
// WASM build for this first slice: the Debian build is the one the outside checks already need,
// it starts in milliseconds, and it adds no 30 MB dependency; the core keeps the solver behind
// its `Solver` interface, so another build can take its place.
import { spawn } from 'node:child_process';
import { readSolverOutput, type Solver, type SolverReply } from '../core/prove';

export function z3Solver(options: { command?: string; timeoutMs?: number } = {}): Solver {
  const command = options.command ?? 'z3';
  const timeoutMs = options.timeoutMs ?? 60_000;
  return {
    name: 'z3',
    decide: (script) =>
      new Promise<SolverReply>((resolve) => {
        const child = spawn(command, ['-in', '-smt2', `-T:${Math.ceil(timeoutMs / 1000)}`], { stdio: ['pipe', 'pipe', 'pipe'] });
        let out = '';
        let err = '';
        child.stdout.setEncoding('utf8').on('data', (d: string) => (out += d));
        child.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
        child.on('error', (e) => resolve({ status: 'unknown', reason: `cannot run ${command}: ${e.message} (install Debian package z3)` }));
        child.on('close', () => {
          const reply = readSolverOutput(out);
          resolve(reply.status === 'unknown' && err ? { status: 'unknown', reason: `${reply.reason}; ${err.trim().slice(0, 200)}` } : reply);
        });
        child.stdin.end(script);
      }),
  };
}
