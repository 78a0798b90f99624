// The solver the extension carries, Z3's WebAssembly build from npm (z3-solver, cli/z3Wasm.ts),
// held to Debian's z3 (package z3), the outside reference: every obligation of a set of RV32I
// instructions on the demo and on a faulty copy of it (one decode-map row wrong: XOR computes OR)
// gets the same answer from both, and the whole verdicts agree (proved, and refuted with a
// counterexample that replays as a divergence through the simulator and the reference
// interpreter). The scripts are the prover's own SMT-LIB 2 (QF_BV), as `prove --smt` writes them.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { instructionByMnemonic } from '../../server/src/core/isa/rv32i';
import { obligationsOf, proofPlan, proveInstruction } from '../../server/src/core/prove';
import type { SimPlan } from '../../server/src/core/sim/plan';
import { z3Solver } from '../../server/src/cli/z3Solver';
import { z3WasmSolver } from '../../server/src/cli/z3Wasm';
import { haveTools } from '../support/tools';
import { replay } from '../support/replay';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { REPO } from '../sim/support';

const haveZ3 = haveTools(['z3'], 'z3');
const DEMO = readFileSync(join(REPO, 'examples', 'halyard-32.pwt'), 'utf8');
const FAULTY = DEMO.replace('100 0 xor   101 0 srl', '100 0 or    101 0 srl');
const MNEMONICS = ['addi', 'xor', 'sra', 'beq', 'lb', 'sw', 'jalr', 'lui'];

function planOf(text: string): SimPlan {
  const built = proofPlan(analyse(text).machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  return built.plan;
}

describe.skipIf(!haveZ3)('the WebAssembly z3 against Debian\'s z3', () => {
  const wasm = z3WasmSolver();
  const binary = z3Solver();

  it('the faulty table really differs from the demo', () => {
    expect(FAULTY).not.toBe(DEMO);
  });

  it.each([
    ['the demo', DEMO],
    ['the demo with XOR decoded as OR', FAULTY],
  ])('answers every obligation of %s as Debian z3 does', async (_name, text) => {
    const plan = planOf(text);
    const answers: string[] = [];
    for (const mnemonic of MNEMONICS) {
      for (const o of obligationsOf(plan, instructionByMnemonic(mnemonic)!).obligations) {
        const [a, b] = [await wasm.decide(o.script), await binary.decide(o.script)];
        expect([mnemonic, o.description, a.status], `${a.status === 'unknown' ? a.reason : ''} ${o.script.slice(0, 200)}`).toEqual([mnemonic, o.description, b.status]);
        answers.push(a.status);
      }
    }
    expect(answers.length).toBeGreaterThan(MNEMONICS.length);
    if (text === FAULTY) expect(answers).toContain('sat');
    else expect(answers.every((s) => s === 'unsat')).toBe(true);
  }, 240_000);

  it('refutes the faulty XOR with a counterexample that replays as a divergence', async () => {
    const plan = planOf(FAULTY);
    const verdict = await proveInstruction(plan, instructionByMnemonic('xor')!, wasm);
    expect(verdict.kind).toBe('refuted');
    if (verdict.kind !== 'refuted') return;
    expect(replay(plan, verdict.counterexample)).toMatchObject({ kind: 'divergence' });
    const fixed = await proveInstruction(planOf(DEMO), instructionByMnemonic('xor')!, wasm);
    expect(fixed.kind, fixed.kind === 'unknown' ? fixed.reason : '').toBe('proved');
  }, 120_000);

  it('`prove --solver` picks either; both give the same verdicts, and a bad name is a usage error', async () => {
    const verdicts: string[][] = [];
    for (const choice of ['wasm', 'z3']) {
      const io = memoryIo(REPO);
      expect(await runCommand(['prove', 'examples/halyard-32.pwt', '--instruction', 'beq', '--solver', choice, '--json'], io)).toBe(0);
      const json = JSON.parse(io.stdout);
      expect(json.solver).toBe(choice === 'z3' ? 'z3' : 'z3 (WebAssembly, npm z3-solver)');
      verdicts.push(json.results.map((r: { verdict: { kind: string } }) => r.verdict.kind));
    }
    expect(verdicts[0]).toEqual(['proved']);
    expect(verdicts[1]).toEqual(verdicts[0]);
    const bad = memoryIo(REPO);
    expect(await runCommand(['prove', 'examples/halyard-32.pwt', '--solver', 'cvc'], bad)).toBe(2);
    expect(bad.stderr).toContain('--solver takes auto, z3, wasm');
  }, 120_000);
});
