// The RV32I semantics table (server/src/core/isa/semantics.ts) against the reference interpreter
// (server/src/core/isa/interp.ts), instruction by instruction on random states.
//
// Outside source: the RISC-V Instruction Set Manual, Volume I: Unprivileged ISA, version
// 20191213, chapter 2 — the table is written from it, row by row, each row naming its section.
// The interpreter was written from the same chapter independently and is itself checked against
// qemu-riscv32 on whole programs (tests/outside/programs-qemu.test.ts), so agreement here ties the
// table to the spec through two independent readings and one reference tool.
//
// Each case: a random pc (aligned), a random register file with the source registers often at the
// edge values 0, -1, 0x80000000, 0x7fffffff, random immediates (edges: the format's extremes, 0,
// -1, shift amounts 0 and 31, branch and jump offsets that are 2 but not 4 mod 4 so targets are
// misaligned), and memory whose every byte is a seeded hash of its address (often only the edge
// bytes 00 7f 80 ff). The word comes from rv32i.ts's encoder. One interpreter step and the row's
// expressions (evaluated by parts/expr's reference evaluator) must agree on the next pc, whether
// the instruction retires, the value written to rd (and nothing else), the memory write, and for
// loads the bytes read.
import fc from 'fast-check';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { LinuxUserEnvironment, type MachineAccess } from '../../server/src/core/isa/environment';
import { Rv32iReference, type Memory, type StepResult } from '../../server/src/core/isa/interp';
import { RV32I_INSTRUCTIONS, encodeInstruction, instructionByMnemonic, rdField, rs1Field, rs2Field, type EncodeOperands } from '../../server/src/core/isa/rv32i';
import {
  IMMEDIATES,
  SEMANTICS,
  SEMANTICS_INPUTS,
  effectOf,
  evaluateEffect,
  parseSemanticsRow,
  semanticsProblems,
  type Effect,
  type SemanticsRow,
} from '../../server/src/core/isa/semantics';
import { checkExpression, parseExpression, scopeOf } from '../../server/src/core/parts/expr';
import { semanticsPage } from '../../scripts/semantics-page';

const SEED = 0x5eed_16;
const RUNS_PER_INSTRUCTION = 300;

/** Memory whose bytes are a hash of (seed, address) until written; every access recorded. */
class PatternMemory implements Memory {
  readonly written = new Map<number, number>();
  readonly loads: [address: number, size: number][] = [];
  constructor(
    private readonly seed: number,
    private readonly edgeBytesOnly: boolean,
  ) {}
  byte(address: number): number {
    const a = address >>> 0;
    const w = this.written.get(a);
    if (w !== undefined) return w;
    let h = Math.imul(a ^ this.seed, 0x9e3779b1);
    h = Math.imul(h ^ (h >>> 15), 0x85ebca77);
    h ^= h >>> 13;
    return this.edgeBytesOnly ? [0x00, 0x7f, 0x80, 0xff][h & 3]! : h & 0xff;
  }
  private word(address: number, size: number): number {
    let v = 0;
    for (let i = size - 1; i >= 0; i--) v = (v << 8) | this.byte((address + i) >>> 0);
    return v;
  }
  load8(address: number): number {
    this.loads.push([address >>> 0, 1]);
    return this.byte(address);
  }
  load16(address: number): number {
    this.loads.push([address >>> 0, 2]);
    return this.word(address, 2) & 0xffff;
  }
  load32(address: number): number {
    this.loads.push([address >>> 0, 4]);
    return this.word(address, 4) | 0;
  }
  private put(address: number, value: number, size: number): void {
    for (let i = 0; i < size; i++) this.written.set((address + i) >>> 0, (value >>> (8 * i)) & 0xff);
  }
  store8(address: number, value: number): void {
    this.put(address, value, 1);
  }
  store16(address: number, value: number): void {
    this.put(address, value, 2);
  }
  store32(address: number, value: number): void {
    this.put(address, value, 4);
  }
  readBytes(address: number, lengthBytes: number): Uint8Array {
    return Uint8Array.from({ length: lengthBytes }, (_, i) => this.byte((address + i) >>> 0));
  }
  writeBytes(address: number, bytes: Uint8Array): void {
    bytes.forEach((b, i) => this.written.set((address + i) >>> 0, b));
  }
}

/** Counts ECALLs the interpreter hands to the environment. */
class CountingEnvironment extends LinuxUserEnvironment {
  calls = 0;
  override handleEcall(machine: MachineAccess) {
    this.calls++;
    return super.handleEcall(machine);
  }
}

const EDGE_VALUES = [0, -1, 0x80000000 | 0, 0x7fffffff, 1, 31, 32];
const word32 = fc.oneof(fc.constantFrom(...EDGE_VALUES), fc.integer({ min: -0x80000000, max: 0x7fffffff }));
const register = fc.oneof(fc.constant(0), fc.integer({ min: 0, max: 31 }));
const pcValue = fc.oneof(fc.constantFrom(0, 0xfffffffc, 0x7ffffffc, 0x80000000), fc.integer({ min: 0, max: 0x3fffffff }).map((n) => n * 4));
const range = (min: number, max: number, step = 1) =>
  fc.oneof(fc.constantFrom(min, max, 0, -step, step, 2 * step, -2 * step).filter((v) => v >= min && v <= max), fc.integer({ min: min / step, max: Math.floor(max / step) }).map((n) => n * step));

/** Operands for `mnemonic`'s encoder: registers and an immediate in the format's range. */
function operandsFor(mnemonic: string): fc.Arbitrary<EncodeOperands> {
  const spec = instructionByMnemonic(mnemonic)!;
  const shift = spec.major === 'OP-IMM' && spec.funct7 !== null;
  const imm = shift
    ? fc.constantFrom(0, 31).chain((e) => fc.oneof(fc.constant(e), fc.integer({ min: 0, max: 31 })))
    : spec.format === 'I' || spec.format === 'S'
      ? range(-2048, 2047)
      : spec.format === 'B'
        ? range(-4096, 4094, 2)
        : spec.format === 'J'
          ? range(-(1 << 20), (1 << 20) - 2, 2)
          : spec.format === 'U'
            ? fc.oneof(fc.constantFrom(0, 0xfffff, 0x80000, 0x7ffff), fc.integer({ min: 0, max: 0xfffff }))
            : fc.constant(0);
  return fc.record({ rd: register, rs1: register, rs2: register, imm, immIsUpper20: fc.constant(spec.format === 'U') });
}

interface Case {
  operands: EncodeOperands;
  pc: number;
  registers: number[];
  rs1Value: number;
  rs2Value: number;
  memorySeed: number;
  edgeBytesOnly: boolean;
}

const caseFor = (mnemonic: string): fc.Arbitrary<Case> =>
  fc.record({
    operands: operandsFor(mnemonic),
    pc: pcValue,
    registers: fc.array(fc.integer({ min: -0x80000000, max: 0x7fffffff }), { minLength: 32, maxLength: 32 }),
    rs1Value: word32,
    rs2Value: word32,
    memorySeed: fc.integer(),
    edgeBytesOnly: fc.boolean(),
  });

const hex = (v: number | bigint) => `0x${(BigInt(v) & 0xffffffffn).toString(16)}`;

/**
 * Runs one case on the interpreter and on `effect`; returns what disagrees (empty when they
 * agree). `mnemonic` chooses the word; `effect` is what is checked (a test passes a broken one).
 */
function disagreements(mnemonic: string, effect: Effect, c: Case, seen = new Set<string>()): string[] {
  const encoded = encodeInstruction(mnemonic, c.operands);
  if (!encoded.ok) throw new Error(encoded.error);
  const ir = encoded.word;
  const memory = new PatternMemory(c.memorySeed, c.edgeBytesOnly);
  memory.store32(c.pc, ir);
  const environment = new CountingEnvironment();
  const machine = new Rv32iReference(memory, environment);
  machine.pc = c.pc;
  c.registers.forEach((v, i) => machine.writeRegister(i, v));
  machine.writeRegister(rs1Field(ir), c.rs1Value);
  machine.writeRegister(rs2Field(ir), c.rs2Value);
  const before = Array.from(machine.x);
  const rs1v = before[rs1Field(ir)]!;
  const rs2v = before[rs2Field(ir)]!;
  memory.loads.length = 0;
  const step: StepResult = machine.step();
  const dataLoads = memory.loads.filter(([a, s]) => !(a === c.pc && s === 4));

  const got = evaluateEffect(effect, { pc: c.pc, ir, rs1v, rs2v, readByte: (a) => memory.byte(a) });
  const problems: string[] = [];
  const say = (what: string, reference: unknown, semantics: unknown) => {
    if (reference !== semantics) problems.push(`${what}: interpreter ${String(reference)}, semantics ${String(semantics)}`);
  };
  const after = Array.from(machine.x);
  const unchangedExcept = (rd: number | null) => {
    for (let i = 0; i < 32; i++) if (i !== rd) say(`x${i}`, hex(after[i]!), hex(before[i]!));
  };

  if (effect.special === 'breakpoint') {
    say('stop', step.stop?.kind, 'ebreak');
    say('retired', step.retired, false);
    unchangedExcept(null);
    return problems;
  }
  if (effect.special === 'environment-call') {
    say('environment called', environment.calls, 1);
    return problems;
  }
  say('misaligned', step.stop?.kind === 'misaligned-target', got.misaligned);
  say('retired', step.retired, !got.misaligned);
  seen.add(got.misaligned ? 'misaligned' : 'retired');
  if (got.misaligned) {
    say('next pc', hex(step.nextPc), hex(c.pc));
    say('memory writes', step.memoryWrites.length, 0);
    unchangedExcept(null);
    return problems;
  }
  say('next pc', hex(step.nextPc), got.nextPc === undefined ? 'none' : hex(got.nextPc));
  const rd = rdField(ir);
  if (got.rd !== undefined) {
    seen.add(rd === 0 ? 'x0' : 'rd');
    // Spec 2.1: x0 is hardwired to 0; the write is discarded.
    say(`rd (x${rd})`, hex(after[rd]!), rd === 0 ? hex(0) : hex(got.rd));
    unchangedExcept(rd);
  } else {
    unchangedExcept(null);
  }
  const write = step.memoryWrites[0];
  say('memory writes', step.memoryWrites.length, got.store ? 1 : 0);
  if (write && got.store) {
    say('store address', hex(write.address), hex(got.store.address));
    say('store size', write.size, got.store.size);
    say('store value', hex(write.value), hex(got.store.value));
  }
  if (got.load) {
    const address = Number(got.load.address);
    const expected = Array.from({ length: got.load.size }, (_, i) => (address + i) >>> 0);
    say('bytes the expressions read', [...got.bytesRead].sort((a, b) => a - b).join(','), [...expected].sort((a, b) => a - b).join(','));
    // The interpreter's data access, unless it coincides with the instruction fetch.
    if (!(address === c.pc && got.load.size === 4)) say('interpreter load', dataLoads.map(([a, s]) => `${hex(a)}/${s}`).join(' '), `${hex(address)}/${got.load.size}`);
  } else {
    say('interpreter loads', dataLoads.length, 0);
    say('bytes the expressions read', got.bytesRead.length, 0);
  }
  return problems;
}

/** The property for one instruction with the given effect; fast-check's report, without throwing. */
function check(mnemonic: string, effect: Effect, seen?: Set<string>) {
  return fc.check(
    fc.property(caseFor(mnemonic), (c) => {
      const problems = disagreements(mnemonic, effect, c, seen);
      if (problems.length) throw new Error(`${mnemonic}: ${problems.join('; ')}`);
    }),
    { seed: SEED, numRuns: RUNS_PER_INSTRUCTION },
  );
}

describe('the RV32I semantics table', () => {
  it('has one row per instruction of rv32i.ts, every expression parsing and width-checking clean', () => {
    expect(semanticsProblems()).toEqual([]);
    expect(SEMANTICS.map((r) => r.mnemonic)).toEqual(RV32I_INSTRUCTIONS.map((s) => s.mnemonic));
    for (const spec of RV32I_INSTRUCTIONS) expect(() => effectOf(spec.mnemonic), spec.mnemonic).not.toThrow();
  });

  it('gives each format immediate 32 bits of ir (spec 2.3)', () => {
    for (const [format, text] of Object.entries(IMMEDIATES)) {
      const parsed = parseExpression(text, 0);
      expect(parsed.diagnostics, format).toEqual([]);
      expect(checkExpression(parsed.expr!, scopeOf(SEMANTICS_INPUTS), 32).diagnostics, format).toEqual([]);
    }
  });

  it('reports a row it does not understand, with the field and the checker\'s code', () => {
    expect(() => effectOf('mul')).toThrow(/"mul": no row/);
    const problems = (row: SemanticsRow) => parseSemanticsRow(row).problems.map((p) => `${p.field}: ${p.diagnostics.map((d) => d.code).join(',')}`);
    const add: SemanticsRow = { mnemonic: 'add', section: '2.4', says: '', nextPc: 'pc + 4', rd: 'rs1v + rs2v' };
    expect(problems(add)).toEqual([]);
    expect(problems({ ...add, rd: 'rs1v + rs2v[4:0]' })).toEqual(['rd: expr-width']);
    expect(problems({ ...add, rd: 'rs1v + imm' })).toEqual(['rd: expr-name']); // R-type: no immediate
    expect(problems({ ...add, nextPc: 'target' })).toEqual(['nextPc: expr-name']); // add defines no target
    expect(problems({ ...add, rd: 'rs1v +' })).toEqual(['rd: expr-syntax']);
    expect(problems({ ...add, mnemonic: 'sb' })).toEqual(['rd: ']); // a store writes no register
    expect(problems({ ...add, rd: undefined })).toEqual(['rd: ']); // add writes one
    const taken = { mnemonic: 'beq', section: '2.5', says: '', taken: 'target == pc', target: 'pc + imm', nextPc: 'pc + 4' } as const;
    expect(problems(taken)).toEqual([]); // taken may use target, defined before it
    expect(problems({ ...taken, target: 'taken ? pc : pc' })).toEqual(['target: expr-name']); // but not the other way round
  });

  it('says of each load the size and signedness its rd expression has', () => {
    for (const spec of RV32I_INSTRUCTIONS.filter((s) => s.major === 'LOAD')) {
      const effect = effectOf(spec.mnemonic);
      // Every byte 0x80: the top bit of the loaded value is set, so rd[31] is the sign extension.
      const got = evaluateEffect(effect, { pc: 0, ir: encodeWord(spec.mnemonic), rs1v: 0x100, rs2v: 0, readByte: () => 0x80 });
      expect(got.bytesRead.length, spec.mnemonic).toBe(effect.load!.size);
      if (effect.load!.size < 4) expect(got.rd! >> 31n === 1n, spec.mnemonic).toBe(effect.load!.signed);
    }
  });
});

function encodeWord(mnemonic: string, operands: EncodeOperands = { rd: 5, rs1: 6, rs2: 7 }): number {
  const encoded = encodeInstruction(mnemonic, operands);
  if (!encoded.ok) throw new Error(encoded.error);
  return encoded.word;
}

describe('the semantics agree with the reference interpreter on random states (RISC-V Unprivileged ISA 20191213, ch. 2)', () => {
  for (const spec of RV32I_INSTRUCTIONS) {
    it(spec.mnemonic, () => {
      const effect = effectOf(spec.mnemonic);
      const seen = new Set<string>();
      const result = check(spec.mnemonic, effect, seen);
      if (result.failed) throw new Error(`seed ${SEED}: ${String(result.errorInstance)}`);
      // The cases reach every path: retiring and (for jumps and branches) misaligned, rd x0 and another.
      if (!effect.special) expect(seen, 'retired').toContain('retired');
      if (effect.misaligned) expect(seen, 'misaligned').toContain('misaligned');
      if (effect.rd) expect([...seen].filter((t) => t === 'x0' || t === 'rd').sort()).toEqual(['rd', 'x0']);
    });
  }

  it('fails when a row is wrong: SRA written as SRL, BGE as BGEU, SH storing a byte', () => {
    const rewritten = (mnemonic: string, field: 'rd' | 'taken', text: string): Effect => {
      const effect = effectOf(mnemonic);
      const expr = parseExpression(text, 0).expr!;
      if (field === 'rd') return { ...effect, rd: expr };
      return { ...effect, definitions: effect.definitions.map((d) => (d.name === 'taken' ? { name: 'taken', expr } : d)) };
    };
    expect(check('sra', rewritten('sra', 'rd', 'rs1v >> rs2v[4:0]')).failed).toBe(true);
    expect(check('bge', rewritten('bge', 'taken', 'rs1v >= rs2v')).failed).toBe(true);
    const sh = effectOf('sh');
    expect(check('sh', { ...sh, store: { ...sh.store!, value: parseExpression('{0x00, rs2v[7:0]}', 0).expr! } }).failed).toBe(true);
  });
});

describe('docs/semantics.md', () => {
  it('is the page printed from the table (node scripts/run-ts.mjs scripts/semantics-doc.ts writes it)', () => {
    expect(readFileSync(new URL('../../docs/semantics.md', import.meta.url), 'utf8')).toBe(semanticsPage());
  });
});
