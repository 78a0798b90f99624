// Helpers for reasoning about address inputs: instruction-bit cubes (mask + value over the 32
// instruction bits), the cube of each RV32I instruction, and guard matching under a partial
// assignment of instruction bits and flags. Used by the coverage and guard checks.
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import type { ClassDef, DecodeMap, GuardLiteral, StepAlt } from '../model/types';
import { matchesBits } from '../model/numbers';

/** A set of instruction words: those with (word & mask) === value. */
export interface Cube {
  mask: number;
  value: number;
}

export function cubeOfBits(hi: number, lo: number, bits: string): Cube {
  let mask = 0;
  let value = 0;
  for (let i = 0; i < bits.length; i++) {
    const bit = hi - i;
    if (bit < lo) break;
    const ch = bits[i];
    if (ch === '-') continue;
    mask |= 1 << bit;
    if (ch === '1') value |= 1 << bit;
  }
  return { mask: mask >>> 0, value: value >>> 0 };
}

export function intersects(a: Cube, b: Cube): boolean {
  return (((a.mask & b.mask) & (a.value ^ b.value)) >>> 0) === 0;
}

export function intersect(a: Cube, b: Cube): Cube | undefined {
  if (!intersects(a, b)) return undefined;
  return { mask: (a.mask | b.mask) >>> 0, value: ((a.value & a.mask) | (b.value & b.mask)) >>> 0 };
}

/**
 * The instruction words that are this RV32I instruction (RISC-V Unprivileged ISA 20191213,
 * ch. 24 listing): opcode, funct3 and funct7 where fixed; ECALL and EBREAK fix all of bits
 * 31..7 (imm, rs1 = 0, funct3 = 0, rd = 0).
 */
const instructionCubes = new WeakMap<InstructionSpec, Cube>();

export function instructionCube(spec: InstructionSpec): Cube {
  const cached = instructionCubes.get(spec);
  if (cached) return cached;
  const cube = computeInstructionCube(spec);
  instructionCubes.set(spec, cube);
  return cube;
}

function computeInstructionCube(spec: InstructionSpec): Cube {
  let cube: Cube = { mask: 0x7f, value: spec.opcode };
  if (spec.funct3 !== null) cube = intersect(cube, cubeOfBits(14, 12, spec.funct3.toString(2).padStart(3, '0')))!;
  if (spec.funct7 !== null) cube = intersect(cube, cubeOfBits(31, 25, spec.funct7.toString(2).padStart(7, '0')))!;
  if (spec.imm12 !== null) {
    cube = intersect(cube, cubeOfBits(31, 20, spec.imm12.toString(2).padStart(12, '0')))!;
    cube = intersect(cube, cubeOfBits(19, 15, '00000'))!;
    cube = intersect(cube, cubeOfBits(11, 7, '00000'))!;
  }
  return cube;
}

export function instructionsOfClass(cls: ClassDef): InstructionSpec[] {
  return cls.opcode === undefined ? [] : RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode);
}

/** Most inputs a walk enumerates (instruction bits plus flags); beyond, callers fall back. */
export const maxWalkInputs = 16;

/** An assignment of some instruction bits and some flags. */
export interface Scenario {
  ir: Cube;
  flags: Map<string, number>;
}

/** Whether a guard literal holds; undefined when the scenario does not fix what it tests. */
export function literalHolds(lit: GuardLiteral, scenario: Scenario): boolean | undefined {
  if (lit.input.kind === 'flag') {
    const value = scenario.flags.get(lit.input.name);
    if (value === undefined) return undefined;
    return lit.bits === '-' || lit.bits === String(value);
  }
  if (lit.input.kind !== 'ir') return undefined;
  const cube = cubeOfBits(lit.input.hi, lit.input.lo, lit.bits);
  if (((cube.mask & scenario.ir.mask) >>> 0) !== cube.mask) return undefined;
  return ((scenario.ir.value & cube.mask) >>> 0) === cube.value;
}

/**
 * A guard prepared for repeated tests: its instruction-bit literals merged into one cube and
 * its flag literals listed. `never` when no scenario can satisfy it (contradictory literals,
 * or a literal on an input a scenario never fixes).
 */
export interface CompiledGuard {
  never: boolean;
  ir: Cube;
  flags: { name: string; bits: string }[];
}

const compiledGuardCache = new WeakMap<StepAlt, CompiledGuard>();

function compiledGuard(alt: StepAlt): CompiledGuard {
  let compiled = compiledGuardCache.get(alt);
  if (compiled) return compiled;
  compiled = { never: false, ir: { mask: 0, value: 0 }, flags: [] };
  for (const lit of alt.guard ?? []) {
    if (lit.input.kind === 'flag') compiled.flags.push({ name: lit.input.name, bits: lit.bits });
    else if (lit.input.kind === 'ir') {
      const merged = intersect(compiled.ir, cubeOfBits(lit.input.hi, lit.input.lo, lit.bits));
      if (merged) compiled.ir = merged;
      else compiled.never = true;
    } else compiled.never = true;
  }
  compiledGuardCache.set(alt, compiled);
  return compiled;
}

/**
 * Whether every literal of an alternative's guard holds in a scenario: the same as
 * `(alt.guard ?? []).every((lit) => literalHolds(lit, scenario) === true)`, prepared once.
 */
export function guardHolds(alt: StepAlt, scenario: Scenario): boolean {
  return compiledHolds(compiledGuard(alt), scenario);
}

/** For loops that test the same alternatives many times: their guards, prepared once. */
export function compiledGuards(alts: readonly StepAlt[]): CompiledGuard[] {
  return alts.map(compiledGuard);
}

export function compiledHolds(guard: CompiledGuard, scenario: Scenario): boolean {
  if (guard.never) return false;
  const mask = guard.ir.mask;
  if (((mask & scenario.ir.mask) >>> 0) !== mask || ((scenario.ir.value & mask) >>> 0) !== guard.ir.value) return false;
  for (const flag of guard.flags) {
    const value = scenario.flags.get(flag.name);
    if (value === undefined || (flag.bits !== '-' && flag.bits !== String(value))) return false;
  }
  return true;
}

/** The alternatives of one step that apply in a scenario fixing every input their guards test. */
export function matchingAlternatives(alts: StepAlt[], scenario: Scenario): StepAlt[] {
  const guarded = alts.filter((a) => !a.isElse && (a.guard === null || guardHolds(a, scenario)));
  if (guarded.length > 0) return guarded;
  return alts.filter((a) => a.isElse);
}

/** The inputs the guards of some alternatives test: instruction bit positions and flag names. */
export function guardInputs(alts: StepAlt[]): { irMask: number; flags: string[] } {
  let irMask = 0;
  const flags = new Set<string>();
  for (const alt of alts) {
    for (const lit of alt.guard ?? []) {
      if (lit.input.kind === 'flag') flags.add(lit.input.name);
      else if (lit.input.kind === 'ir') irMask |= bitRangeMask(lit.input.hi, lit.input.lo);
    }
  }
  return { irMask: irMask >>> 0, flags: [...flags].sort() };
}

/** The mask of instruction bits hi..lo (the same as cubeOfBits(hi, lo, '00..0').mask). */
function bitRangeMask(hi: number, lo: number): number {
  return (2 ** (hi + 1) - 2 ** lo) >>> 0;
}

/** Bit positions set in a mask, low first. */
export function bitsOf(mask: number): number[] {
  const bits: number[] = [];
  for (let i = 0; i < 32; i++) if ((mask >>> i) & 1) bits.push(i);
  return bits;
}

const noFlags: Map<string, number> = new Map();

/**
 * Every scenario over the given free instruction bits and flags, refining `base`. Capped: more
 * than 2^16 combinations are not enumerated (the caller says so).
 */
export function* scenarios(base: Cube, freeBits: number[], flags: string[]): Generator<Scenario> {
  const n = freeBits.length + flags.length;
  if (n > 16) return;
  for (let combo = 0; combo < 1 << n; combo++) {
    let mask = base.mask;
    let value = base.value;
    freeBits.forEach((bit, i) => {
      mask |= 1 << bit;
      if ((combo >> i) & 1) value |= 1 << bit;
    });
    // Scenarios without flags share one empty map (nobody writes to it).
    const flagValues = flags.length ? new Map<string, number>() : noFlags;
    flags.forEach((flag, i) => flagValues.set(flag, (combo >> (freeBits.length + i)) & 1));
    yield { ir: { mask: mask >>> 0, value: value >>> 0 }, flags: flagValues };
  }
}

/**
 * The same scenarios as `scenarios`, in the same order, handed to `visit` one after another in
 * a single reused object: for hot loops that look at each scenario and let it go (a visitor
 * must copy what it wants to keep).
 */
export function forEachScenario(base: Cube, freeBits: number[], flags: string[], visit: (scenario: Scenario) => void): void {
  const n = freeBits.length + flags.length;
  if (n > 16) return;
  const scenario: Scenario = { ir: { mask: 0, value: 0 }, flags: flags.length ? new Map<string, number>() : noFlags };
  for (let combo = 0; combo < 1 << n; combo++) {
    let mask = base.mask;
    let value = base.value;
    for (let i = 0; i < freeBits.length; i++) {
      mask |= 1 << freeBits[i];
      if ((combo >> i) & 1) value |= 1 << freeBits[i];
    }
    scenario.ir.mask = mask >>> 0;
    scenario.ir.value = value >>> 0;
    for (let i = 0; i < flags.length; i++) scenario.flags.set(flags[i], (combo >> (freeBits.length + i)) & 1);
    visit(scenario);
  }
}

/** Describes a scenario's tested inputs for messages: `funct3=101 f7b5=1 taken=0`. */
export function describeScenario(scenario: Scenario, irMask: number, flags: string[]): string {
  const parts: string[] = [];
  const named: [string, number, number][] = [
    ['funct3', 14, 12],
    ['f7b5', 30, 30],
    ['opcode', 6, 2],
  ];
  let remaining = irMask;
  for (const [label, hi, lo] of named) {
    const cube = cubeOfBits(hi, lo, '0'.repeat(hi - lo + 1));
    if ((remaining & cube.mask) >>> 0 === cube.mask) {
      let bits = '';
      for (let b = hi; b >= lo; b--) bits += (scenario.ir.value >>> b) & 1;
      parts.push(`${label}=${bits}`);
      remaining = (remaining & ~cube.mask) >>> 0;
    }
  }
  for (const bit of bitsOf(remaining).reverse()) parts.push(`ir[${bit}]=${(scenario.ir.value >>> bit) & 1}`);
  for (const flag of flags) parts.push(`${flag}=${scenario.flags.get(flag)}`);
  return parts.join(' ');
}

/** Whether a decode map's row matches a scenario (an input the scenario does not fix matches). */
export function rowMatches(map: DecodeMap, patterns: string[], scenario: Scenario): boolean {
  return map.inputs.every((input, i) => {
    const pattern = patterns[i];
    if (input.input.kind === 'flag') {
      const v = scenario.flags.get(input.input.name);
      return pattern === '-' || v === undefined || String(v) === pattern;
    }
    if (input.input.kind !== 'ir') return true;
    const width = input.input.hi - input.input.lo + 1;
    const value = (scenario.ir.value >>> input.input.lo) & ((1 << width) - 1);
    return matchesBits(pattern, value);
  });
}
