// How many steps an instruction takes when a loop lies on its way to the end (a sequencer
// machine): a formula of its operand, derived from the machine's definitions, not assumed.
//
//   1. The flags the loop's guards test, and the part whose latched flag each is
//      (model/flagFacts.ts): exactly one such part, the loop counter, whose flags read only its
//      own state, with no `always` port and no connection acting on it.
//   2. A concrete walk over the instruction's steps with that part's state concrete and nothing
//      else: its flags from its kind's flag expressions, its edge ports (the strobes of each
//      step's word acting on it) from their definitions (parts/behaviour.ts compilePort), the
//      next step from the sequencer's (model/sequencing.ts). The state is unknown until a load:
//      an edge port reading the bus (`clock BUS[H:L] -> part`) or, outside the loop, a number
//      field of the word (a preset). That load takes the value v; a flag read while the state is
//      unknown, a second load, or a load inside the loop derives nothing. Other flags go both
//      ways; every way must take the same steps. The walk runs for every v of the load's width
//      and counts the steps to the end; if steps(v) = a + b·v for every v, that is the count.
//   3. What v is, from what drives the loaded lines in the load step (model/busDrivers.ts):
//      the drivers' drive ports (through combinational parts such as an ALU passing a bus on)
//      are evaluated over pseudo-random instruction words of the instruction and register
//      contents, and each bit of v is matched with an instruction bit or a bit of the register
//      an instruction field selects. Named in RV32I terms (RISC-V Unprivileged ISA 20191213,
//      2.2 and 2.4.1: `shamt` is inst[24:20] of SLLI, SRLI and SRAI; rs2 is inst[24:20] of
//      the R format): `shamt`, `x[rs2][4:0]`. A preset's v is its field's code in the word.
//
// Anything outside this (a second counter, a flag that reads a bus, a loaded value that is
// another part's state or memory, counts that are not linear, a path that never ends) gives no
// formula: the counts then say `min + n` as before.
//
// Deliberately not here: the step graph and the fewest steps (stepGraph.ts, cycleCounts.ts),
// reporting anything (the checks do), simulating the datapath beyond the loaded lines.
import { type Cube, guardInputs, instructionCube, matchingAlternatives, scenarios } from '../checks/inputSpace';
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import { drivenBus, driverNamed, lineMask, linesOf, withConnections } from '../model/busDrivers';
import { partSetting, sizeIn } from '../model/buildPart';
import { flagFacts } from '../model/flagFacts';
import { matchesBits } from '../model/numbers';
import { definedPortOf, strobePortNumber } from '../model/partFacts';
import { type ReturnContext, contextKey, returnRegisters, sequencerMove, startContext } from '../model/sequencing';
import { mapCodeFor } from './stepGraph';
import type { ClassDef, Machine, Part, StepAlt, Strobe } from '../model/types';
import { type CompiledPort, choiceCodes, compilePort, liveNames, parsedExpr } from '../parts/behaviour';
import { type KindEdge, edgeInputName } from '../parts/kinds';

/** What the loop's count is loaded from. */
export type LoopOperand =
  /** A number the word gives (a preset from a number field, or a constant driven onto the bus). */
  | { kind: 'constant'; value: number }
  /** Bits hi..lo of the instruction (`shamt`). */
  | { kind: 'instruction'; hi: number; lo: number }
  /** Bits of the register the instruction bits `index` select (`x[rs2][4:0]`); x0 reads 0. */
  | { kind: 'register'; index: { hi: number; lo: number }; bits: { hi: number; lo: number } };

/** An instruction's steps as a formula of its operand: steps = constant + perUnit × operand. */
export interface LoopCount {
  constant: number;
  perUnit: number;
  operand: LoopOperand;
  /** The operand in RV32I terms: `shamt`, `x[rs2][4:0]`, or the number for a constant. */
  of: string;
  /** `4 + shamt`, `4 + 2 × x[rs2][4:0]`, `4 + 3` (a constant operand). */
  formula: string;
  /** The loop counter part, and the step whose word loads it. */
  counter: string;
  loadStep: number;
  /** Bits of the loaded value (the formula holds for every value of them). */
  width: number;
  /** The fewest and the most steps over the operand's values. */
  least: number;
  most: number;
}

/** Something the derivation does not understand: no formula. */
class NotDerived extends Error {}

const notDerived = (why: string): never => {
  throw new NotDerived(why);
};

/** Widest loaded value whose every value is walked (2^10 walks). */
const maxLoadWidth = 10;
/** Most step visits of one walk before it gives up. */
const maxVisits = 200_000;
/** Instruction words and register contents tried to tell what drives the loaded lines. */
const probeCount = 64;

/**
 * The formula of the steps of the instruction words `cube` through `cls` (every combination of
 * the `free` instruction bits its guards test must give the same), the loop being `loopSteps`.
 * Undefined when it is not derived (see the head of this file).
 */
export function loopCountOf(machine: Machine, cls: ClassDef, cube: Cube, free: number[], loopSteps: readonly number[]): LoopCount | undefined {
  try {
    let found: LoopCount | undefined;
    for (const scenario of scenarios(cube, free, [])) {
      const one = derive(machine, cls, cube, scenario.ir, new Set(loopSteps));
      if (found && !sameCount(found, one)) return undefined;
      found ??= one;
    }
    return found;
  } catch (err) {
    if (err instanceof NotDerived) return undefined;
    throw err;
  }
}

/** The steps the formula gives for one instruction word, the registers holding `x` before it. */
export function loopStepsAt(count: LoopCount, word: number, x: ArrayLike<number>): number {
  return count.constant + count.perUnit * operandValue(count.operand, word, x);
}

/** The operand's value for an instruction word and the registers before it. */
export function operandValue(operand: LoopOperand, word: number, x: ArrayLike<number>): number {
  if (operand.kind === 'constant') return operand.value;
  if (operand.kind === 'instruction') return slice(word, operand.hi, operand.lo);
  const index = slice(word, operand.index.hi, operand.index.lo);
  return slice(index === 0 ? 0 : x[index] >>> 0, operand.bits.hi, operand.bits.lo);
}

function sameCount(a: LoopCount, b: LoopCount): boolean {
  return a.constant === b.constant && a.perUnit === b.perUnit && a.formula === b.formula && a.loadStep === b.loadStep;
}

const slice = (value: number, hi: number, lo: number) => (hi - lo + 1 >= 32 ? value >>> lo : (value >>> lo) & (2 ** (hi - lo + 1) - 1));
const bit = (value: number, k: number) => (value >>> k) & 1;

// ---- The loop counter and its definition.

interface Counter {
  part: Part;
  /** Its scalar states, in order, with their widths. */
  states: { name: string; width: number }[];
  /** Its flags by machine name: the value from the states, undefined while one it reads is unknown. */
  flags: Map<string, (state: readonly (number | undefined)[]) => number | undefined>;
}

function compiled(run: () => CompiledPort): CompiledPort {
  try {
    return run();
  } catch {
    return notDerived('a definition that does not compile'); // its own problems are reported by the checks
  }
}

function counterOf(machine: Machine, loopAlts: StepAlt[]): Counter {
  const facts = flagFacts(machine);
  const parts = new Set<Part>();
  for (const flag of guardInputs(loopAlts).flags) {
    const fact = facts.get(flag);
    if (fact?.timing === 'latched') parts.add(fact.part);
  }
  if (parts.size !== 1) notDerived('the loop tests the latched flags of no part or of several');
  const part = [...parts][0];
  const def = part.def;
  if (def.edges.some((e) => e.always) || machine.connections.some((c) => c.part === part.name && drivenBus(c) === undefined)) notDerived('the counter changes at every edge');
  if (def.states.some((s) => s.count !== undefined)) notDerived('the counter holds an array');
  const states = def.states.map((s) => ({ name: s.name, width: sizeIn(part, s.width) }));
  if (states.reduce((n, s) => n + s.width, 0) > 24) notDerived('the counter holds too many bits');
  const setting = partSetting(machine, part);
  const choices = choiceCodes(def, part.settings);
  const flags = new Map<string, (state: readonly (number | undefined)[]) => number | undefined>();
  for (const flag of def.flags) {
    const name = part.flagNames.get(flag.name);
    if (!name) continue;
    const port = compiled(() => compilePort(def, setting, [{ text: flag.expr, width: 1 }]));
    const from = port.inputs.map((n) => {
      const index = states.findIndex((s) => s.name === n);
      if (index >= 0) return index;
      if (choices.has(n)) return -1 - choices.get(n)!;
      return notDerived(`flag \`${name}\` reads \`${n}\`, not only the counter's state`);
    });
    flags.set(name, (state) => {
      const values: number[] = [];
      for (const k of from) {
        const v = k >= 0 ? state[k] : -1 - k;
        if (v === undefined) return undefined;
        values.push(v);
      }
      return Number(port.run(values)[0]) & 1;
    });
  }
  return { part, states, flags };
}

/** The code a field holds in a word (a decode map read at the instruction bits `ir` fixes). */
function codeOf(machine: Machine, alt: StepAlt, field: string, ir: Cube): number {
  const action = alt.actions.find((a) => a.signal === field);
  if (action?.value?.kind === 'code') return action.value.code;
  if (action?.value?.kind === 'map') {
    const map = machine.maps.get(action.value.map);
    if (!map) return notDerived('an unknown map');
    const row = map.rows.find((r) =>
      map.inputs.every((input, i) => {
        const v = input.input;
        const pattern = r.patterns[i];
        if (v.kind === 'step') return matchesBits(pattern, alt.step);
        if (v.kind !== 'ir') return /^-*$/.test(pattern) || notDerived('a map reads a flag');
        const mask = lineMask(v.hi, v.lo) >>> 0;
        if (((ir.mask & mask) >>> 0) !== mask) notDerived('a map reads instruction bits the instruction does not fix');
        return matchesBits(pattern, slice(ir.value, v.hi, v.lo));
      }),
    );
    return row ? row.code : notDerived('no map row');
  }
  const signal = machine.signals.get(field);
  return signal?.type === 'field' ? signal.idle : notDerived(`\`${field}\` is not a field`);
}

/** The code of a part's control in a word: its field's, else its default's. */
function controlCode(machine: Machine, part: Part, control: string, alt: StepAlt, ir: Cube): number {
  const field = part.controlFields.get(control);
  if (field) return codeOf(machine, alt, field, ir);
  const def = part.def.controls.find((c) => c.name === control)!;
  return def.default !== undefined ? def.values.indexOf(def.default) : 0;
}

// ---- Loads of the counter.

interface LoadSite {
  alt: StepAlt;
  strobe: Strobe;
  /** `bus`: the edge port reads the loaded lines; `field`: a preset from a number field. */
  from: 'bus' | 'field';
  /** Bits of the loaded value. */
  width: number;
  /** For a preset: the field it reads. */
  field?: string;
}

/** The strobes of a word acting on the counter at the closing edge, with their edge ports. */
function counterEdges(machine: Machine, counter: Counter, alt: StepAlt): { strobe: Strobe; edge: KindEdge }[] {
  const out: { strobe: Strobe; edge: KindEdge }[] = [];
  for (const action of alt.actions) {
    const strobe = driverNamed(machine, action.signal);
    if (!strobe || strobe.part !== counter.part.name || drivenBus(strobe) !== undefined || strobe.kind === 'end' || strobe.kind === 'trap') continue;
    const port = definedPortOf(counter.part, strobe);
    const edge = counter.part.def.edges.find((e) => e.name === port);
    if (!edge) notDerived(`\`${strobe.name}\` acts on no edge port of the counter`);
    out.push({ strobe, edge: edge! });
  }
  return out;
}

/** What an edge port of the counter loads: from the bus, from a number field, or nothing (it counts). */
function loadOf(counter: Counter, strobe: Strobe, edge: KindEdge, machine: Machine): { from: 'bus' | 'field'; width: number; field?: string } | undefined {
  const part = counter.part;
  const names = new Set(edge.assigns.flatMap((a) => [a.expr, ...(a.when ? [a.when] : [])]).flatMap((t) => {
    const e = parsedExpr(part.def, t).expr;
    return e ? [...liveNames(e, new Map(), () => undefined)] : [];
  }));
  const fields = part.def.inputs.filter((i) => names.has(i.name) && part.inputs.get(i.name)?.from === 'field');
  if (names.has(edgeInputName)) {
    if (fields.length || strobe.bus === undefined) return notDerived('a load from the bus and a field at once');
    const lines = linesOf(machine, strobe);
    const edgeWidth = edge.width ? sizeIn(part, edge.width) : 0;
    return { from: 'bus', width: Math.min(lines.hi - lines.lo + 1, edgeWidth) };
  }
  if (fields.length > 1) return notDerived('a load from two fields');
  if (fields.length === 1) {
    const source = part.inputs.get(fields[0].name)!;
    return { from: 'field', width: sizeIn(part, fields[0].width), field: source.from === 'field' ? source.name : undefined };
  }
  return undefined;
}

// ---- The concrete walk.

interface Walk {
  machine: Machine;
  cls: ClassDef;
  ir: Cube;
  loop: ReadonlySet<number>;
  counter: Counter;
  /** The registers part (`holds registers`), whose writes before the load make a register operand unknown. */
  registers?: string;
  /** Loads met on some path, and whether the registers were written before one. */
  loads: Set<LoadSite>;
  registersWrittenBeforeLoad: boolean;
  ports: Map<string, { port: CompiledPort; edge: KindEdge }>;
}

/** The steps to the end with the load taking `v`; throws NotDerived where the walk cannot say. */
function stepsWith(walk: Walk, sites: Map<Strobe, Map<StepAlt, LoadSite>>, v: number): number {
  const { machine, cls, ir, counter } = walk;
  const memo = new Map<string, number | null>();
  let visits = 0;
  const visit = (step: number, state: (number | undefined)[], loaded: boolean, written: boolean, returns: ReturnContext): number => {
    const key = `${step}|${state.join(',')}|${loaded ? 1 : 0}|${written ? 1 : 0}|${contextKey(returns)}`;
    const known = memo.get(key);
    if (known === null) return notDerived('a path that never ends');
    if (known !== undefined) return known;
    if (++visits > maxVisits) notDerived('too long a walk');
    memo.set(key, null);
    const alts = cls.steps.get(step) ?? [];
    if (!alts.length) notDerived('a step no line covers');
    const { flags } = guardInputs(alts);
    const values = new Map<string, number>();
    const others: string[] = [];
    for (const flag of flags) {
      const read = counter.flags.get(flag);
      if (!read) others.push(flag);
      else values.set(flag, read(state) ?? notDerived(`\`${flag}\` is read before the counter is loaded`));
    }
    // The words some value of the other flags selects: each a way on.
    const chosen = new Set<StepAlt>();
    for (const scenario of scenarios(ir, [], others)) {
      const all = new Map(values);
      for (const f of others) all.set(f, scenario.flags.get(f)!);
      const matching = matchingAlternatives(alts, { ir, flags: all });
      if (matching.length !== 1) notDerived('no word or two words for one input');
      chosen.add(matching[0]);
    }
    let result: number | undefined;
    for (const alt of chosen) {
      // The sequencer's move: a jump table's row for these instruction bits, a return to the step a call kept.
      const move = sequencerMove(machine, alt, step, returns, (map) => mapCodeFor(machine, map, { ir, flags: values }));
      const next = move?.returnOf === null ? undefined : move?.to;
      if (next === undefined) notDerived('a next step the word does not fix');
      const after = closingEdge(walk, sites, alt, state, v, loaded);
      // A register written at an earlier edge than the load's: the load does not read the instruction's operand.
      if (after.loaded && !loaded && written) walk.registersWrittenBeforeLoad = true;
      const writes = written || (!after.loaded && writesRegisters(walk, alt));
      const count = next === 0 ? 1 : 1 + visit(next!, after.state, after.loaded, writes, move!.context);
      if (result !== undefined && result !== count) notDerived('the other flags change the count');
      result = count;
    }
    memo.set(key, result!);
    return result!;
  };
  return visit(0, counter.states.map(() => undefined), false, false, startContext(machine));
}

/** Whether a word stores into the registers part at its closing edge. */
function writesRegisters(walk: Walk, alt: StepAlt): boolean {
  return walk.registers !== undefined && alt.actions.some((a) => {
    const strobe = driverNamed(walk.machine, a.signal);
    return strobe !== undefined && strobe.part === walk.registers && drivenBus(strobe) === undefined;
  });
}

/** The counter's state after the closing edge of a word (its edge ports computed before, stored in order). */
function closingEdge(walk: Walk, sites: Map<Strobe, Map<StepAlt, LoadSite>>, alt: StepAlt, state: (number | undefined)[], v: number, loaded: boolean): { state: (number | undefined)[]; loaded: boolean } {
  const { machine, counter, ir, loop } = walk;
  const part = counter.part;
  const edges = counterEdges(machine, counter, alt);
  if (!edges.length) return { state, loaded };
  const next = [...state];
  let loadedNow = loaded;
  const choices = choiceCodes(part.def, part.settings);
  for (const { strobe, edge } of edges) {
    // A load (the pre-scan's sites: a preset in the loop is no load, its field is a constant there).
    const site = sites.get(strobe)?.get(alt);
    const isLoad = site !== undefined;
    if (site) {
      if (loop.has(alt.step)) notDerived('the loop loads the counter from a bus');
      if (loadedNow) notDerived('a second load on one path');
      walk.loads.add(site);
      loadedNow = true;
    }
    const param = strobePortNumber(edge.param, strobe);
    const key = `${edge.name}|${param?.value ?? ''}`;
    let entry = walk.ports.get(key);
    if (!entry) {
      if (edge.assigns.some((a) => a.index)) notDerived('the counter writes an array');
      const texts = edge.assigns.flatMap((a) => [{ text: a.expr, width: counter.states.find((s) => s.name === a.target)!.width }, ...(a.when ? [{ text: a.when, width: 1 }] : [])]);
      const edgeWidth = edge.width ? sizeIn(part, edge.width) : undefined;
      entry = { port: compiled(() => compilePort(part.def, partSetting(machine, part), texts, edgeWidth, {}, param)), edge };
      walk.ports.set(key, entry);
    }
    const inputs: number[] = [];
    let unknown = false;
    for (const name of entry.port.inputs) {
      const index = counter.states.findIndex((s) => s.name === name);
      if (index >= 0) {
        const value = state[index];
        if (value === undefined) unknown = true;
        inputs.push(value ?? 0);
      } else if (name === edgeInputName) inputs.push(isLoad ? v : notDerived('a bus read that is not the load'));
      else if (part.inputs.get(name)?.from === 'field') {
        const source = part.inputs.get(name) as { from: 'field'; name: string };
        inputs.push(isLoad ? v : codeOf(machine, alt, source.name, ir));
      } else if (part.def.controls.some((c) => c.name === name)) inputs.push(controlCode(machine, part, name, alt, ir));
      else if (choices.has(name)) inputs.push(choices.get(name)!);
      else notDerived(`the counter's port \`${edge.name}\` reads \`${name}\``);
    }
    const out = entry.port.run(inputs).map((x) => Number(x));
    let k = 0;
    for (const a of edge.assigns) {
      const value = out[k++];
      const when = a.when ? out[k++] : 1;
      const index = counter.states.findIndex((s) => s.name === a.target);
      if (unknown) next[index] = undefined;
      else if (when !== 0) next[index] = value;
    }
  }
  return { state: next, loaded: loadedNow };
}

// ---- The derivation of one instruction (one combination of the bits its guards test).

function derive(machine: Machine, cls: ClassDef, instruction: Cube, ir: Cube, loop: ReadonlySet<number>): LoopCount {
  const sequencer = machine.sequencer ? machine.parts.get(machine.sequencer) : undefined;
  // State of the sequencer beyond its step and its return registers is not followed here.
  const returns = returnRegisters(machine);
  if (!sequencer || sequencer.def.states.some((st) => st.name !== sequencer.def.holds.find((h) => h.role === 'step')?.state && !returns.includes(st.name))) notDerived('a sequencer with more state than its step and return registers');
  const loopAlts = [...loop].flatMap((s) => cls.steps.get(s) ?? []);
  const counter = counterOf(machine, loopAlts);
  // Every word of the class that loads the counter, by strobe and word.
  const sites = new Map<Strobe, Map<StepAlt, LoadSite>>();
  const widths = new Set<number>();
  for (const alts of cls.steps.values()) {
    for (const alt of alts) {
      for (const { strobe, edge } of counterEdges(machine, counter, alt)) {
        const load = loadOf(counter, strobe, edge, machine);
        if (!load || (load.from === 'field' && loop.has(alt.step))) continue;
        (sites.get(strobe) ?? sites.set(strobe, new Map()).get(strobe)!).set(alt, { alt, strobe, ...load });
        widths.add(load.width);
      }
    }
  }
  if (widths.size !== 1) notDerived('no load, or loads of different widths');
  const width = [...widths][0];
  if (width < 1 || width > maxLoadWidth) notDerived('a load too wide to walk');
  const registers = [...machine.parts.values()].find((p) => p.def.holds.some((h) => h.role === 'registers'))?.name;
  const walk: Walk = { machine, cls, ir, loop, counter, registers, loads: new Set(), registersWrittenBeforeLoad: false, ports: new Map() };
  const counts: number[] = [];
  for (let v = 0; v < 2 ** width; v++) counts.push(stepsWith(walk, sites, v));
  if (walk.loads.size !== 1) notDerived('the instruction loads the counter in several words');
  const a = counts[0];
  const b = counts.length > 1 ? counts[1] - counts[0] : 0;
  if (b < 0 || counts.some((c, v) => c !== a + b * v)) notDerived('the count is not linear in the loaded value');
  const site = [...walk.loads][0];
  const operand = site.from === 'field' ? { kind: 'constant' as const, value: codeOf(machine, site.alt, site.field ?? notDerived('a preset of no field'), ir) } : loadedOperand(machine, site, ir, width);
  if (operand.kind === 'register' && walk.registersWrittenBeforeLoad) notDerived('a register is written before the load reads it');
  const spec = RV32I_INSTRUCTIONS.find((s) => {
    const c = instructionCube(s);
    return c.mask === instruction.mask && c.value === instruction.value;
  });
  const of = operand.kind === 'constant' ? String(operand.value) : operandName(operand, spec);
  const formula = b === 0 ? String(a) : `${a} + ${b === 1 ? '' : `${b} × `}${of}`;
  const range = operand.kind === 'constant' ? [a + b * operand.value, a + b * operand.value] : [a, a + b * (2 ** width - 1)];
  return { constant: a, perUnit: b, operand, of, formula, counter: counter.part.name, loadStep: site.alt.step, width, least: range[0], most: range[1] };
}

// ---- What drives the loaded lines.

class Unknown extends Error {}

interface Probe {
  ir: number;
  /** Register contents: x0 reads 0 (RV32I 2.1), the others pseudo-random. */
  x: number[];
  /** The register elements read, in order. */
  reads: number[];
}

/** A fixed pseudo-random run (xorshift32), so the derivation is the same every time. */
function random(seed: number): () => number {
  let s = seed >>> 0 || 1;
  return () => {
    s ^= s << 13;
    s ^= s >>> 17;
    s ^= s << 5;
    return s >>> 0;
  };
}

/** The loaded value as a function of the instruction and the registers: a constant, instruction bits, or register bits. */
function loadedOperand(machine: Machine, site: LoadSite, ir: Cube, width: number): LoopOperand {
  const lines = linesOf(machine, site.strobe);
  const next = random(0x2545f491);
  const probes: Probe[] = [];
  const values: number[] = [];
  const evaluator = new BusEvaluator(machine, site.alt, ir);
  for (let p = 0; p < probeCount; p++) {
    const probe: Probe = { ir: ((next() & ~ir.mask) | ir.value) >>> 0, x: Array.from({ length: 32 }, (_, r) => (r === 0 ? 0 : next())), reads: [] };
    let bus: { value: number; driven: number };
    try {
      bus = evaluator.bus(site.strobe.bus!, probe, 0);
    } catch (err) {
      if (err instanceof Unknown) return notDerived(`the loaded lines carry ${err.message}`);
      throw err;
    }
    const mask = lineMask(lines.hi, lines.lo);
    if ((bus.driven & mask) !== mask) notDerived('some loaded lines are not driven in the load step');
    probes.push(probe);
    values.push(slice(bus.value >>> 0, lines.hi, lines.lo) & (2 ** width - 1));
  }
  const ok = (operand: LoopOperand) => probes.every((p, k) => (operandValue(operand, p.ir, p.x) & (2 ** width - 1)) === values[k]);
  if (values.every((v) => v === values[0])) return { kind: 'constant', value: values[0] };
  // Bits of the instruction: each bit of the value one free instruction bit, in order.
  const free = (j: number) => ((ir.mask >>> j) & 1) === 0;
  const all = probes.map((_, k) => k);
  const irBits = Array.from({ length: width }, (_, k) => {
    for (let j = 0; j < 32; j++) if (free(j) && all.every((p) => bit(values[p], k) === bit(probes[p].ir, j))) return j;
    return -1;
  });
  if (irBits.every((j, k) => j >= 0 && j === irBits[0] + k)) {
    const operand: LoopOperand = { kind: 'instruction', hi: irBits[0] + width - 1, lo: irBits[0] };
    if (ok(operand)) return operand;
  }
  // Bits of a register: the element read is selected by instruction bits, the value's bits are its bits.
  const withRead = all.filter((k) => probes[k].reads.length > 0);
  if (withRead.length < probeCount / 2 || withRead.some((k) => new Set(probes[k].reads).size !== 1)) return notDerived('the loaded value is not bits of the instruction or of one register');
  const indexBits = Array.from({ length: 5 }, (_, b) => {
    for (let j = 0; j < 32; j++) if (free(j) && withRead.every((k) => bit(probes[k].reads[0], b) === bit(probes[k].ir, j))) return j;
    return -1;
  });
  if (!indexBits.every((j, b) => j >= 0 && j === indexBits[0] + b)) return notDerived('the register read is not selected by an instruction field');
  const selected = { hi: indexBits[0] + 4, lo: indexBits[0] };
  const registerOf = (p: Probe) => {
    const r = slice(p.ir, selected.hi, selected.lo);
    return r === 0 ? 0 : p.x[r] >>> 0;
  };
  const regBits = Array.from({ length: width }, (_, k) => {
    for (let m = 0; m < 32; m++) if (all.every((p) => bit(values[p], k) === bit(registerOf(probes[p]), m))) return m;
    return -1;
  });
  if (!regBits.every((m, k) => m >= 0 && m === regBits[0] + k)) return notDerived('the loaded value is not bits of the register');
  const operand: LoopOperand = { kind: 'register', index: selected, bits: { hi: regBits[0] + width - 1, lo: regBits[0] } };
  return ok(operand) ? operand : notDerived('the loaded value does not follow the register');
}

/** Bus values of one word, from its drivers' definitions, over a probe's instruction and registers. */
class BusEvaluator {
  private readonly ports = new Map<string, CompiledPort>();
  private current: Probe | undefined;

  constructor(
    private readonly machine: Machine,
    private readonly alt: StepAlt,
    private readonly ir: Cube,
  ) {}

  /** The value on a bus and the lines some driver drives (bit n = line n). */
  bus(name: string, probe: Probe, depth: number): { value: number; driven: number } {
    if (depth > 8) throw new Unknown('a value through too many parts');
    const machine = this.machine;
    let value = 0;
    let driven = 0;
    for (const signal of withConnections(machine, this.alt.actions.map((a) => a.signal))) {
      const strobe = driverNamed(machine, signal);
      if (!strobe || drivenBus(strobe) !== name) continue;
      const lines = linesOf(machine, strobe);
      const mask = lineMask(lines.hi, lines.lo);
      value = (value & ~mask) | ((this.drive(strobe, probe, depth) << lines.lo) & mask);
      driven |= mask;
    }
    return { value, driven };
  }

  private drive(strobe: Strobe, probe: Probe, depth: number): number {
    const machine = this.machine;
    const part = machine.parts.get(strobe.part ?? '');
    const port = part ? definedPortOf(part, strobe) : undefined;
    const drive = part?.def.drives.find((d) => d.name === port);
    if (!part || !drive) throw new Unknown(`what \`${strobe.name}\` drives`);
    const def = part.def;
    const param = strobePortNumber(drive.param, strobe);
    const key = `${part.name}.${drive.name}|${param?.value ?? ''}`;
    let compiledPort = this.ports.get(key);
    if (!compiledPort) {
      const registerArrays = new Set(def.holds.filter((h) => h.role === 'registers').map((h) => h.state));
      const element = (array: string, index: number) => {
        const state = def.states.find((s) => s.name === array);
        if (!registerArrays.has(array) || state?.count === 'memory' || !state?.count || sizeIn(part, state.count) !== 32) throw new Unknown(`an element of \`${part.name}.${array}\``);
        this.current!.reads.push(index);
        return index === 0 ? 0 : this.current!.x[index];
      };
      compiledPort = compiled(() => compilePort(def, partSetting(machine, part), [{ text: drive.expr, width: sizeIn(part, drive.width) }], undefined, { element }, param));
      this.ports.set(key, compiledPort);
    }
    // The names the port really reads with this word's controls (a multiplexer reads one input).
    const choices = choiceCodes(def, part.settings);
    const known = new Map(choices);
    const setting = partSetting(machine, part);
    for (const c of def.controls) known.set(c.name, controlCode(machine, part, c.name, this.alt, this.ir));
    const expr = parsedExpr(def, drive.expr).expr;
    const choiceValues = (n: string) => {
      const s = def.settings.find((x) => x.name === n && x.type === 'choice');
      return s ? new Map(s.choices.map((c, i) => [c, i])) : undefined;
    };
    const live = expr ? liveNames(expr, known, (n) => setting.controls.get(n)?.values ?? choiceValues(n)) : new Set<string>();
    const inputs = compiledPort.inputs.map((name) => (live.has(name) ? this.input(part, name, known, probe, depth) : 0));
    const saved = this.current;
    this.current = probe;
    try {
      return Number(compiledPort.run(inputs)[0]) >>> 0;
    } finally {
      this.current = saved;
    }
  }

  private input(part: Part, name: string, known: Map<string, number>, probe: Probe, depth: number): number {
    const machine = this.machine;
    if (known.has(name)) return known.get(name)!;
    if (part.def.holds.some((h) => h.role === 'instruction' && h.state === name)) return probe.ir;
    const source = part.inputs.get(name);
    const inputDef = part.def.inputs.find((i) => i.name === name);
    if (!source || !inputDef) throw new Unknown(`the state \`${part.name}.${name}\``);
    if (source.from === 'instruction' || (source.from === 'part' && source.name === machine.instructionRegister)) return probe.ir;
    if (source.from === 'field') return codeOf(machine, this.alt, source.name, this.ir);
    if (source.from === 'part') throw new Unknown(`the value of part \`${source.name}\``);
    const width = sizeIn(part, inputDef.width);
    const bus = this.bus(source.name, probe, depth + 1);
    const mask = lineMask(Math.min(width, 32) - 1, 0);
    if ((bus.driven & mask) !== mask) throw new Unknown(`what bus \`${source.name}\` keeps from an earlier step`);
    return width >= 32 ? bus.value >>> 0 : bus.value & mask;
  }
}

// ---- Names in RV32I terms.

/**
 * The instruction fields of a format (RISC-V Unprivileged ISA 20191213, 2.2, figure 2.2, and
 * 2.3 for the immediates): a name and its bits, `base` the immediate bit the lowest one holds.
 * SLLI, SRLI and SRAI name inst[24:20] `shamt` (2.4.1).
 */
function fieldsOf(spec: InstructionSpec | undefined): { name: string; hi: number; lo: number; base?: number }[] {
  if (!spec) return [];
  const shift = spec.major === 'OP-IMM' && (spec.funct3 === 0b001 || spec.funct3 === 0b101);
  const registers = [
    ...(spec.format === 'R' || spec.format === 'S' || spec.format === 'B' ? [{ name: 'rs2', hi: 24, lo: 20 }] : []),
    ...(spec.format !== 'U' && spec.format !== 'J' ? [{ name: 'rs1', hi: 19, lo: 15 }] : []),
    ...(spec.format === 'R' || spec.format === 'I' || spec.format === 'U' || spec.format === 'J' ? [{ name: 'rd', hi: 11, lo: 7 }] : []),
  ];
  const immediates = {
    R: [],
    I: [...(shift ? [{ name: 'shamt', hi: 24, lo: 20 }] : []), { name: 'imm', hi: 31, lo: 20, base: 0 }],
    S: [{ name: 'imm', hi: 31, lo: 25, base: 5 }, { name: 'imm', hi: 11, lo: 7, base: 0 }],
    B: [],
    U: [{ name: 'imm', hi: 31, lo: 12, base: 12 }],
    J: [],
  }[spec.format];
  return [...immediates, ...registers];
}

/** `shamt`, `imm[4:0]`, `ir[24:20]`: instruction bits by the field they are. */
function instructionBitsName(spec: InstructionSpec | undefined, hi: number, lo: number): string {
  for (const f of fieldsOf(spec)) {
    if (hi > f.hi || lo < f.lo) continue;
    if (f.base === undefined) return hi === f.hi && lo === f.lo ? f.name : `${f.name}[${hi - f.lo}:${lo - f.lo}]`;
    const top = hi - f.lo + f.base;
    const bottom = lo - f.lo + f.base;
    return top === bottom ? `${f.name}[${top}]` : `${f.name}[${top}:${bottom}]`;
  }
  return hi === lo ? `ir[${hi}]` : `ir[${hi}:${lo}]`;
}

function operandName(operand: LoopOperand, spec: InstructionSpec | undefined): string {
  if (operand.kind === 'constant') return String(operand.value);
  if (operand.kind === 'instruction') return instructionBitsName(spec, operand.hi, operand.lo);
  const register = fieldsOf(spec).find((f) => f.base === undefined && f.name.startsWith('r') && f.hi === operand.index.hi && f.lo === operand.index.lo)?.name ?? `ir[${operand.index.hi}:${operand.index.lo}]`;
  const { hi, lo } = operand.bits;
  return `x[${register}]${hi === 31 && lo === 0 ? '' : hi === lo ? `[${hi}]` : `[${hi}:${lo}]`}`;
}
