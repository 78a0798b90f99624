// The proof obligations of one machine and their verdicts. For each RV32I instruction and each
// value of the instruction bits its encoding leaves free but the address lines carry, the
// encoded store is run symbolically (execute.ts) and each path's effect is held against the
// instruction's effect in isa/semantics.ts, evaluated over the same start state:
//   - the next pc,
//   - the register file afterwards, at every index (a free 5-bit `probe.x`: rd written with the
//     specified value when rd != 0, every other register unchanged),
//   - the memory afterwards, at every address (a free 32-bit `probe.m`: a store's bytes, nothing else).
// Assumed: the path's condition, the pc is four-byte aligned, and the instruction does not raise
// instruction-address-misaligned (then it does not retire, spec 2.2; the lock-step reference
// reports that itself). The negation is one QF_BV script; a solver's unsat proves the path for
// all values, sat refutes it with a model turned into concrete values.
// ECALL and EBREAK hand control to the environment (spec 2.8): every path must trap, and the
// walk decides that without a solver. A path that faults refutes the instruction whenever its
// condition can hold.
import { effectOf, SEMANTICS_INPUTS, DEFINED_NAMES, type Effect } from '../isa/semantics';
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import { scopeOf, type NameInfo } from '../parts/expr';
import type { SimPlan } from '../sim/plan';
import { executeInstruction, fixedBits, instructionTerm, previousInstructionPatterns, startState, unsupported, type MachinePath, type Start } from './execute';
import { smtScript, type Solver } from './smtlib';
import type { ArrayWrite } from './symbolicArray';
import { symbolic } from './symbolicExpr';
import { evalTerm, Terms, type Term } from './term';

/** One query: the facts whose joint satisfiability refutes the path, as a script, and how to read a model. */
export interface Obligation {
  readonly mnemonic: string;
  /** Which case: the free address bits' values and the path's words, in words. */
  readonly description: string;
  readonly script: string;
  /** Turns a solver's model into the counterexample. */
  readonly explain: (model: ReadonlyMap<string, bigint>) => Counterexample;
}

export interface Counterexample {
  readonly pc: number;
  readonly instruction: number;
  /** Register values before the instruction (those the instruction or the machine read). */
  readonly registers: { readonly index: number; readonly value: number }[];
  /** Memory bytes before the instruction (those read; the instruction's own bytes at pc left out). */
  readonly memory: { readonly address: number; readonly value: number }[];
  /** What differs: expected (specification) and obtained (machine). */
  readonly differences: { readonly what: 'pc' | 'register' | 'memory' | 'fault'; readonly where?: number; readonly expected: string; readonly obtained: string; readonly by?: string }[];
  /** The steps the machine ran: step, store address, strobes. */
  readonly steps: string[];
}

export type Verdict =
  | { readonly kind: 'proved'; readonly obligations: number }
  | { readonly kind: 'refuted'; readonly counterexample: Counterexample; readonly description: string }
  | { readonly kind: 'unknown'; readonly reason: string };

export interface InstructionResult {
  readonly mnemonic: string;
  readonly verdict: Verdict;
  readonly milliseconds: number;
}

const hex = (v: bigint | number) => `0x${(BigInt(v) & 0xffffffffn).toString(16).padStart(8, '0')}`;

/** Why the machine cannot be proved by this prover at all, or undefined. */
export function cannotProve(plan: SimPlan): string | undefined {
  return unsupported(plan);
}

/** The obligations of one instruction, or a verdict reached without a solver (ECALL/EBREAK, a construct given up). */
export function obligationsOf(plan: SimPlan, spec: InstructionSpec, previous = previousInstructionPatterns(plan)): { obligations: Obligation[]; settled?: Verdict } {
  const effect = effectOf(spec.mnemonic);
  const { value, mask } = fixedBits(spec);
  const free = plan.encoded.universe.irBits.filter((b) => !((mask >>> b) & 1));
  const obligations: Obligation[] = [];
  for (let n = 0; n < 2 ** free.length; n++) {
    let v = value;
    let m = mask;
    free.forEach((b, i) => {
      m |= 1 << b;
      if ((n >>> i) & 1) v |= 1 << b;
    });
    const bitsText = free.length ? `instruction bits ${free.map((b, i) => `${b}=${(n >>> i) & 1}`).join(' ')}` : 'all address bits fixed';
    const T = new Terms();
    const start = startState(T, instructionTerm(T, v >>> 0, m >>> 0));
    const paths = executeInstruction(T, plan, start, previous);
    for (const path of paths) {
      const description = `${bitsText}; steps ${path.steps.map((s) => s.step).join(',')} (addresses ${path.steps.map((s) => s.address).join(',')})`;
      if (path.ending.kind === 'given-up') return { obligations, settled: { kind: 'unknown', reason: `${description}: ${path.ending.why}` } };
      if (effect.special === 'environment-call' || effect.special === 'breakpoint') {
        if (path.ending.kind === 'trap') continue;
        obligations.push(faultObligation(T, spec, start, path, description, path.ending.kind === 'fault' ? path.ending.why : 'the machine does not trap; ECALL and EBREAK hand control to the environment (spec 2.8)'));
        continue;
      }
      if (path.ending.kind !== 'end') {
        obligations.push(faultObligation(T, spec, start, path, description, path.ending.kind === 'fault' ? path.ending.why : 'the machine traps; this instruction must retire'));
        continue;
      }
      obligations.push(effectObligation(T, spec, effect, start, path, description));
    }
  }
  if (obligations.length === 0 && (effect.special === 'environment-call' || effect.special === 'breakpoint')) return { obligations, settled: { kind: 'proved', obligations: 0 } };
  return { obligations };
}

/** The specification's terms over the start state. */
function specification(T: Terms, effect: Effect, start: Start) {
  const rs1v = start.registers.read(T.extract(start.ir, 19, 15));
  const rs2v = start.registers.read(T.extract(start.ir, 24, 20));
  const names = new Map<string, Term>([['pc', start.pc], ['ir', start.ir], ['rs1v', rs1v], ['rs2v', rs2v]]);
  const known = new Map<string, NameInfo>(SEMANTICS_INPUTS);
  const env = { name: (n: string) => names.get(n)!, element: (_m: string, index: Term) => start.memory.read(index) };
  const run = (e: Parameters<typeof symbolic>[1], width: number) => symbolic(T, e, scopeOf(known), env, width);
  for (const d of effect.definitions) {
    const width = DEFINED_NAMES.find((x) => x.name === d.name)!.width;
    names.set(d.name, run(d.expr, width));
    known.set(d.name, { width });
  }
  const nextPc = effect.nextPc ? run(effect.nextPc, 32) : undefined;
  const rd = effect.rd ? run(effect.rd, 32) : undefined;
  const misaligned = effect.misaligned ? run(effect.misaligned, 1) : T.false;
  const registerWrites: ArrayWrite[] = [];
  const rdIndex = T.extract(start.ir, 11, 7);
  if (rd) registerWrites.push({ index: rdIndex, value: rd, when: T.not(T.eq(rdIndex, T.const(5, 0))) });
  const memoryWrites: ArrayWrite[] = [];
  if (effect.store) {
    const value = run(effect.store.value, 8 * effect.store.size);
    const addr = names.get('addr')!;
    for (let k = 0; k < effect.store.size; k++) memoryWrites.push({ index: T.add(addr, T.const(32, k)), value: T.extract(value, 8 * k + 7, 8 * k), when: T.true });
  }
  return { nextPc, registerWrites, memoryWrites, misaligned, rs1v, rs2v };
}

/** Same index, same value, for the register file, the memory and every part's own register array. */
function consistency(start: Start): Term[] {
  return [...start.registers.consistency(), ...start.memory.consistency(), ...[...start.arrays.values()].flatMap((a) => a.consistency())];
}

function assumptions(T: Terms, start: Start, path: MachinePath, misaligned: Term): Term[] {
  return [...path.condition, T.eq(T.extract(start.pc, 1, 0), T.const(2, 0)), T.not(misaligned)];
}

function effectObligation(T: Terms, spec: InstructionSpec, effect: Effect, start: Start, path: MachinePath, description: string): Obligation {
  const want = specification(T, effect, start);
  const probeX = T.variable('probe.x', 5);
  const probeM = T.variable('probe.m', 32);
  const pcGot = path.pc;
  const pcWant = want.nextPc ?? start.pc;
  const xGot = start.registers.readAfter(path.registerWrites, probeX);
  const xWant = start.registers.readAfter(want.registerWrites, probeX);
  const mGot = start.memory.readAfter(path.memoryWrites, probeM);
  const mWant = start.memory.readAfter(want.memoryWrites, probeM);
  const holds = T.andAll([T.eq(pcGot, pcWant), T.eq(xGot, xWant), T.eq(mGot, mWant)]);
  const facts = [...assumptions(T, start, path, want.misaligned), T.not(holds)];
  facts.push(...consistency(start));
  const explain = (model: ReadonlyMap<string, bigint>): Counterexample => {
    const memo = new Map<number, bigint>();
    const ev = (t: Term) => evalTerm(t, model, memo);
    const differences: Counterexample['differences'][number][] = [];
    if (ev(pcGot) !== ev(pcWant)) differences.push({ what: 'pc', expected: hex(ev(pcWant)), obtained: hex(ev(pcGot)), by: path.pcWriter ? `step ${path.pcWriter.step}, ${path.pcWriter.strobe}` : 'no step changed the pc' });
    if (ev(xGot) !== ev(xWant)) {
      const index = Number(ev(probeX));
      const writer = [...path.registerWrites].reverse().find((w) => ev(w.when) === 1n && ev(w.index) === BigInt(index));
      differences.push({ what: 'register', where: index, expected: hex(ev(xWant)), obtained: hex(ev(xGot)), by: writer ? `step ${writer.step}, ${writer.strobe}` : 'no step wrote it' });
    }
    if (ev(mGot) !== ev(mWant)) {
      const address = Number(ev(probeM));
      const writer = [...path.memoryWrites].reverse().find((w) => ev(w.when) === 1n && ev(w.index) === BigInt(address));
      const byte = (v: bigint) => `0x${v.toString(16).padStart(2, '0')}`;
      differences.push({ what: 'memory', where: address, expected: byte(ev(mWant)), obtained: byte(ev(mGot)), by: writer ? `step ${writer.step}, ${writer.strobe}` : 'no step wrote it' });
    }
    return concreteStart(start, path, ev, differences);
  };
  return { mnemonic: spec.mnemonic, description, script: smtScript(facts, [`${spec.mnemonic}: ${description}`, 'sat refutes the table: machine effect differs from the RV32I semantics']), explain };
}

function faultObligation(T: Terms, spec: InstructionSpec, start: Start, path: MachinePath, description: string, why: string): Obligation {
  const effect = effectOf(spec.mnemonic);
  const want = specification(T, effect, start);
  const facts = [...assumptions(T, start, path, want.misaligned), ...consistency(start)];
  const explain = (model: ReadonlyMap<string, bigint>): Counterexample => {
    const memo = new Map<number, bigint>();
    return concreteStart(start, path, (t) => evalTerm(t, model, memo), [{ what: 'fault', expected: effect.special ? 'a trap to the environment' : 'the instruction retires', obtained: why }]);
  };
  return { mnemonic: spec.mnemonic, description, script: smtScript(facts, [`${spec.mnemonic}: ${description}`, `sat refutes the table: ${why}`]), explain };
}

function concreteStart(start: Start, path: MachinePath, ev: (t: Term) => bigint, differences: Counterexample['differences'][number][]): Counterexample {
  const pc = Number(ev(start.pc));
  const registers = new Map<number, number>();
  for (const { index } of start.registers.unknowns()) {
    const i = Number(ev(index));
    if (i !== 0 && !registers.has(i)) registers.set(i, Number(ev(start.registers.read(index))));
  }
  const memory = new Map<number, number>();
  for (const { index } of start.memory.unknowns()) {
    const a = Number(ev(index));
    if (((a - pc) >>> 0) < 4 || memory.has(a)) continue;
    memory.set(a, Number(ev(start.memory.read(index))));
  }
  return {
    pc,
    instruction: Number(ev(start.ir)),
    registers: [...registers].sort((a, b) => a[0] - b[0]).map(([index, value]) => ({ index, value })),
    memory: [...memory].sort((a, b) => a[0] - b[0]).map(([address, value]) => ({ address, value })),
    differences,
    steps: path.steps.map((s) => `step ${s.step} @${s.address}: ${s.asserted.join(', ') || '(nothing)'}`),
  };
}

/** Decides every obligation of one instruction with `solver`. */
export async function proveInstruction(plan: SimPlan, spec: InstructionSpec, solver: Solver, previous = previousInstructionPatterns(plan)): Promise<Verdict> {
  const { obligations, settled } = obligationsOf(plan, spec, previous);
  if (settled && settled.kind !== 'proved') return settled;
  for (const o of obligations) {
    const reply = await solver.decide(o.script);
    if (reply.status === 'sat') return { kind: 'refuted', counterexample: o.explain(reply.model), description: o.description };
    if (reply.status === 'unknown') return { kind: 'unknown', reason: `${o.description}: ${solver.name}: ${reply.reason}` };
  }
  return { kind: 'proved', obligations: obligations.length };
}

/** Proves each instruction (all 40, or those named), in the order of rv32i.ts. */
export async function proveMachine(plan: SimPlan, solver: Solver, options: { only?: readonly string[]; now?: () => number } = {}): Promise<InstructionResult[]> {
  const now = options.now ?? (() => Date.now());
  const previous = previousInstructionPatterns(plan);
  const results: InstructionResult[] = [];
  for (const spec of RV32I_INSTRUCTIONS) {
    if (options.only && !options.only.includes(spec.mnemonic)) continue;
    const t0 = now();
    let verdict: Verdict;
    try {
      verdict = await proveInstruction(plan, spec, solver, previous);
    } catch (e) {
      verdict = { kind: 'unknown', reason: `the prover failed: ${(e as Error).message}` };
    }
    results.push({ mnemonic: spec.mnemonic, verdict, milliseconds: now() - t0 });
  }
  return results;
}

/** The counterexample as text lines (the CLI prints them under the instruction's line). */
export function describeCounterexample(c: Counterexample): string[] {
  const lines = [`  pc = ${hex(c.pc)}, instruction word = ${hex(c.instruction)}`];
  if (c.registers.length) lines.push(`  registers before: ${c.registers.map((r) => `x${r.index} = ${hex(r.value)}`).join(', ')}`);
  if (c.memory.length) lines.push(`  memory before: ${c.memory.map((m) => `[${hex(m.address)}] = 0x${m.value.toString(16).padStart(2, '0')}`).join(', ')}`);
  for (const d of c.differences) {
    const where = d.what === 'register' ? `x${d.where}` : d.what === 'memory' ? `memory[${hex(d.where!)}]` : d.what;
    lines.push(`  ${where}: expected ${d.expected} (RV32I), obtained ${d.obtained} (table)${d.by ? `; last set at ${d.by}` : ''}`);
  }
  lines.push(...c.steps.map((s) => `    ${s}`));
  return lines;
}
