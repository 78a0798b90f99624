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
// reports that itself). The negation is one QF_BV script per case (value of the free bits),
// holding every path of the case: some path's condition holds and its effect differs. A solver's
// unsat proves the paths for all values, sat refutes one with a model turned into concrete values
// on the path the model takes. A path the walk stopped at its bound of steps leaves the
// instruction unknown unless the solver finds its condition cannot hold (unsat).
// ECALL and EBREAK hand control to the environment (spec 2.8): every path must trap, and the
// walk decides that without a solver. A path that faults refutes the instruction whenever its
// condition can hold.
import { effectOf, SEMANTICS_INPUTS, DEFINED_NAMES, type Effect } from '../isa/semantics';
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import { scopeOf, type NameInfo } from '../parts/expr';
import type { SimPlan } from '../sim/plan';
import { WALK_LIMITS, executeInstruction, fixedBits, mostRepeated, instructionTerm, previousInstructionPatterns, startState, unsupported, type MachinePath, type Start, type WalkLimits } from './execute';
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
  /** How many paths of the machine it holds (one script decides every path of its case). */
  readonly paths: number;
  /** The case the model takes, in words (one of the paths, when the obligation holds several). */
  readonly describe: (model: ReadonlyMap<string, bigint>) => string;
}

export interface Counterexample {
  readonly pc: number;
  readonly instruction: number;
  /** Register values before the instruction (those the instruction or the machine read). */
  readonly registers: { readonly index: number; readonly value: number }[];
  /** Memory bytes before the instruction (those read; the instruction's own bytes at pc left out). */
  readonly memory: { readonly address: number; readonly value: number }[];
  /** What differs: expected (specification) and obtained (machine). */
  readonly differences: { readonly what: 'pc' | 'register' | 'memory' | 'fault'; readonly where?: number; readonly expected: string; readonly obtained: string; readonly by?: string; readonly writer?: { readonly step: number; readonly strobe: string } }[];
  /** The steps the machine ran: step, store address, strobes. */
  readonly steps: string[];
  /** The same steps as data: the step and the store address it ran from (the editor places its diagnostics by them). */
  readonly path: { readonly step: number; readonly address: number }[];
}

/** The longest loop the walk unrolled on the instruction's paths: a step ran `times` times on one path. */
export interface Unrolled {
  readonly step: number;
  readonly times: number;
}

/** A path the walk stopped at its bound of steps: it leaves the instruction undecided unless its condition cannot hold. */
export interface BoundedPath {
  readonly description: string;
  readonly why: string;
  /** The path's condition with the start's assumptions: a solver's unsat says no values take this path. */
  readonly script: string;
}

export type Verdict =
  | { readonly kind: 'proved'; readonly obligations: number; readonly paths?: number; readonly unrolled?: Unrolled }
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

/** Steps (or addresses) as a list, a run of one repeated as `3x32`. */
function runs(values: readonly number[]): string {
  const out: string[] = [];
  for (let i = 0; i < values.length; ) {
    let j = i;
    while (j + 1 < values.length && values[j + 1] === values[i]) j++;
    out.push(j > i ? `${values[i]}x${j - i + 1}` : String(values[i]));
    i = j + 1;
  }
  return out.join(',');
}

/**
 * The obligations of one instruction, or a verdict reached without a solver (ECALL/EBREAK, a
 * construct given up); `bounded` lists the paths stopped at the walk's bound of steps, which the
 * solver must show cannot happen; `unrolled` the longest loop on the paths that became obligations.
 */
export function obligationsOf(plan: SimPlan, spec: InstructionSpec, previous = previousInstructionPatterns(plan), limits: WalkLimits = WALK_LIMITS): { obligations: Obligation[]; settled?: Verdict; bounded: BoundedPath[]; unrolled?: Unrolled } {
  const effect = effectOf(spec.mnemonic);
  const { value, mask } = fixedBits(spec);
  const free = plan.encoded.universe.irBits.filter((b) => !((mask >>> b) & 1));
  const obligations: Obligation[] = [];
  const bounded: BoundedPath[] = [];
  const budget = { paths: 0 };
  let unrolled: Unrolled | undefined;
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
    const paths = executeInstruction(T, plan, start, previous, limits, budget);
    const checks: PathCheck[] = [];
    for (const path of paths) {
      const description = `${bitsText}; steps ${runs(path.steps.map((s) => s.step))} (addresses ${runs(path.steps.map((s) => s.address))})`;
      if (path.ending.kind === 'given-up') {
        if (path.ending.limit === 'steps') {
          // The path may be one no values take (a loop counter that is none of its values): the solver says.
          bounded.push({ description, why: path.ending.why, script: obligationOf(T, spec, start, [faultCheck(T, spec, start, path, description, path.ending.why)]).script });
          continue;
        }
        return { obligations, bounded, settled: { kind: 'unknown', reason: `${description}: ${path.ending.why}` } };
      }
      const most = mostRepeated(path.steps);
      if (most.times > 1 && (!unrolled || most.times > unrolled.times)) unrolled = most;
      if (effect.special === 'environment-call' || effect.special === 'breakpoint') {
        if (path.ending.kind === 'trap') continue;
        checks.push(faultCheck(T, spec, start, path, description, path.ending.kind === 'fault' ? path.ending.why : 'the machine does not trap; ECALL and EBREAK hand control to the environment (spec 2.8)'));
        continue;
      }
      if (path.ending.kind !== 'end') {
        checks.push(faultCheck(T, spec, start, path, description, path.ending.kind === 'fault' ? path.ending.why : 'the machine traps; this instruction must retire'));
        continue;
      }
      checks.push(effectCheck(T, effect, start, path, description));
    }
    // The paths of one case share the start and most of their terms: one script decides them all.
    if (checks.length) obligations.push(obligationOf(T, spec, start, checks));
  }
  if (obligations.length === 0 && bounded.length === 0 && (effect.special === 'environment-call' || effect.special === 'breakpoint')) return { obligations, bounded, settled: { kind: 'proved', obligations: 0 } };
  return { obligations, bounded, ...(unrolled && { unrolled }) };
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

/** One path of a case: what makes it wrong (beside its condition), and how a model shows it. */
interface PathCheck {
  readonly path: MachinePath;
  readonly description: string;
  /** One bit: the path does something the specification does not (a fault path: always). */
  readonly wrong: Term;
  /** What the script's comment says refutes the table on this path. */
  readonly why: string;
  readonly explain: (model: ReadonlyMap<string, bigint>) => Counterexample;
}

/**
 * The obligation of one case: the start's assumptions, and that one of its paths can be taken
 * (its condition holds) and is wrong. With one path its facts are the path's condition and its
 * wrong effect; with several, their disjunction, and a model is read back on the path it takes.
 */
function obligationOf(T: Terms, spec: InstructionSpec, start: Start, checks: readonly PathCheck[]): Obligation {
  const misaligned = specification(T, effectOf(spec.mnemonic), start).misaligned;
  const common = [T.eq(T.extract(start.pc, 1, 0), T.const(2, 0)), T.not(misaligned)];
  const taken = (c: PathCheck) => T.andAll([...c.path.condition, c.wrong]);
  const facts =
    checks.length === 1
      ? [...checks[0].path.condition, ...common, ...(checks[0].wrong === T.true ? [] : [checks[0].wrong])]
      : [...common, checks.map(taken).reduce((a, b) => T.or(a, b), T.false)];
  facts.push(...consistency(start));
  const pick = (model: ReadonlyMap<string, bigint>): PathCheck => {
    if (checks.length === 1) return checks[0];
    const memo = new Map<number, bigint>();
    return checks.find((c) => evalTerm(taken(c), model, memo) === 1n) ?? checks[0];
  };
  const stepsOf = (c: PathCheck) => c.description.slice(c.description.indexOf(';') + 2).replace(/ \(addresses [^)]*\)/, '');
  const listed = checks.length <= 4 ? checks.map(stepsOf).join('; ') : `${stepsOf(checks[0])}; ...; ${stepsOf(checks[checks.length - 1])}`;
  const description = checks.length === 1 ? checks[0].description : `${checks[0].description.split(';')[0]}; ${checks.length} paths (${listed})`;
  const comment = checks.length === 1 ? [`${spec.mnemonic}: ${description}`, `sat refutes the table: ${checks[0].why}`] : [`${spec.mnemonic}: ${description}`, 'sat refutes the table: on one of these paths the machine differs from the RV32I semantics'];
  return { mnemonic: spec.mnemonic, description, paths: checks.length, script: smtScript(facts, comment), explain: (model) => pick(model).explain(model), describe: (model) => pick(model).description };
}

function effectCheck(T: Terms, effect: Effect, start: Start, path: MachinePath, description: string): PathCheck {
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
  const explain = (model: ReadonlyMap<string, bigint>): Counterexample => {
    const memo = new Map<number, bigint>();
    const ev = (t: Term) => evalTerm(t, model, memo);
    const differences: Counterexample['differences'][number][] = [];
    if (ev(pcGot) !== ev(pcWant)) differences.push({ what: 'pc', expected: hex(ev(pcWant)), obtained: hex(ev(pcGot)), by: path.pcWriter ? `step ${path.pcWriter.step}, ${path.pcWriter.strobe}` : 'no step changed the pc', ...(path.pcWriter && { writer: { step: path.pcWriter.step, strobe: path.pcWriter.strobe } }) });
    if (ev(xGot) !== ev(xWant)) {
      const index = Number(ev(probeX));
      const writer = [...path.registerWrites].reverse().find((w) => ev(w.when) === 1n && ev(w.index) === BigInt(index));
      differences.push({ what: 'register', where: index, expected: hex(ev(xWant)), obtained: hex(ev(xGot)), by: writer ? `step ${writer.step}, ${writer.strobe}` : 'no step wrote it', ...(writer && { writer: { step: writer.step!, strobe: writer.strobe! } }) });
    }
    if (ev(mGot) !== ev(mWant)) {
      const address = Number(ev(probeM));
      const writer = [...path.memoryWrites].reverse().find((w) => ev(w.when) === 1n && ev(w.index) === BigInt(address));
      const byte = (v: bigint) => `0x${v.toString(16).padStart(2, '0')}`;
      differences.push({ what: 'memory', where: address, expected: byte(ev(mWant)), obtained: byte(ev(mGot)), by: writer ? `step ${writer.step}, ${writer.strobe}` : 'no step wrote it', ...(writer && { writer: { step: writer.step!, strobe: writer.strobe! } }) });
    }
    return concreteStart(start, path, ev, differences, { x: probeX, m: probeM });
  };
  return { path, description, wrong: T.not(holds), why: 'machine effect differs from the RV32I semantics', explain };
}

function faultCheck(T: Terms, spec: InstructionSpec, start: Start, path: MachinePath, description: string, why: string): PathCheck {
  const effect = effectOf(spec.mnemonic);
  const explain = (model: ReadonlyMap<string, bigint>): Counterexample => {
    const memo = new Map<number, bigint>();
    return concreteStart(start, path, (t) => evalTerm(t, model, memo), [{ what: 'fault', expected: effect.special ? 'a trap to the environment' : 'the instruction retires', obtained: why }]);
  };
  return { path, description, wrong: T.true, why, explain };
}

/**
 * The counterexample's start in numbers. The probes (the index where the register file and the
 * memory are compared) read the start too; what they read is listed only when it is where the
 * difference lies, so "memory before" names bytes the machine or the instruction read.
 */
function concreteStart(start: Start, path: MachinePath, ev: (t: Term) => bigint, differences: Counterexample['differences'][number][], probes: { x?: Term; m?: Term } = {}): Counterexample {
  const pc = Number(ev(start.pc));
  const skipX = differences.some((d) => d.what === 'register') ? undefined : probes.x;
  const skipM = differences.some((d) => d.what === 'memory') ? undefined : probes.m;
  const registers = new Map<number, number>();
  for (const { index } of start.registers.unknowns()) {
    if (index === skipX) continue;
    const i = Number(ev(index));
    if (i !== 0 && !registers.has(i)) registers.set(i, Number(ev(start.registers.read(index))));
  }
  const memory = new Map<number, number>();
  for (const { index } of start.memory.unknowns()) {
    if (index === skipM) continue;
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
    path: path.steps.map((s) => ({ step: s.step, address: s.address })),
  };
}

/** Decides every obligation of one instruction with `solver`. */
export async function proveInstruction(plan: SimPlan, spec: InstructionSpec, solver: Solver, previous = previousInstructionPatterns(plan)): Promise<Verdict> {
  return decideObligations(obligationsOf(plan, spec, previous), solver);
}

/** The verdict on one instruction's obligations (from obligationsOf): the solver decides each in turn, the first refutation or unknown ends it. */
export async function decideObligations(built: ReturnType<typeof obligationsOf>, solver: Solver): Promise<Verdict> {
  const { obligations, settled, bounded, unrolled } = built;
  if (settled && settled.kind !== 'proved') return settled;
  // A path stopped at the bound is "not proved" unless no values take it.
  for (const b of bounded) {
    const reply = await solver.decide(b.script);
    if (reply.status === 'sat') return { kind: 'unknown', reason: `${b.description}: ${b.why}` };
    if (reply.status === 'unknown') return { kind: 'unknown', reason: `${b.description}: ${b.why}; ${solver.name} could not say whether the path can happen: ${reply.reason}` };
  }
  for (const o of obligations) {
    const reply = await solver.decide(o.script);
    if (reply.status === 'sat') return { kind: 'refuted', counterexample: o.explain(reply.model), description: o.describe(reply.model) };
    if (reply.status === 'unknown') return { kind: 'unknown', reason: `${o.description}: ${solver.name}: ${reply.reason}` };
  }
  if (settled) return settled;
  const paths = obligations.reduce((n, o) => n + o.paths, 0);
  return { kind: 'proved', obligations: obligations.length, ...(paths > obligations.length && { paths }), ...(unrolled && { unrolled }) };
}

/** Proves each instruction (all 40, or those named), in the order of rv32i.ts. */
export async function proveMachine(plan: SimPlan, solver: Solver, options: { only?: readonly string[]; now?: () => number; onResult?: (result: InstructionResult) => void } = {}): Promise<InstructionResult[]> {
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
    options.onResult?.(results[results.length - 1]);
  }
  return results;
}

/** The counterexample as text lines (the CLI prints them under the instruction's line). */
export function describeCounterexample(c: Counterexample, options: { steps?: boolean } = {}): string[] {
  const lines = [`  pc = ${hex(c.pc)}, instruction word = ${hex(c.instruction)}`];
  if (c.registers.length) lines.push(`  registers before: ${c.registers.map((r) => `x${r.index} = ${hex(r.value)}`).join(', ')}`);
  if (c.memory.length) lines.push(`  memory before: ${c.memory.map((m) => `[${hex(m.address)}] = 0x${m.value.toString(16).padStart(2, '0')}`).join(', ')}`);
  for (const d of c.differences) {
    const where = d.what === 'register' ? `x${d.where}` : d.what === 'memory' ? `memory[${hex(d.where!)}]` : d.what;
    lines.push(`  ${where}: expected ${d.expected} (RV32I), obtained ${d.obtained} (table)${d.by ? `; last set at ${d.by}` : ''}`);
  }
  if (options.steps !== false) lines.push(...c.steps.map((s) => `    ${s}`));
  return lines;
}
