// Symbolic execution of one instruction through the ENCODED control store: the words the
// simulator's plan read back from the images (sim/plan.ts) and the micro-ops it compiles from
// them (sim/microops.ts), walked from step 0 with terms instead of numbers. At each step the
// address is formed as the board forms it (step counter, instruction bits, flags); where a flag
// the lines carry is not known the walk forks, one path per distinct word, with the condition
// that leads there. Each path ends at a word asserting `end` (the instruction retires), at a trap
// (the environment takes over) or in a fault (an undefined bus loaded, a fault word), or it is
// given up with a reason (a construct this slice does not run symbolically).
//
// The state before the instruction: the pc is the variable `pc`; every other part, every bus
// and every flag holds an unknown value of the previous instruction; the register file and the
// memory are InitialContents (the instruction's own bytes stand at pc). While the instruction
// register still holds the previous instruction (the fetch), its address bits can be those of
// any RV32I instruction: the walk takes every distinct word they reach and otherwise leaves the
// previous word unconstrained (more behaviours than the hardware has, so a proof stays a proof).
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import { aluOperations, compareConditions, immediateFormats, memorySizes } from '../model/vocabulary';
import { CONDITION_FROM_FUNCT3 } from '../sim/operations';
import { DRIVER_WORDS, EDGE_WORDS, HEADER_END, HEADER_STOP, HEADER_TRAP, U_DRIVERS, U_FLOAT_MASK, U_HEADER, U_INDEX, U_NEED_MASK } from '../sim/microops';
import type { SimPlan } from '../sim/plan';
import { aluResult, compareResult, immediateResult, memoryReadResult, memoryWriteResult } from './libraryKinds';
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
}

interface State {
  parts: Term[];
  buses: Term[];
  defined: number;
  flags: Term[];
  registerWrites: ArrayWrite[];
  memoryWrites: ArrayWrite[];
  condition: Term[];
  steps: StepTrace[];
  pcWriter?: { step: number; strobe: string };
}

const clone = (s: State): State => ({ ...s, parts: [...s.parts], buses: [...s.buses], flags: [...s.flags], registerWrites: [...s.registerWrites], memoryWrites: [...s.memoryWrites], condition: [...s.condition], steps: [...s.steps] });

/** Why this plan cannot be run symbolically by this slice, or undefined when it can. */
export function unsupported(plan: SimPlan): string | undefined {
  if (plan.stores.length !== 1) return `the machine has ${plan.stores.length} control stores; the prover runs machines with one store so far`;
  if (plan.stores[0].fieldSources.length) return 'a field of a store drives address lines; the prover does not follow such stores yet';
  if (plan.parts.some((p) => p.kind === 'custom')) return 'the machine has parts of its own kinds; the prover runs only the standard library kinds so far';
  if ([...plan.busWidth].some((w) => w !== 32)) return 'the machine has a bus narrower or wider than 32 bits; the prover handles 32-bit buses so far';
  if (plan.parts.some((p) => p.kind !== 'compare' && p.width !== 32)) return 'the machine has a part that is not 32 bits wide; the prover handles 32-bit parts so far';
  if (plan.regfiles.length !== 1) return 'the prover handles machines with exactly one register file so far';
  return undefined;
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
  const pc = T.variable('pc', 32);
  const registers = new InitialContents(T, 'x', 32, (index, unknown) => T.ite(T.eq(index, T.const(index.w, 0)), T.const(32, 0), unknown));
  const memory = new InitialContents(T, 'm', 8, (index, unknown) => {
    let v = unknown;
    for (let k = 3; k >= 0; k--) v = T.ite(T.eq(index, T.add(pc, T.const(32, k))), T.extract(ir, 8 * k + 7, 8 * k), v);
    return v;
  });
  return { pc, ir, registers, memory };
}

/** Every path of the instruction `start.ir` through the encoded store, from step 0. */
export function executeInstruction(T: Terms, plan: SimPlan, start: Start, previous: readonly number[]): MachinePath[] {
  const store = plan.stores[0];
  const mo = plan.microOps;
  const parts = plan.parts.map((p, i) => (i === plan.pcPart ? start.pc : T.variable(`${p.name}.before`, p.width)));
  const buses = plan.busNames.map((b) => T.variable(`${b}.before`, 32));
  const flags = plan.flagNames.map((f) => T.variable(`${f}.before`, 1));
  let keepers = 0;
  plan.busKeeper.forEach((k, i) => (keepers |= k ? 1 << i : 0));
  const initial: State = { parts, buses, defined: keepers, flags, registerWrites: [], memoryWrites: [], condition: [], steps: [] };
  const paths: MachinePath[] = [];
  let undefinedCount = 0;
  const fresh = (why: string) => T.variable(`undefined.${undefinedCount++}.${why}`, 32);

  const finish = (s: State, ending: PathEnding): void => {
    paths.push({ condition: s.condition, ending, pc: s.parts[plan.pcPart], ...(s.pcWriter && { pcWriter: s.pcWriter }), registerWrites: s.registerWrites, memoryWrites: s.memoryWrites, steps: s.steps });
  };

  /** The words the lines can form at `step`, each with the condition to get there. */
  const choices = (s: State, step: number): { word: number; address: number; condition: Term[] }[] | string => {
    const ir = s.parts[plan.irPart];
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

  const runWord = (s: State, step: number, word: number, address: number): void => {
    const base = mo.lookup(word, [word]);
    const code = mo.code.data;
    const lines = mo.lines.data;
    const header = code[base + U_HEADER];
    const info = mo.info[code[base + U_INDEX]];
    s.steps.push({ step, address, asserted: info.asserted });
    if (header & HEADER_STOP) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): ${info.contention.length ? 'two drivers on one bus' : info.loop}` });
    const ir = s.parts[plan.irPart];
    const regs = start.registers;
    const mem = start.memory;
    const memRead = (a: Term) => mem.readAfter(s.memoryWrites, a);
    // Buses: floating ones lose their value, then the drivers in settle order.
    const floating = code[base + U_FLOAT_MASK];
    for (let b = 0; b < plan.busNames.length; b++) if ((floating >>> b) & 1) s.buses[b] = fresh(`${plan.busNames[b]}.floating`);
    s.defined &= ~floating;
    let p = base + U_DRIVERS + 1;
    const nDrivers = code[base + U_DRIVERS];
    for (let d = 0; d < nDrivers; d++, p += DRIVER_WORDS) {
      const [op, bus, a, b] = [code[p], code[p + 1], code[p + 2], code[p + 3]];
      if (lines[p] !== 0) return finish(s, { kind: 'given-up', why: `step ${step}: \`${info.drivers[d].strobe}\` drives part of a bus; the prover handles whole-bus drivers so far` });
      let value: Term;
      let ok = true;
      switch (op) {
        case 1: value = regs.readAfter(s.registerWrites, T.extract(ir, 19, 15)); break; // D_REG_RS1
        case 2: value = regs.readAfter(s.registerWrites, T.extract(ir, 24, 20)); break; // D_REG_RS2
        case 3: value = regs.readAfter(s.registerWrites, T.const(5, b)); break; // D_REG_FIXED
        case 4: value = s.parts[a]; break; // D_PART
        case 5: value = immediateResult(T, immediateFormats[a], s.parts[b]); break; // D_IMMEDIATE
        case 6: { // D_ALU
          const fn = aluOperations[a];
          const c = code[p + 4];
          value = aluResult(T, fn, s.buses[b], s.buses[c]);
          const da = ((s.defined >>> b) & 1) === 1;
          const db = ((s.defined >>> c) & 1) === 1;
          ok = fn === 'passa' ? da : fn === 'passb' ? db : da && db;
          break;
        }
        case 7: value = memoryReadResult(T, memorySizes[a], s.parts[b], memRead); break; // D_MEM_PART
        case 8: value = memoryReadResult(T, memorySizes[a], s.buses[b], memRead); ok = ((s.defined >>> b) & 1) === 1; break; // D_MEM_BUS
        case 9: value = T.const(32, a); break; // D_CONSTANT
        case 10: return finish(s, { kind: 'given-up', why: 'a part of the table\'s own kind drives a bus' });
        default: value = fresh('undriven'); ok = false; // D_UNDEFINED
      }
      s.buses[bus] = value;
      s.defined = ok ? s.defined | (1 << bus) : s.defined & ~(1 << bus);
    }
    if (header & HEADER_TRAP) return finish(s, { kind: 'trap' });
    const nEdges = code[p++];
    if ((code[base + U_NEED_MASK] & ~s.defined) !== 0) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): a strobe loads a bus whose value is not defined` });
    if (nEdges !== 0 && code[p] === 0) return finish(s, { kind: 'fault', why: `step ${step} (address ${address}): ${info.edges[0].fault}` });
    for (let e = 0; e < nEdges; e++, p += EDGE_WORDS) {
      const [op, bus, a, b, c] = [code[p], code[p + 1], code[p + 2], code[p + 3], code[p + 4]];
      const strobe = info.edges[e].strobe;
      if (lines[p] !== 0) return finish(s, { kind: 'given-up', why: `step ${step}: \`${strobe}\` loads some lines of a bus; the prover handles whole-bus loads so far` });
      switch (op) {
        case 1: // E_MEM_WRITE_PART
        case 2: { // E_MEM_WRITE_BUS
          const addr = op === 1 ? s.parts[b] : s.buses[b];
          for (const w of memoryWriteResult(T, memorySizes[a], addr, s.buses[bus])) s.memoryWrites.push({ index: w.address, value: w.byte, when: w.when, step, strobe });
          break;
        }
        case 3: { // E_REG_RD: rd from the instruction register as it was before this edge
          const rd = T.extract(ir, 11, 7);
          s.registerWrites.push({ index: rd, value: s.buses[bus], when: b ? T.true : T.not(T.eq(rd, T.const(5, 0))), step, strobe });
          break;
        }
        case 4: // E_REG_FIXED
          if (c) s.registerWrites.push({ index: T.const(5, b), value: s.buses[bus], when: T.true, step, strobe });
          break;
        case 5: { // E_COMPARE
          const test = a === CONDITION_FROM_FUNCT3 ? ({ funct3: true } as const) : { test: compareConditions[a] };
          s.flags[bus] = compareResult(T, test, s.buses[b], s.buses[c], ir);
          break;
        }
        case 6: // E_COUNT
          s.parts[a] = T.and(T.add(s.parts[a], T.const(32, b)), T.const(32, c >>> 0));
          if (a === plan.pcPart) s.pcWriter = { step, strobe };
          break;
        case 7: // E_CLOCK
          s.parts[a] = T.and(s.buses[bus], T.const(32, b >>> 0));
          if (a === plan.pcPart) s.pcWriter = { step, strobe };
          break;
        case 8:
          return finish(s, { kind: 'given-up', why: 'a part of the table\'s own kind acts at a closing edge' });
      }
    }
    if (header & HEADER_END) return finish(s, { kind: 'end' });
    walk(s, step + 1);
  };

  walk(initial, 0);
  return paths;
}
