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
  | { readonly kind: 'given-up'; readonly why: string };

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
  /** Scalar states by `part.state` (absent: as before the instruction). */
  slots: Map<string, Term>;
  flags: Term[];
  registerWrites: ArrayWrite[];
  memoryWrites: ArrayWrite[];
  /** Writes to the parts' own register arrays, by `part.state`. */
  arrayWrites: Map<string, ArrayWrite[]>;
  condition: Term[];
  steps: StepTrace[];
  pcWriter?: { step: number; strobe: string };
}

const clone = (s: State): State => ({
  ...s,
  buses: [...s.buses],
  slots: new Map(s.slots),
  flags: [...s.flags],
  registerWrites: [...s.registerWrites],
  memoryWrites: [...s.memoryWrites],
  arrayWrites: new Map([...s.arrayWrites].map(([k, w]) => [k, [...w]])),
  condition: [...s.condition],
  steps: [...s.steps],
});

/** The simulator's plan the prover runs: every part from its kind's definition. */
export function proofPlan(machine: Machine): PlanResult {
  return SimPlan.build(machine);
}

/** Why this plan cannot be run symbolically at all, or undefined when it can. */
export function unsupported(plan: SimPlan): string | undefined {
  if (plan.stores.length !== 1) return `the machine has ${plan.stores.length} control stores; the prover runs machines with one store so far`;
  if (plan.stores[0].fieldSources.length) return 'a field of a store drives address lines; the prover does not follow such stores yet';
  if (plan.regfiles.length !== 1) return 'the prover handles machines with exactly one register file so far';
  if (plan.seqPart >= 0) return `the step counter is the sequencer part \`${plan.parts[plan.seqPart].name}\` (jumps and loops); the prover follows the implicit step counter only so far`;
  const combinational = plan.custom.combinational.flatMap((c) => c.flagNumbers.map((f) => plan.flagNames[f]));
  if (combinational.length) return `flag ${combinational.map((f) => `\`${f}\``).join(', ')} is combinational (it reads a bus or a control within the step); the prover follows latched flags only so far`;
  return definedParts(plan).problems();
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


/** Every path of the instruction `start.ir` through the encoded store, from step 0. */
export function executeInstruction(T: Terms, plan: SimPlan, start: Start, previous: readonly number[]): MachinePath[] {
  const store = plan.stores[0];
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
  const initialSlot = (key: string, width: number) => (key === pcKey ? start.pc : T.variable(`${key}.before`, width));
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
  const initial: State = { buses, defined: keepers, slots: new Map(), flags: [], registerWrites: [], memoryWrites: [], arrayWrites: new Map(), condition: [], steps: [] };
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

  const finish = (s: State, ending: PathEnding): void => {
    paths.push({ condition: s.condition, ending, pc: partValue(s, plan.pcPart), ...(s.pcWriter && { pcWriter: s.pcWriter }), registerWrites: s.registerWrites, memoryWrites: s.memoryWrites, steps: s.steps });
  };

  /** The words the lines can form at `step`, each with the condition to get there. */
  const choices = (s: State, step: number): { word: number; address: number; condition: Term[] }[] | string => {
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
    const flagTerms = flagSources.map((f) => s.flags[f.flag]);
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
      if (groups.size === 1) return { word, address: g.address, condition: [] };
      const alternatives = g.combos.map((combo) => T.andAll(open.map((t, i) => T.eq(t, T.const(1, (combo >>> i) & 1)))));
      return { word, address: g.address, condition: [alternatives.reduce((a, b) => T.or(a, b), T.false)] };
    });
  };

  const walk = (s: State, step: number): void => {
    if (step >= plan.nSteps) return finish(s, { kind: 'given-up', why: `no word asserts the end within ${plan.nSteps} steps` });
    const options = choices(s, step);
    if (typeof options === 'string') return finish(s, { kind: 'given-up', why: options });
    for (const [i, option] of options.entries()) {
      const next = i === options.length - 1 ? s : clone(s);
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
      } else {
        // Some lines of the bus (a byte lane): the others keep what they hold.
        const lo = lines[p + 1];
        const hi = Math.min(width - 1, 31 - Math.clz32(driven));
        const old = s.buses[bus];
        s.buses[bus] = T.concat([...(hi < width - 1 ? [T.extract(old, width - 1, hi + 1)] : []), fit(T, value, hi - lo + 1), ...(lo > 0 ? [T.extract(old, lo - 1, 0)] : [])]);
        if (lines[p + 2] === 0) s.defined = ok ? s.defined | (1 << bus) : s.defined & ~(1 << bus);
        else if (!ok) s.defined &= ~(1 << bus);
      }
    }
    if (header & HEADER_TRAP) return finish(s, { kind: 'trap' });
    const nEdges = code[p++];
    if ((code[base + U_NEED_MASK] & ~s.defined) !== 0) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): a strobe loads a bus whose value is not defined` });
    if (nEdges !== 0 && code[p] === E_FAULT) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): ${info.edges[0].fault}` });
    // Every edge port computes from the values before the edge; then all are stored, in order.
    const pending: { assignment: EdgeAssignment; strobe: string }[] = [];
    for (let e = 0; e < nEdges; e++, p += EDGE_WORDS) {
      const strobe = info.edges[e].strobe;
      // A load of some lines of a bus (beside an edge entry, as beside a driver: the lines' mask).
      if ((lines[p] ?? 0) !== 0) return finish(s, { kind: 'given-up', why: `step ${step}: \`${strobe}\` loads some lines of a bus; the prover handles whole-bus loads so far` });
      if (code[p] !== E_CUSTOM) return finish(s, { kind: 'given-up', why: unknownOp(step, strobe) });
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
    if (header & HEADER_END) return finish(s, { kind: 'end' });
    walk(s, step + 1);
  };

  walk(initial, 0);
  return paths;
}
