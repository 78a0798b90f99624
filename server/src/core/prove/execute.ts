// Symbolic execution of one instruction through the ENCODED control store: the words the
// simulator's plan read back from the images (sim/plan.ts) and the micro-ops it compiles from
// them (sim/microops.ts), walked from step 0 with terms instead of numbers. Every part runs from
// its kind's definition (definedParts.ts), the standard library's and the table's own alike:
// the plan is built with `fromDefinitions` (proofPlan), so its micro-ops are drive and edge
// ports of definitions, and the executor gives each port the terms of the buses, parts and
// states it reads and the codes of the step's fields. At each step the address is formed as
// the board forms it (step counter, instruction bits, flags); where a flag the lines carry is
// not known the walk forks, one path per distinct word, with the condition that leads there.
// Each path ends at a word asserting `end` (the instruction retires), at a trap (the
// environment takes over) or in a fault (an undefined bus loaded, a fault word), or it is given
// up with a reason (a micro-op the simulator runs on its built-in path, or anything else the
// executor does not model): given up is "not proved", never proved.
//
// On a machine with a sequencer part (a kind that `holds step`) the step is the sequencer's
// state: its `always` edge ports run from the definition at every closing edge like every other
// edge port (the word's codes for its controls and number fields, the step, the return
// registers), and the instruction retires at the edge after which the state is 0. The step is 0
// at the start; a return register holds an unknown left by the previous instruction. After each
// edge the step must be a constant, or a choice between constants (the walk forks on it);
// anything else (a return no call of this instruction saved) is given up. A loop unrolls one
// turn per fork on the flag the address lines carry; the path's facts (Facts) keep it from
// forking again on a term it took and drop a path its condition contradicts. The walk is
// bounded by steps per path and paths per instruction (WalkLimits): a path stopped there is
// given up with the bound, for prove.ts to ask the solver whether it can happen at all.
//
// The timing is the simulator's (sim/simulator.ts, docs/notation.md "Timing model"): floating
// buses lose their value, the drivers settle in order (a driver of some lines of a bus keeps
// the others), every edge port computes from the values before the edge, then all of them are
// stored at once, then the flags are read from the new state.
//
// The state before the instruction: the pc is `{pc.word, 0b00}` (aligned); every other state, every bus
// and every flag holds an unknown value of the previous instruction (a flag: what its
// definition gives over those states); the register file and the memory are InitialContents
// (the instruction's own bytes stand at pc). While the instruction register still holds the
// previous instruction (the fetch), its address bits can be those of any RV32I instruction:
// the walk takes every distinct word they reach and otherwise leaves the previous word
// unconstrained (more behaviours than the hardware has, so a proof stays a proof).
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import { driverNamed } from '../model/busDrivers';
import type { Machine } from '../model/types';
import { DRIVER_WORDS, D_CUSTOM, D_UNDEFINED, EDGE_WORDS, E_CUSTOM, E_FAULT, HEADER_END, HEADER_STOP, HEADER_TRAP, U_DRIVERS, U_FLOAT_MASK, U_HEADER, U_INDEX, U_NEED_MASK } from '../sim/microops';
import { SimPlan, type PlanResult } from '../sim/plan';
import { ProverLimit, definedParts, fit, type EdgeAssignment, type MachineView } from './definedParts';
import { InitialContents, type ArrayWrite } from './symbolicArray';
import type { Term, Terms } from './term';

export interface StepTrace {
  readonly step: number;
  readonly address: number;
  readonly asserted: readonly string[];
}

export type PathEnding =
  | { readonly kind: 'end' }
  | { readonly kind: 'trap' }
  | { readonly kind: 'fault'; readonly why: string }
  /** `limit`: the walk stopped at its bound of steps on one path (the path's condition may still be impossible) or of paths for the instruction. */
  | { readonly kind: 'given-up'; readonly why: string; readonly limit?: 'steps' | 'paths' };

/** How far the walk follows an instruction: steps on one path, and paths of one instruction (over all its free address bits). */
export interface WalkLimits {
  readonly maxSteps: number;
  readonly maxPaths: number;
}

/**
 * The bounds the prover walks with: a 5-bit loop counter's 32 turns of a one-step loop fit many
 * times over in 256 steps, and a loop that forks once per turn gives one path per turn.
 */
export const WALK_LIMITS: WalkLimits = { maxSteps: 256, maxPaths: 512 };

export interface MachinePath {
  /** What must hold for the machine to take this path (one-bit terms). */
  readonly condition: readonly Term[];
  readonly ending: PathEnding;
  readonly pc: Term;
  /** Step and strobe that last changed the pc (absent when nothing did). */
  readonly pcWriter?: { step: number; strobe: string };
  readonly registerWrites: readonly ArrayWrite[];
  readonly memoryWrites: readonly ArrayWrite[];
  readonly steps: readonly StepTrace[];
}

/** The architectural state before the instruction, shared by the machine's paths and the specification. */
export interface Start {
  readonly pc: Term;
  /** The instruction word: its fixed bits constants, the others bits of the variable `insn`. */
  readonly ir: Term;
  readonly registers: InitialContents;
  readonly memory: InitialContents;
  /** Register arrays of parts other than the register file (their contents before), by `part.state`; filled as the walk reads them. */
  readonly arrays: Map<string, InitialContents>;
}

interface State {
  buses: Term[];
  defined: number;
  /** Per bus, the lines that hold a defined value where the bus is not defined as a whole (as the simulator keeps them). */
  definedLines: number[];
  /** Scalar states by `part.state` (absent: as before the instruction). */
  slots: Map<string, Term>;
  flags: Term[];
  registerWrites: ArrayWrite[];
  memoryWrites: ArrayWrite[];
  /** Writes to the parts' own register arrays, by `part.state`. */
  arrayWrites: Map<string, ArrayWrite[]>;
  condition: Term[];
  /** What the condition says of some terms, read without a solver (see Facts). */
  facts: Facts;
  steps: StepTrace[];
  pcWriter?: { step: number; strobe: string };
}

/**
 * What a path's condition says of the terms it forked on, kept so the walk does not fork again
 * on what it already took and drops a path the condition rules out: the one-bit terms taken
 * (1 or 0), and for a term `x` the walk compared with constants (`x + c == d`, a loop counter's
 * zero flag), its value when one comparison held, the values the others ruled out. Exact, never
 * a guess: a path is dropped only when its condition contradicts itself (a counter of w bits
 * that is none of its 2^w values), and anything not of these shapes is left to the solver.
 */
interface Facts {
  decided: Map<number, number>;
  fixed: Map<number, bigint>;
  excluded: Map<number, ReadonlySet<bigint>>;
}

const cloneFacts = (f: Facts): Facts => ({ decided: new Map(f.decided), fixed: new Map(f.fixed), excluded: new Map(f.excluded) });

const clone = (s: State): State => ({
  ...s,
  buses: [...s.buses],
  definedLines: [...s.definedLines],
  slots: new Map(s.slots),
  flags: [...s.flags],
  registerWrites: [...s.registerWrites],
  memoryWrites: [...s.memoryWrites],
  arrayWrites: new Map([...s.arrayWrites].map(([k, w]) => [k, [...w]])),
  condition: [...s.condition],
  facts: cloneFacts(s.facts),
  steps: [...s.steps],
});

/** A one-bit term `x + c == d` (or its negation) read as `x == value`, with `x` not a constant; undefined for any other shape. */
function comparison(t: Term): { x: Term; value: bigint; negated: boolean } | undefined {
  let negated = false;
  let e = t;
  if (e.k === 'op' && e.op === 'bvnot' && e.w === 1) {
    negated = true;
    e = e.args[0];
  }
  if (e.k !== 'op' || e.op !== 'eq') return undefined;
  const [a, b] = e.args;
  const [side, d] = a.k === 'const' ? [b, a.v] : b.k === 'const' ? [a, b.v] : [undefined, 0n];
  if (!side) return undefined;
  const [x, c] = side.k === 'op' && side.op === 'bvadd' && side.args[1].k === 'const' ? [side.args[0], side.args[1].v] : [side, 0n];
  if (x.k === 'const') return undefined;
  return { x, value: BigInt.asUintN(x.w, d - c), negated };
}

/** The value the facts give a one-bit term, or undefined when they say nothing of it. */
function decided(facts: Facts, t: Term): number | undefined {
  if (t.k === 'const') return Number(t.v);
  const known = facts.decided.get(t.id);
  if (known !== undefined) return known;
  const cmp = comparison(t);
  if (!cmp) return undefined;
  const fixed = facts.fixed.get(cmp.x.id);
  let equal: boolean | undefined;
  if (fixed !== undefined) equal = fixed === cmp.value;
  else if (facts.excluded.get(cmp.x.id)?.has(cmp.value)) equal = false;
  if (equal === undefined) return undefined;
  return equal !== cmp.negated ? 1 : 0;
}

/** Adds `t == value` to the facts; false when the facts already contradict it (the path cannot happen). */
function assume(facts: Facts, t: Term, value: number): boolean {
  const known = decided(facts, t);
  if (known !== undefined) return known === value;
  facts.decided.set(t.id, value);
  const cmp = comparison(t);
  if (!cmp) return true;
  const equal = (value === 1) !== cmp.negated;
  const id = cmp.x.id;
  if (equal) {
    facts.fixed.set(id, cmp.value);
    return true;
  }
  const excluded = new Set(facts.excluded.get(id) ?? []);
  excluded.add(cmp.value);
  facts.excluded.set(id, excluded);
  const w = cmp.x.w;
  if (w <= 16) {
    const all = 2 ** w;
    if (excluded.size >= all) return false; // none of its values is left
    if (excluded.size === all - 1) {
      for (let v = 0n; v < BigInt(all); v++) {
        if (!excluded.has(v)) {
          facts.fixed.set(id, v);
          break;
        }
      }
    }
  }
  return true;
}

/** The simulator's plan the prover runs: every part from its kind's definition. */
export function proofPlan(machine: Machine): PlanResult {
  return SimPlan.build(machine);
}

/** Why this plan cannot be run symbolically at all, or undefined when it can. */
export function unsupported(plan: SimPlan): string | undefined {
  if (plan.stores.length !== 1) return `the machine has ${plan.stores.length} control stores; the prover runs machines with one store so far`;
  if (plan.stores[0].fieldSources.length) return 'a field of a store drives address lines; the prover does not follow such stores yet';
  if (plan.regfiles.length !== 1) return 'the prover handles machines with exactly one register file so far';
  if (plan.seqPart >= 0) {
    const problem = sequencerOf(plan);
    if (typeof problem === 'string') return problem;
  }
  const combinational = plan.custom.combinational.flatMap((c) => c.flagNumbers.map((f) => plan.flagNames[f]));
  if (combinational.length) return `flag ${combinational.map((f) => `\`${f}\``).join(', ')} is combinational (it reads a bus or a control within the step); the prover follows latched flags only so far`;
  return definedParts(plan).problems();
}

/** The sequencer part's step (the state its kind `holds step`, a slot of the step's width) and its return registers' slots. */
interface SequencerSlots {
  readonly part: string;
  readonly stepKey: string;
  readonly stepWidth: number;
  readonly returnKeys: readonly string[];
}

/** Where the sequencer keeps the step and its return registers, or why the prover cannot hold them. */
function sequencerOf(plan: SimPlan): SequencerSlots | string {
  const name = plan.parts[plan.seqPart].name;
  const m = definedParts(plan).model(name);
  if ('problem' in m) return `the sequencer \`${name}\`: ${m.problem}`;
  const holds = m.part.def.holds.find((h) => h.role === 'step');
  const home = holds ? m.homes.get(holds.state) : undefined;
  if (!home || home.in !== 'slot') return `the sequencer \`${name}\` does not hold its step in one state`;
  const stepWidth = plan.stepBits;
  if (home.width !== stepWidth) return `the sequencer \`${name}\`'s step is ${home.width} bits for ${stepWidth} step lines`;
  const returnKeys = (m.part.def.holds.find((h) => h.role === 'return')?.stack ?? []).map((r) => {
    const h = m.homes.get(r);
    return h?.in === 'slot' ? h.key : '';
  });
  if (returnKeys.includes('')) return `the sequencer \`${name}\` keeps a return register in an array; the prover holds return registers that are single states`;
  return { part: name, stepKey: home.key, stepWidth, returnKeys };
}

/** The edge ports that act at every closing edge (no strobe), in the order the micro-ops list them last (sim/customParts.ts alwaysEdges). */
function alwaysPortsOf(plan: SimPlan): { part: string; port: string; name: string }[] {
  return plan.custom.runtimes.flatMap((rt) => rt.part.def.edges.filter((e) => e.always).map((e) => ({ part: rt.part.name, port: e.name, name: `${rt.part.name}.${e.name}` })));
}

/** The step that ran most often on a path, and how often (1: no step ran twice). */
export function mostRepeated(steps: readonly StepTrace[]): { step: number; times: number } {
  const counts = new Map<number, number>();
  let best = { step: 0, times: 0 };
  for (const t of steps) {
    const n = (counts.get(t.step) ?? 0) + 1;
    counts.set(t.step, n);
    if (n > best.times) best = { step: t.step, times: n };
  }
  return best;
}

/** Address-bit patterns of every RV32I instruction (bits the store's lines carry, from the universe), for the fetch's previous instruction. */
export function previousInstructionPatterns(plan: SimPlan): number[] {
  const irBits = plan.encoded.universe.irBits;
  const carried = irBits.reduce((m, b) => m | (1 << b), 0) >>> 0;
  const seen = new Set<number>();
  for (const spec of RV32I_INSTRUCTIONS) {
    const { value, mask } = fixedBits(spec);
    const free = irBits.filter((b) => !((mask >>> b) & 1));
    for (let n = 0; n < 2 ** free.length; n++) {
      let word = value & carried;
      free.forEach((b, i) => {
        if ((n >>> i) & 1) word |= 1 << b;
      });
      seen.add(word >>> 0);
    }
  }
  return [...seen];
}

/** The bits an instruction's encoding fixes (spec chapter 24 listing, via rv32i.ts): opcode, funct3, funct7, and ECALL/EBREAK's immediate with rd and rs1 zero. */
export function fixedBits(spec: InstructionSpec): { value: number; mask: number } {
  let value = spec.opcode;
  let mask = 0x7f;
  if (spec.funct3 !== null) {
    value |= spec.funct3 << 12;
    mask |= 0x7 << 12;
  }
  if (spec.funct7 !== null) {
    value |= spec.funct7 << 25;
    mask |= 0x7f << 25;
  }
  if (spec.imm12 !== null) {
    value |= spec.imm12 << 20;
    mask |= 0xfff << 20;
    mask |= (0x1f << 15) | (0x1f << 7); // rs1 = rd = 0
  }
  return { value: value >>> 0, mask: mask >>> 0 };
}

/** The instruction term with `value`'s bits where `mask` is set and bits of the variable `insn` elsewhere. */
export function instructionTerm(T: Terms, value: number, mask: number): Term {
  const insn = T.variable('insn', 32);
  const runs: Term[] = [];
  let hi = 31;
  while (hi >= 0) {
    const fixed = (mask >>> hi) & 1;
    let lo = hi;
    while (lo > 0 && ((mask >>> (lo - 1)) & 1) === fixed) lo--;
    runs.push(fixed ? T.const(hi - lo + 1, (value >>> lo) & (2 ** (hi - lo + 1) - 1)) : T.extract(insn, hi, lo));
    hi = lo - 1;
  }
  return T.concat(runs);
}

/** The start state for an instruction term: pc, registers (x0 reads 0) and memory (the instruction's bytes at pc). */
export function startState(T: Terms, ir: Term): Start {
  // The pc is four-byte aligned (assumed, docs/proving.md): its two low bits are zeros, so the
  // byte addresses of the fetched word fold, whether a memory forms them as pc + k or {pc[31:2], k}.
  const pc = T.concat([T.variable('pc.word', 30), T.const(2, 0)]);
  const registers = new InitialContents(T, 'x', 32, (index, unknown) => T.ite(T.eq(index, T.const(index.w, 0)), T.const(32, 0), unknown));
  const memory = new InitialContents(T, 'm', 8, (index, unknown) => {
    let v = unknown;
    for (let k = 3; k >= 0; k--) v = T.ite(T.eq(index, T.add(pc, T.const(32, k))), T.extract(ir, 8 * k + 7, 8 * k), v);
    return v;
  });
  return { pc, ir, registers, memory, arrays: new Map() };
}


/**
 * Every path of the instruction `start.ir` through the encoded store, from step 0. `budget`
 * counts the paths of the instruction across calls (one per value of its free address bits).
 */
export function executeInstruction(T: Terms, plan: SimPlan, start: Start, previous: readonly number[], limits: WalkLimits = WALK_LIMITS, budget = { paths: 0 }): MachinePath[] {
  const store = plan.stores[0];
  // On a sequencer machine the step is the sequencer's state (unsupported() has made sure it is a slot).
  const seqFound = plan.seqPart >= 0 ? sequencerOf(plan) : undefined;
  const seq = typeof seqFound === 'object' ? seqFound : undefined;
  const alwaysPorts = alwaysPortsOf(plan);
  const mo = plan.microOps;
  const machine = plan.machine;
  const defs = definedParts(plan);
  const valueHome = (p: number) => {
    const m = defs.model(plan.parts[p].name);
    if ('problem' in m || !m.valueState) return undefined;
    const home = m.homes.get(m.valueState)!;
    return home.in === 'slot' ? home : undefined;
  };
  // unsupported() has made sure the pc and the instruction register hold their value in a 32-bit slot.
  const pcKey = valueHome(plan.pcPart)!.key;
  // The step is 0 when the instruction starts (the previous one retired there); a return
  // register holds what the previous instruction left, a value no path of this one knows.
  const initialSlot = (key: string, width: number) => (key === pcKey ? start.pc : key === seq?.stepKey ? T.const(width, 0) : T.variable(`${key}.before`, width));
  const arrayContents = (key: string, width: number) => {
    let a = start.arrays.get(key);
    if (!a) start.arrays.set(key, (a = new InitialContents(T, key, width)));
    return a;
  };
  const slotOf = (s: State, key: string, width: number) => s.slots.get(key) ?? initialSlot(key, width);
  /** The value of part `p` as the simulator's part value holds it: its first state, zero-extended to 32 bits. */
  const partValue = (s: State, p: number): Term => {
    const home = valueHome(p);
    return home ? fit(T, slotOf(s, home.key, home.width), 32) : T.variable(`${plan.parts[p].name}.value`, 32);
  };
  const view = (s: State): MachineView => ({
    bus: (b) => s.buses[b],
    partValue: (p) => partValue(s, p),
    slot: (key, width) => slotOf(s, key, width),
    register: (index) => start.registers.readAfter(s.registerWrites, index),
    byte: (address) => start.memory.readAfter(s.memoryWrites, address),
    element: (key, index, width) => arrayContents(key, width).readAfter(s.arrayWrites.get(key) ?? [], index),
  });

  const buses = plan.busNames.map((b, i) => T.variable(`${b}.before`, plan.busWidth[i]));
  let keepers = 0;
  plan.busKeeper.forEach((k, i) => (keepers |= k ? 1 << i : 0));
  const initial: State = { buses, defined: keepers, definedLines: plan.busNames.map(() => 0), slots: new Map(), flags: [], registerWrites: [], memoryWrites: [], arrayWrites: new Map(), condition: [], facts: { decided: new Map(), fixed: new Map(), excluded: new Map() }, steps: [] };
  // A flag before the instruction is what its definition gives over the states before it.
  initial.flags = plan.flagNames.map((f) => T.variable(`${f}.before`, 1));
  try {
    for (const { flag, value } of defs.flags(T, view(initial))) initial.flags[flag] = value;
  } catch (e) {
    if (!(e instanceof ProverLimit)) throw e;
    return [{ condition: [], ending: { kind: 'given-up', why: e.message }, pc: start.pc, registerWrites: [], memoryWrites: [], steps: [] }];
  }
  const paths: MachinePath[] = [];
  let undefinedCount = 0;
  const fresh = (why: string, w: number) => T.variable(`undefined.${undefinedCount++}.${why}`, w);

  const tooMany = (): PathEnding => ({ kind: 'given-up', why: `the instruction has more than ${limits.maxPaths} paths (the prover's bound of paths per instruction)`, limit: 'paths' });
  const finish = (s: State, reached: PathEnding): void => {
    const ending = budget.paths >= limits.maxPaths ? tooMany() : reached;
    budget.paths++;
    paths.push({ condition: s.condition, ending, pc: partValue(s, plan.pcPart), ...(s.pcWriter && { pcWriter: s.pcWriter }), registerWrites: s.registerWrites, memoryWrites: s.memoryWrites, steps: s.steps });
  };

  /** The words the lines can form at `step`, each with the condition to get there. */
  const choices = (s: State, step: number): { word: number; address: number; condition: Term[]; taken: [Term, number][] }[] | string => {
    const ir = partValue(s, plan.irPart);
    let irValues: number[];
    const known = store.irSources.every((src) => T.extract(ir, Math.min(31, src.inputLo + 31 - Math.clz32(src.lineMask)), src.inputLo).k === 'const');
    if (known) {
      let v = 0;
      for (const src of store.irSources) {
        const bits = T.extract(ir, Math.min(31, src.inputLo + 31 - Math.clz32(src.lineMask)), src.inputLo);
        if (bits.k === 'const') v |= Number(bits.v) << src.inputLo;
      }
      irValues = [v >>> 0];
    } else if (ir.k === 'var') irValues = [...previous];
    else return `at step ${step} the instruction bits on the address lines are not known`;
    const flagSources = store.flagSources;
    // A flag the path has already taken a value of (the same term) is that value.
    const flagTerms = flagSources.map((f) => {
      const t = s.flags[f.flag];
      const known = decided(s.facts, t);
      return known === undefined ? t : T.const(1, known);
    });
    const open = [...new Set(flagTerms.filter((t) => t.k !== 'const'))];
    const groups = new Map<number, { address: number; combos: number[] }>();
    for (const irv of irValues) {
      for (let combo = 0; combo < 2 ** open.length; combo++) {
        let address = store.constantPart + store.stepPart[step];
        for (const src of store.irSources) address += ((irv >>> src.inputLo) & src.lineMask) << src.addressLo;
        flagSources.forEach((src, i) => {
          const t = flagTerms[i];
          const v = t.k === 'const' ? Number(t.v) : (combo >>> open.indexOf(t)) & 1;
          address += (v & src.lineMask) << src.addressLo;
        });
        address >>>= 0;
        const word = store.wordOfAddress[address];
        const g = groups.get(word) ?? { address, combos: [] };
        if (!g.combos.includes(combo)) g.combos.push(combo);
        groups.set(word, g);
      }
    }
    return [...groups].map(([word, g]) => {
      if (groups.size === 1) return { word, address: g.address, condition: [], taken: [] };
      const alternatives = g.combos.map((combo) => T.andAll(open.map((t, i) => T.eq(t, T.const(1, (combo >>> i) & 1)))));
      // The flags whose value is the same in every combination that reaches this word: the path takes them.
      const taken: [Term, number][] = [];
      open.forEach((t, i) => {
        const values = new Set(g.combos.map((combo) => (combo >>> i) & 1));
        if (values.size === 1) taken.push([t, [...values][0]]);
      });
      return { word, address: g.address, condition: [alternatives.reduce((a, b) => T.or(a, b), T.false)], taken };
    });
  };

  /**
   * The values the next step can take with the condition for each: a constant, or a choice
   * between constants (a term of `ite`s whose leaves are constants) on a condition the path may
   * already decide; undefined when a leaf is not a constant (a step read from a bus, or a
   * return register no call of this instruction set).
   */
  const MAX_STEP_CASES = 16;
  const stepCases = (facts: Facts, t: Term, taken: [Term, number][] = []): { value: number; taken: [Term, number][] }[] | undefined => {
    if (t.k === 'const') return [{ value: Number(t.v), taken }];
    if (t.k !== 'op' || t.op !== 'ite') return undefined;
    const [c, a, b] = t.args;
    const known = decided(facts, c);
    if (known !== undefined) return stepCases(facts, known ? a : b, taken);
    const yes = stepCases(facts, a, [...taken, [c, 1]]);
    const no = yes && stepCases(facts, b, [...taken, [c, 0]]);
    if (!yes || !no || yes.length + no.length > MAX_STEP_CASES) return undefined;
    return [...yes, ...no];
  };

  /** Why the next step is not known, in words. */
  const unknownStep = (t: Term, step: number): string => {
    const vars = new Set<string>();
    const seen = new Set<number>();
    const visit = (x: Term) => {
      if (seen.has(x.id)) return;
      seen.add(x.id);
      if (x.k === 'var') vars.add(x.name);
      else if (x.k === 'op') x.args.forEach(visit);
    };
    visit(t);
    const left = seq!.returnKeys.filter((k) => vars.has(`${k}.before`));
    if (left.length) return `step ${step} returns to the step the return register \`${left[0]}\` holds, which no call of this instruction saved (it holds what the previous instruction left; check return-without-call)`;
    return `the next step after step ${step} is not a constant the prover can follow (the sequencer \`${seq!.part}\` computes it from values the walk does not know)`;
  };

  /** Takes the path on: `taken` added to its facts and condition; false when the facts rule it out. */
  const follow = (s: State, taken: readonly [Term, number][]): boolean => {
    for (const [t, v] of taken) {
      if (!assume(s.facts, t, v)) return false;
    }
    return true;
  };

  const walk = (s: State, step: number): void => {
    if (!seq && step >= plan.nSteps) return finish(s, { kind: 'given-up', why: `no word asserts the end within ${plan.nSteps} steps` });
    if (budget.paths >= limits.maxPaths) return finish(s, tooMany());
    if (s.steps.length >= limits.maxSteps) {
      const most = mostRepeated(s.steps);
      return finish(s, { kind: 'given-up', why: `the path did not end within ${limits.maxSteps} steps (the prover's bound of steps per path; step ${most.step} ran ${most.times} times): a loop that does not end, or one longer than the bound`, limit: 'steps' });
    }
    const options = choices(s, step);
    if (typeof options === 'string') return finish(s, { kind: 'given-up', why: options });
    const live = options.length === 1 ? options : options.filter((o) => {
      const probe = cloneFacts(s.facts);
      return o.taken.every(([t, v]) => assume(probe, t, v));
    });
    for (const [i, option] of live.entries()) {
      const next = i === live.length - 1 ? s : clone(s);
      if (!follow(next, option.taken)) continue;
      next.condition.push(...option.condition);
      runWord(next, step, option.word, option.address);
    }
  };

  /** A micro-op code this executor does not know (every part runs from its definition, so none should reach here). */
  const unknownOp = (step: number, strobe: string) => `step ${step}: \`${strobe}\` is a micro-op the prover does not run`;

  const runWord = (s: State, step: number, word: number, address: number): void => {
    const base = mo.lookup(word, [word]);
    const code = mo.code.data;
    const lines = mo.lines.data;
    const header = code[base + U_HEADER];
    const uop = code[base + U_INDEX];
    const info = mo.info[uop];
    s.steps.push({ step, address, asserted: info.asserted });
    if (header & HEADER_STOP) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): ${info.contention.length ? 'two drivers on one bus' : info.loop}` });
    // Buses: floating ones lose their value, then the drivers in settle order.
    const floating = code[base + U_FLOAT_MASK];
    for (let b = 0; b < plan.busNames.length; b++) if ((floating >>> b) & 1) s.buses[b] = fresh(`${plan.busNames[b]}.floating`, plan.busWidth[b]);
    s.defined &= ~floating;
    let p = base + U_DRIVERS + 1;
    const nDrivers = code[base + U_DRIVERS];
    for (let d = 0; d < nDrivers; d++, p += DRIVER_WORDS) {
      const op = code[p];
      const bus = code[p + 1];
      const width = plan.busWidth[bus];
      const driver = info.drivers[d];
      let value: Term;
      let ok: boolean;
      if (op === D_CUSTOM) {
        try {
          value = defs.drive(T, view(s), `${uop}:${d}`, driverNamed(machine, driver.strobe)!, info.fields);
        } catch (e) {
          if (e instanceof ProverLimit) return finish(s, { kind: 'given-up', why: `step ${step}: ${e.message}` });
          throw e;
        }
        const reads = code[p + 3];
        ok = (s.defined & reads) === reads;
      } else if (op === D_UNDEFINED) {
        value = fresh(`${plan.busNames[bus]}.unknown`, width);
        ok = false;
      } else return finish(s, { kind: 'given-up', why: unknownOp(step, driver.strobe) });
      const driven = lines[p];
      if (driven === 0) {
        s.buses[bus] = fit(T, value, width);
        s.defined = ok ? s.defined | (1 << bus) : s.defined & ~(1 << bus);
        if (!ok) s.definedLines[bus] = 0;
      } else {
        // Some lines of the bus (a byte lane): the others keep what they hold. Its lines are
        // defined as this driver's value is; the others as they were (kept, or driven by
        // another driver in this step), or not at all for the first driver of a floating bus
        // (the simulator's rule, line by line).
        const lo = lines[p + 1];
        const hi = Math.min(width - 1, 31 - Math.clz32(driven));
        const old = s.buses[bus];
        s.buses[bus] = T.concat([...(hi < width - 1 ? [T.extract(old, width - 1, hi + 1)] : []), fit(T, value, hi - lo + 1), ...(lo > 0 ? [T.extract(old, lo - 1, 0)] : [])]);
        const full = plan.busMask[bus];
        const before = lines[p + 2] === 0 ? 0 : ((s.defined >>> bus) & 1) !== 0 ? full : s.definedLines[bus];
        const now = ok ? before | driven : before & ~driven;
        s.definedLines[bus] = now;
        s.defined = (now & full) === full ? s.defined | (1 << bus) : s.defined & ~(1 << bus);
      }
    }
    if (header & HEADER_TRAP) return finish(s, { kind: 'trap' });
    const nEdges = code[p++];
    if ((code[base + U_NEED_MASK] & ~s.defined) !== 0) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): a strobe loads a bus whose value is not defined` });
    if (nEdges !== 0 && code[p] === E_FAULT) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): ${info.edges[0].fault}` });
    // Every edge port computes from the values before the edge; then all are stored, in order.
    const pending: { assignment: EdgeAssignment; strobe: string }[] = [];
    // The micro-op lists the ports that act at every closing edge last, after the strobes' (no fault: all of them run).
    const firstAlways = nEdges - alwaysPorts.length;
    for (let e = 0; e < nEdges; e++, p += EDGE_WORDS) {
      const strobe = info.edges[e].strobe;
      if (e >= firstAlways) {
        const port = alwaysPorts[e - firstAlways];
        if (code[p] !== E_CUSTOM || port.name !== strobe) return finish(s, { kind: 'given-up', why: unknownOp(step, strobe) });
        try {
          for (const assignment of defs.always(T, view(s), `${uop}:${e}`, port.part, port.port, info.fields)) pending.push({ assignment, strobe });
        } catch (err) {
          if (err instanceof ProverLimit) return finish(s, { kind: 'given-up', why: `step ${step}: ${err.message}` });
          throw err;
        }
        continue;
      }
      if (code[p] !== E_CUSTOM) return finish(s, { kind: 'given-up', why: unknownOp(step, strobe) });
      // A load of some lines of a bus (beside an edge entry, as beside a driver: the lines'
      // mask): those lines must hold a defined value (the whole bus need not).
      const loadMask = lines[p] ?? 0;
      if (loadMask !== 0) {
        const bus = code[p + 1];
        const have = ((s.defined >>> bus) & 1) !== 0 ? -1 : s.definedLines[bus];
        if ((have & loadMask) !== loadMask) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): \`${strobe}\` loads lines of bus \`${plan.busNames[bus]}\` that hold no defined value` });
      }
      try {
        for (const assignment of defs.edge(T, view(s), `${uop}:${e}`, driverNamed(machine, strobe)!, info.fields, code[p + 1])) pending.push({ assignment, strobe });
      } catch (err) {
        if (err instanceof ProverLimit) return finish(s, { kind: 'given-up', why: `step ${step}: ${err.message}` });
        throw err;
      }
    }
    for (const { assignment: a, strobe } of pending) {
      const home = a.home;
      switch (home.in) {
        case 'slot': {
          const value = fit(T, a.value, home.width);
          s.slots.set(home.key, a.when.k === 'const' && a.when.v === 1n ? value : T.ite(a.when, value, slotOf(s, home.key, home.width)));
          if (home.key === pcKey) s.pcWriter = { step, strobe };
          break;
        }
        case 'registers':
          s.registerWrites.push({ index: a.index!, value: fit(T, a.value, 32), when: a.when, step, strobe });
          break;
        case 'memory':
          s.memoryWrites.push({ index: a.index!, value: fit(T, a.value, 8), when: a.when, step, strobe });
          break;
        case 'array': {
          const writes = s.arrayWrites.get(home.key) ?? [];
          writes.push({ index: a.index!, value: fit(T, a.value, home.width), when: a.when, step, strobe });
          s.arrayWrites.set(home.key, writes);
          break;
        }
      }
    }
    if (nEdges > 0) {
      try {
        for (const { flag, value } of defs.flags(T, view(s))) s.flags[flag] = value;
      } catch (err) {
        if (err instanceof ProverLimit) return finish(s, { kind: 'given-up', why: `step ${step}: ${err.message}` });
        throw err;
      }
    }
    if (!seq) {
      if (header & HEADER_END) return finish(s, { kind: 'end' });
      return walk(s, step + 1);
    }
    // A sequencer: the next step is its state after the edge; back at 0 the instruction retires.
    const stepTerm = fit(T, slotOf(s, seq.stepKey, seq.stepWidth), seq.stepWidth);
    const cases = stepCases(s.facts, stepTerm);
    if (!cases) return finish(s, { kind: 'given-up', why: unknownStep(stepTerm, step) });
    const point = store.enc.origin[address];
    const fill = point === undefined || point < 0;
    for (const [i, c] of cases.entries()) {
      const next = i === cases.length - 1 ? s : clone(s);
      if (!follow(next, c.taken)) continue;
      next.condition.push(...c.taken.map(([t, v]) => (v ? t : T.not(t))));
      // The path's condition says which value the step has: the state holds that constant from here on.
      if (c.taken.length) next.slots.set(seq.stepKey, T.const(seq.stepWidth, c.value));
      if (c.value !== 0) walk(next, c.value);
      // Back at 0 from the fill word (no step of the table stands at this address): the
      // sequencer ran off the table's steps; the simulator stops with an illegal instruction.
      else if (fill) finish(next, { kind: 'fault', why: `step ${step} (address ${address}) holds the fill word (no step of the table covers it), and the sequencer counted on to step 0 without the table returning it there` });
      else finish(next, { kind: 'end' });
    }
  };

  walk(initial, 0);
  return paths;
}
