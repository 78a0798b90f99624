// The prover on the demo (issue 16's speed goals: the whole demo proved <= 200 ms, one class
// re-proved after an edit <= 20 ms): the symbolic walk alone (obligations built, no solver), the
// whole proof with the WebAssembly z3 in this process (its start-up counted apart), one class
// (OP, ten instructions) again, and the share of the time the solver takes. Figures, not a
// pass/fail: the targets are printed beside them.
import { readFileSync } from 'node:fs';
import { analyse } from '../server/src/core/analysis';
import { RV32I_INSTRUCTIONS } from '../server/src/core/isa/rv32i';
import { obligationsOf, proofPlan, proveInstruction, type Solver } from '../server/src/core/prove';
import { z3WasmSolver } from '../server/src/cli/z3Wasm';
import { nowMs, row } from './stats';

async function main(): Promise<void> {
  const built = proofPlan(analyse(readFileSync('examples/halyard-32.pwt', 'utf8')).machine);
  if (!built.ok) throw new Error(built.errors.join('; '));
  const plan = built.plan;

  let start = nowMs();
  let obligations = 0;
  for (const spec of RV32I_INSTRUCTIONS) obligations += obligationsOf(plan, spec).obligations.length;
  const walkMs = nowMs() - start;

  const wasm = z3WasmSolver();
  let solverMs = 0;
  const timed: Solver = {
    name: wasm.name,
    decide: async (script) => {
      const t0 = nowMs();
      const reply = await wasm.decide(script);
      solverMs += nowMs() - t0;
      return reply;
    },
  };
  start = nowMs();
  await wasm.decide('(check-sat)');
  const startupMs = nowMs() - start;

  solverMs = 0;
  start = nowMs();
  for (const spec of RV32I_INSTRUCTIONS) await proveInstruction(plan, spec, timed);
  const wholeMs = nowMs() - start;
  const wholeSolverMs = solverMs;

  const op = RV32I_INSTRUCTIONS.filter((s) => s.opcode === 0b0110011);
  solverMs = 0;
  start = nowMs();
  for (const spec of op) await proveInstruction(plan, spec, timed);
  const classMs = nowMs() - start;

  console.log(`  demo: 40 instructions, ${obligations} obligations; solver ${wasm.name}`);
  row('symbolic walk of all 40 (no solver)', `${walkMs.toFixed(0)} ms`);
  row('solver start-up (once per process)', `${startupMs.toFixed(0)} ms`);
  row('whole demo proved', `${wholeMs.toFixed(0)} ms`, '<= 200 ms');
  row('  of which in the solver', `${((wholeSolverMs / wholeMs) * 100).toFixed(0)} %`);
  row(`one class re-proved (OP, ${op.length} instructions)`, `${classMs.toFixed(0)} ms`, '<= 20 ms');
  process.exit(0);
}

void main();
