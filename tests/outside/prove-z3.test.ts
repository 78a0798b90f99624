// The prover's verdicts, decided by Debian's z3 (package z3) on the SMT-LIB 2 QF_BV scripts the
// core writes (SMT-LIB standard 2.6, logic QF_BV), and every refutation replayed outside the
// prover: the counterexample becomes a one-instruction program (the word from the ISA layer's
// encoder, checked against GNU as in isa-gnu-as.test.ts) with its registers and memory bytes,
// run through the simulator in lock-step with the RV32I reference interpreter, which must
// report the same instruction diverging. Every part runs from its kind's definition (the plan
// is built with `fromDefinitions`), so the examples whose datapaths use kinds of their own
// (gantry-32, trestle-32, capstan-32) are proved like the demo: all 40 instructions each. Each
// single-line fault below is refuted, in the demo's table and in the own kinds' definitions.
import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { instructionByMnemonic } from '../../server/src/core/isa/rv32i';
import { SparseMemory } from '../../server/src/core/isa/memory';
import { analyse } from '../../server/src/core/analysis';
import { obligationsOf, proofPlan, proveMachine, readSolverOutput, type Counterexample } from '../../server/src/core/prove';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import type { SimPlan } from '../../server/src/core/sim/plan';
import { z3Solver } from '../../server/src/cli/z3Solver';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { haveTools } from '../support/tools';
import { DEMO_TEXT, REPO, demoWith } from '../sim/support';

const haveZ3 = haveTools(['z3'], 'z3');

/** The plan the prover runs: every part from its kind's definition. */
function planOf(text: string): SimPlan {
  const built = proofPlan(analyse(text).machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  return built.plan;
}

const exampleText = (name: string) => readFileSync(join(REPO, 'examples', `${name}.pwt`), 'utf8');

/** An example with `from` replaced by `to` (the text must occur exactly once). */
function exampleWith(name: string, from: string, to: string): string {
  const text = exampleText(name);
  const at = text.indexOf(from);
  expect(at, `"${from}" occurs in ${name}`).toBeGreaterThanOrEqual(0);
  expect(text.indexOf(from, at + 1), `"${from}" occurs once in ${name}`).toBe(-1);
  return text.slice(0, at) + to + text.slice(at + from.length);
}
const solver = z3Solver();

/** The counterexample as a program: the instruction at pc, the bytes it reads, the registers set in both machines. */
function replay(plan: SimPlan, c: Counterexample) {
  const memory = new SparseMemory();
  for (const m of c.memory) memory.writeBytes(m.address, Uint8Array.of(m.value));
  memory.store32(c.pc, c.instruction);
  const run = new ProgramRun(plan, { memory, entry: c.pc, warnings: [] });
  for (let r = 1; r < 32; r++) {
    const v = c.registers.find((x) => x.index === r)?.value ?? 0;
    run.sim.regs[r] = v | 0;
    run.reference!.x[r] = v | 0;
  }
  return run.advance(10_000);
}

const FAULTS: { name: string; from: string; to: string; mnemonic: string }[] = [
  { name: 'a wrong ALU code in one op_fn row (xor computes or)', from: '100 0 xor   101 0 srl', to: '100 0 or    101 0 srl', mnemonic: 'xor' },
  { name: 'signed and unsigned compare swapped (slt and sltu rows of op_fn)', from: '010 0 slt   011 0 sltu', to: '010 0 sltu   011 0 slt', mnemonic: 'slt' },
  { name: 'a byte load without sign extension (load_size)', from: '000 byte   001 half   010 word   100 ubyte', to: '000 ubyte   001 half   010 word   100 ubyte', mnemonic: 'lb' },
  { name: 'the wrong immediate format for JAL', from: '3: pc.oe, imm.fmt=j,', to: '3: pc.oe, imm.fmt=b,', mnemonic: 'jal' },
  { name: 'taken and not taken swapped', from: '3 if taken:', to: '3 if !taken:', mnemonic: 'beq' },
  { name: 'a store addressed with the I-immediate', from: '2: x.rs1.oe, imm.fmt=s,', to: '2: x.rs1.oe, imm.fmt=i,', mnemonic: 'sw' },
];

/** Faults in the examples with kinds of their own: in a kind's definition, or in a map that drives one. */
const OWN_KIND_FAULTS: { name: string; example: string; from: string; to: string; mnemonic: string }[] = [
  { name: 'gantry-32\'s own pc + 4 adder adding 2 (return address of JAL)', example: 'gantry-32', from: 'drive sum width = x + 4', to: 'drive sum width = x + 2', mnemonic: 'jal' },
  { name: 'trestle-32\'s own extension buffer taking the sign of a byte load from bit 6', example: 'trestle-32', from: 'rep(select addr[1:0] { 0: lo[7], 1: lo[15]', to: 'rep(select addr[1:0] { 0: lo[6], 1: lo[15]', mnemonic: 'lb' },
  { name: 'capstan-32\'s top byte of ADD without the carry flip-flop (add instead of adc)', example: 'capstan-32', from: '000 0 adc   000 1 sbc   010 0 lt', to: '000 0 add   000 1 sbc   010 0 lt', mnemonic: 'add' },
  { name: 'capstan-32\'s own 8-bit ALU ignoring the carry in for adc', example: 'capstan-32', from: 'adc: a + b + zext(c, 8),', to: 'adc: a + b,', mnemonic: 'addi' },
];

describe.skipIf(!haveZ3)('the prover with Debian z3', () => {
  for (const example of ['halyard-32', 'gantry-32', 'trestle-32', 'capstan-32']) {
    it(`proves all 40 RV32I instructions on ${example}${example === 'halyard-32' ? ' (the demo)' : ', whose datapath uses kinds of its own'}`, async () => {
      const results = await proveMachine(planOf(exampleText(example)), solver);
      expect(results.map((r) => r.mnemonic)).toHaveLength(40);
      const notProved = results.filter((r) => r.verdict.kind !== 'proved').map((r) => `${r.mnemonic}: ${JSON.stringify(r.verdict)}`);
      expect(notProved).toEqual([]);
    }, 240_000);
  }

  for (const fault of [...FAULTS.map((f) => ({ ...f, text: () => demoWith(f.from, f.to) })), ...OWN_KIND_FAULTS.map((f) => ({ ...f, text: () => exampleWith(f.example, f.from, f.to) }))]) {
    it(`refutes ${fault.name}, and the counterexample diverges in lock-step with the reference`, async () => {
      const plan = planOf(fault.text());
      const [result] = await proveMachine(plan, solver, { only: [fault.mnemonic] });
      expect(result.verdict.kind).toBe('refuted');
      if (result.verdict.kind !== 'refuted') return;
      const c = result.verdict.counterexample;
      expect(c.differences.length).toBeGreaterThan(0);
      const ending = replay(plan, c);
      expect(ending?.kind, JSON.stringify(c)).toBe('divergence');
      if (ending?.kind === 'divergence') expect(ending.report.instruction.pc).toBe(c.pc);
      // The same table proves the other instructions the fault does not touch.
      const [other] = await proveMachine(plan, solver, { only: ['lui'] });
      expect(other.verdict.kind).toBe('proved');
    }, 120_000);
  }

  it('the exported scripts are plain QF_BV files z3 decides from disk as the prover did', () => {
    const dir = join(REPO, 'tests/.tmp/prove-z3');
    mkdirSync(dir, { recursive: true });
    const cases = [
      { plan: planOf(DEMO_TEXT), mnemonic: 'addi', expected: 'unsat' },
      { plan: planOf(demoWith(FAULTS[0].from, FAULTS[0].to)), mnemonic: 'xor', expected: 'sat' },
    ];
    for (const { plan, mnemonic, expected } of cases) {
      const { obligations } = obligationsOf(plan, instructionByMnemonic(mnemonic)!);
      expect(obligations.length).toBeGreaterThan(0);
      const answers = obligations.map((o, i) => {
        const file = join(dir, `${mnemonic}-${i}.smt2`);
        writeFileSync(file, o.script);
        let out: string;
        try {
          out = execFileSync('z3', ['-smt2', file], { encoding: 'utf8' });
        } catch (e) {
          out = String((e as { stdout?: string }).stdout ?? ''); // z3 exits 1 when get-model follows unsat
        }
        expect(o.script).toContain('(set-logic QF_BV)');
        return readSolverOutput(out).status;
      });
      expect(answers.includes('sat') ? 'sat' : 'unsat').toBe(expected);
    }
  });

  it('`phasewright prove` prints one line per instruction and exits 1 on a refutation', async () => {
    const dir = join(REPO, 'tests/.tmp/prove-z3');
    mkdirSync(dir, { recursive: true });
    writeFileSync(join(dir, 'faulty.pwt'), demoWith(FAULTS[3].from, FAULTS[3].to));
    const io = memoryIo(REPO);
    expect(await runCommand(['prove', 'tests/.tmp/prove-z3/faulty.pwt', '--instruction', 'jal'], io)).toBe(1);
    expect(io.stdout).toMatch(/^jal\s+refuted\s+\d+ ms/m);
    expect(io.stdout).toMatch(/pc: expected 0x[0-9a-f]{8} \(RV32I\), obtained 0x[0-9a-f]{8} \(table\); last set at step 3, pc\.ck/);
    const ok = memoryIo(REPO);
    expect(await runCommand(['prove', 'examples/halyard-32.pwt', '--instruction', 'bne', '--json'], ok)).toBe(0);
    const json = JSON.parse(ok.stdout);
    expect(json.results).toHaveLength(1);
    expect(json.results[0].verdict.kind).toBe('proved');
  }, 60_000);

  it('`phasewright prove --smt DIR` writes every obligation, and Debian\'s z3 decides each file as the verdict says', async () => {
    const out = join(REPO, 'tests/.tmp/prove-z3/smt');
    rmSync(out, { recursive: true, force: true });
    writeFileSync(join(REPO, 'tests/.tmp/prove-z3/faulty-xor.pwt'), demoWith(FAULTS[0].from, FAULTS[0].to));
    for (const [table, expected, code] of [['examples/halyard-32.pwt', 'unsat', 0], ['tests/.tmp/prove-z3/faulty-xor.pwt', 'sat', 1]] as const) {
      rmSync(out, { recursive: true, force: true });
      const io = memoryIo(REPO);
      expect(await runCommand(['prove', table, '--instruction', 'xor', '--smt', 'tests/.tmp/prove-z3/smt'], io)).toBe(code);
      expect(io.stdout).toContain('scope: the table over the datapath as described, for RV32I in user mode');
      const scripts = readdirSync(out).filter((f) => f.endsWith('.smt2'));
      expect(scripts.length).toBeGreaterThan(0);
      // z3 (Debian package z3) is the outside judge: every obligation of the correct table is unsat
      // (no values make the table differ from RV32I); the faulty table has one it satisfies.
      const answers = scripts.map((f) => {
        try {
          return execFileSync('z3', ['-smt2', join(out, f)], { encoding: 'utf8' }).split('\n')[0].trim();
        } catch (e) {
          return String((e as { stdout?: string }).stdout ?? '').split('\n')[0].trim();
        }
      });
      if (expected === 'unsat') expect(answers.every((a) => a === 'unsat')).toBe(true);
      else expect(answers).toContain('sat');
    }
  }, 60_000);
});
