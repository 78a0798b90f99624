// The solver from npm: the z3-solver package (Z3's own WebAssembly build, no GPU, no native
// install), for machines without Debian's z3 and for the editor, where the extension must carry
// its own solver. It is loaded lazily, on the first query: 33 MB of WebAssembly and about half a
// second to start, paid only when a proof first runs. Each SMT-LIB 2 script runs in a fresh Z3
// context through `Z3_eval_smtlib2_string`, and its text output is read by the same reader as
// the z3 binary's (core/prove/smtlib.ts), so the two solvers cannot be read differently.
//
// Where it is loaded from: next to the bundle (`dist/z3/solver.js`, which scripts/build.mjs
// writes with the WebAssembly beside it, so the VSIX carries it), else the package in
// node_modules (running from the sources).
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { readSolverOutput, type Solver, type SolverReply } from '../core/prove';

/** The part of the z3-solver package's low-level API used here. */
interface Z3LowLevel {
  mk_config(): unknown;
  mk_context_rc(config: unknown): unknown;
  del_context(context: unknown): void;
  del_config(config: unknown): void;
  global_param_set(name: string, value: string): void;
  eval_smtlib2_string(context: unknown, script: string): Promise<string>;
}

let loading: Promise<Z3LowLevel> | undefined;

/** Where the package's Node entry is: next to the bundle, else in node_modules; undefined when neither is there. */
function entry(): string | undefined {
  const bundled = join(__dirname, 'z3', 'solver.js');
  if (existsSync(bundled)) return bundled;
  try {
    return require.resolve(['z3', 'solver'].join('-'));
  } catch {
    return undefined;
  }
}

/** Whether the WebAssembly z3 is there to load (it is not started). */
export function z3WasmAvailable(): boolean {
  return entry() !== undefined;
}

/** The WebAssembly Z3, started once per process. */
function z3(): Promise<Z3LowLevel> {
  loading ??= (async () => {
    const path = entry();
    if (!path) throw new Error('the package is not installed (npm z3-solver) and dist/z3 is missing');
    // A path computed at run time, so that bundlers leave the require alone.
    const module = require(path) as { init(): Promise<{ Z3: Z3LowLevel }> };
    const { Z3 } = await module.init();
    return Z3;
  })();
  return loading;
}

export function z3WasmSolver(options: { timeoutMs?: number } = {}): Solver {
  const timeoutMs = options.timeoutMs ?? 60_000;
  return {
    name: 'z3 (WebAssembly, npm z3-solver)',
    decide: async (script): Promise<SolverReply> => {
      let Z3: Z3LowLevel;
      try {
        Z3 = await z3();
      } catch (e) {
        loading = undefined;
        return { status: 'unknown', reason: `cannot load the npm package z3-solver: ${(e as Error).message}` };
      }
      Z3.global_param_set('timeout', String(timeoutMs));
      const once = async (): Promise<SolverReply> => {
        const config = Z3.mk_config();
        const context = Z3.mk_context_rc(config);
        try {
          return readSolverOutput(await Z3.eval_smtlib2_string(context, script));
        } catch (e) {
          return { status: 'unknown', reason: `z3 (WebAssembly): ${(e as Error).message}` };
        } finally {
          Z3.del_context(context);
          Z3.del_config(config);
        }
      };
      // An answer of unknown is asked once more in a fresh context (seen once in a loaded CI
      // run on a script the same process had just decided); a second unknown is the answer.
      const first = await once();
      if (first.status !== 'unknown') return first;
      const second = await once();
      return second.status === 'unknown' ? { status: 'unknown', reason: `${second.reason} (asked twice; the first time: ${first.reason})` } : second;
    },
  };
}
