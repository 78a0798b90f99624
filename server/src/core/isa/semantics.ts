// RV32I semantics written once, as data: what each of the 40 instructions does to the
// architectural state (pc, the register rd, memory), as expressions of the project's own
// expression language (docs/expressions.md). The reference interpreter is checked against this
// table on random states (tests/isa/semantics.test.ts); the prover is to turn the same trees into
// solver terms; docs/semantics.md is printed from it. Nothing else should restate what an
// instruction does.
//
// Source: The RISC-V Instruction Set Manual, Volume I: Unprivileged ISA, version 20191213,
// chapter 2: 2.1 programmers' model (x0), 2.2 formats (misaligned targets), 2.3 immediates,
// 2.4 integer computational, 2.5 control transfer, 2.6 load/store, 2.7 memory ordering (FENCE),
// 2.8 environment call and breakpoints. Each row names its section.
//
// The names an expression may use (one scope, `SEMANTICS_INPUTS`, defined once):
//   pc      the address of the instruction (32 bits)
//   ir      the instruction word (32 bits); fields are slices of it
//   rs1v    the value of register x[ir[19:15]], rs2v of x[ir[24:20]] (x0 reads 0, spec 2.1)
//   m       the byte memory, `m[a]` the byte at the 32-bit address a
//   imm     the immediate of the instruction's format (IMMEDIATES, spec 2.3)
// and, where a row defines them, in this order (each may use the ones before it):
//   addr    a load's or store's effective address
//   target  a jump's or branch's target address
//   taken   a branch's condition (1 bit)
// A row's effect: the next pc; the value written to register ir[11:7] (none for rows that write
// no register; a write to x0 is discarded by the architecture, spec 2.1, so callers drop it);
// a load's address, size and signedness or a store's address, size and value; and for control
// transfers the condition under which the instruction raises instruction-address-misaligned and
// does not retire (spec 2.2, 2.5). ECALL, EBREAK and FENCE are kinds, not expressions: their
// effect belongs to the execution environment (2.7, 2.8).
//
// Choices where the spec leaves room, as the reference interpreter makes them (qemu-riscv32 user
// mode): memory is little-endian (the byte at addr is the least significant; RISC-V is
// little-endian in every execution environment this tool targets, from memory), and a
// misaligned load or store is performed byte by byte, which `m[addr + k]` already says.
import type { Diagnostic } from '../text/diagnostic';
import { checkExpression, evaluate, formatExpression, namesUsed, parseExpression, scopeOf, type Expr, type NameInfo, type Scope } from '../parts/expr';
import { RV32I_INSTRUCTIONS, instructionByMnemonic, type InstructionFormat } from './rv32i';

/** Spec 2.3, "Immediate Encoding Variants": each format's immediate as bits of ir, sign-extended from ir[31]. */
export const IMMEDIATES: Readonly<Record<Exclude<InstructionFormat, 'R'>, string>> = {
  I: 'sext(ir[31:20], 32)',
  S: 'sext({ir[31:25], ir[11:7]}, 32)',
  B: 'sext({ir[31], ir[7], ir[30:25], ir[11:8], 0b0}, 32)',
  U: '{ir[31:12], 0x000}',
  J: 'sext({ir[31], ir[19:12], ir[20], ir[30:21], 0b0}, 32)',
};

/** Spec 2.2: the register fields. rs1v and rs2v are the values of the registers these select; rd is written. */
export const REGISTER_FIELDS = { rd: 'ir[11:7]', rs1: 'ir[19:15]', rs2: 'ir[24:20]' } as const;

/** The names every row's expressions may use, with their widths (the memory is an array of bytes). */
export const SEMANTICS_INPUTS: ReadonlyMap<string, NameInfo> = new Map<string, NameInfo>([
  ['pc', { width: 32 }],
  ['ir', { width: 32 }],
  ['rs1v', { width: 32 }],
  ['rs2v', { width: 32 }],
  ['m', { width: 8, elements: 'memory' }],
]);

/** The names a row defines, in the order they are defined (each may use the earlier ones). */
export const DEFINED_NAMES = [
  { name: 'imm', width: 32 },
  { name: 'addr', width: 32 },
  { name: 'target', width: 32 },
  { name: 'taken', width: 1 },
] as const;

export type SpecialKind = 'environment-call' | 'breakpoint' | 'fence';

/**
 * An instruction's effect with its expressions of type E: text in the table, checked trees once
 * parsed (the same fields, so the two forms cannot grow apart).
 */
export interface EffectFields<E> {
  readonly mnemonic: string;
  /** The section of the RISC-V Unprivileged ISA 20191213 that defines the instruction. */
  readonly section: '2.4' | '2.5' | '2.6' | '2.7' | '2.8';
  /** What the spec says the instruction does, in one line. */
  readonly says: string;
  /** The next pc when the instruction retires; absent for ECALL and EBREAK (the environment decides). */
  readonly nextPc?: E;
  /** The value written to register ir[11:7]. */
  readonly rd?: E;
  /** A load: its address (named `addr` in rd), bytes, and whether a byte or halfword is sign-extended (false for LW: a word needs no extension). */
  readonly load?: { readonly address: E; readonly size: 1 | 2 | 4; readonly signed: boolean };
  /** A store: its address, bytes, and the value written (8 × size bits, little-endian). */
  readonly store?: { readonly address: E; readonly size: 1 | 2 | 4; readonly value: E };
  /** When this holds the instruction raises instruction-address-misaligned and does not retire. */
  readonly misaligned?: E;
  readonly special?: SpecialKind;
}

/** One row of the table, as text. */
export interface SemanticsRow extends EffectFields<string> {
  /** A branch's condition. */
  readonly taken?: string;
  /** A jump's or branch's target. */
  readonly target?: string;
}

const SEQ = 'pc + 4';
const ALIGN = 'target[1:0] != 0';
const LOAD_ADDRESS = 'rs1v + imm';

const branch = (mnemonic: string, says: string, taken: string): SemanticsRow => ({
  mnemonic,
  section: '2.5',
  says,
  taken,
  target: 'pc + imm',
  nextPc: `taken ? target : ${SEQ}`,
  misaligned: `taken & ${ALIGN}`,
});

/** The 40 rows, in the order of rv32i.ts (the spec's chapter 24 listing). */
export const SEMANTICS: readonly SemanticsRow[] = [
  // 2.4 Integer computational, integer register-immediate: LUI, AUIPC.
  { mnemonic: 'lui', section: '2.4', says: 'rd = the U-immediate (upper 20 bits, low 12 zero)', nextPc: SEQ, rd: 'imm' },
  { mnemonic: 'auipc', section: '2.4', says: 'rd = pc + the U-immediate', nextPc: SEQ, rd: 'pc + imm' },
  // 2.5 Control transfer, unconditional jumps; the target must be four-byte aligned.
  { mnemonic: 'jal', section: '2.5', says: 'rd = pc + 4; jump to pc + the J-immediate', target: 'pc + imm', nextPc: 'target', rd: SEQ, misaligned: ALIGN },
  {
    mnemonic: 'jalr',
    section: '2.5',
    says: 'rd = pc + 4; jump to rs1 + the I-immediate with bit 0 cleared',
    target: '(rs1v + imm) & 0xfffffffe',
    nextPc: 'target',
    rd: SEQ,
    misaligned: ALIGN,
  },
  // 2.5 Control transfer, conditional branches; misaligned only when taken.
  branch('beq', 'branch to pc + the B-immediate if rs1 = rs2', 'rs1v == rs2v'),
  branch('bne', 'branch if rs1 ≠ rs2', 'rs1v != rs2v'),
  branch('blt', 'branch if rs1 < rs2, signed', 'rs1v <s rs2v'),
  branch('bge', 'branch if rs1 ≥ rs2, signed', 'rs1v >=s rs2v'),
  branch('bltu', 'branch if rs1 < rs2, unsigned', 'rs1v < rs2v'),
  branch('bgeu', 'branch if rs1 ≥ rs2, unsigned', 'rs1v >= rs2v'),
  // 2.6 Load and store: effective address rs1 + the sign-extended 12-bit offset; little-endian.
  { mnemonic: 'lb', section: '2.6', says: 'rd = the byte at rs1 + offset, sign-extended', nextPc: SEQ, load: { address: LOAD_ADDRESS, size: 1, signed: true }, rd: 'sext(m[addr], 32)' },
  { mnemonic: 'lh', section: '2.6', says: 'rd = the halfword at rs1 + offset, sign-extended', nextPc: SEQ, load: { address: LOAD_ADDRESS, size: 2, signed: true }, rd: 'sext({m[addr + 1], m[addr]}, 32)' },
  { mnemonic: 'lw', section: '2.6', says: 'rd = the word at rs1 + offset', nextPc: SEQ, load: { address: LOAD_ADDRESS, size: 4, signed: false }, rd: '{m[addr + 3], m[addr + 2], m[addr + 1], m[addr]}' },
  { mnemonic: 'lbu', section: '2.6', says: 'rd = the byte at rs1 + offset, zero-extended', nextPc: SEQ, load: { address: LOAD_ADDRESS, size: 1, signed: false }, rd: 'zext(m[addr], 32)' },
  { mnemonic: 'lhu', section: '2.6', says: 'rd = the halfword at rs1 + offset, zero-extended', nextPc: SEQ, load: { address: LOAD_ADDRESS, size: 2, signed: false }, rd: 'zext({m[addr + 1], m[addr]}, 32)' },
  { mnemonic: 'sb', section: '2.6', says: 'the byte at rs1 + offset = the low 8 bits of rs2', nextPc: SEQ, store: { address: LOAD_ADDRESS, size: 1, value: 'rs2v[7:0]' } },
  { mnemonic: 'sh', section: '2.6', says: 'the halfword at rs1 + offset = the low 16 bits of rs2', nextPc: SEQ, store: { address: LOAD_ADDRESS, size: 2, value: 'rs2v[15:0]' } },
  { mnemonic: 'sw', section: '2.6', says: 'the word at rs1 + offset = rs2', nextPc: SEQ, store: { address: LOAD_ADDRESS, size: 4, value: 'rs2v' } },
  // 2.4 Integer computational, register-immediate: the I-immediate sign-extended; SLTIU compares
  // it as unsigned after sign extension; the shifts take the amount from ir[24:20].
  { mnemonic: 'addi', section: '2.4', says: 'rd = rs1 + imm (overflow ignored)', nextPc: SEQ, rd: 'rs1v + imm' },
  { mnemonic: 'slti', section: '2.4', says: 'rd = 1 if rs1 < imm signed, else 0', nextPc: SEQ, rd: 'zext(rs1v <s imm, 32)' },
  { mnemonic: 'sltiu', section: '2.4', says: 'rd = 1 if rs1 < imm unsigned, else 0', nextPc: SEQ, rd: 'zext(rs1v < imm, 32)' },
  { mnemonic: 'xori', section: '2.4', says: 'rd = rs1 xor imm', nextPc: SEQ, rd: 'rs1v ^ imm' },
  { mnemonic: 'ori', section: '2.4', says: 'rd = rs1 or imm', nextPc: SEQ, rd: 'rs1v | imm' },
  { mnemonic: 'andi', section: '2.4', says: 'rd = rs1 and imm', nextPc: SEQ, rd: 'rs1v & imm' },
  { mnemonic: 'slli', section: '2.4', says: 'rd = rs1 shifted left by shamt (ir[24:20])', nextPc: SEQ, rd: 'rs1v << ir[24:20]' },
  { mnemonic: 'srli', section: '2.4', says: 'rd = rs1 shifted right logically by shamt', nextPc: SEQ, rd: 'rs1v >> ir[24:20]' },
  { mnemonic: 'srai', section: '2.4', says: 'rd = rs1 shifted right arithmetically by shamt', nextPc: SEQ, rd: 'rs1v >>> ir[24:20]' },
  // 2.4 Integer computational, register-register: shifts use the low 5 bits of rs2.
  { mnemonic: 'add', section: '2.4', says: 'rd = rs1 + rs2 (overflow ignored)', nextPc: SEQ, rd: 'rs1v + rs2v' },
  { mnemonic: 'sub', section: '2.4', says: 'rd = rs1 − rs2 (overflow ignored)', nextPc: SEQ, rd: 'rs1v - rs2v' },
  { mnemonic: 'sll', section: '2.4', says: 'rd = rs1 shifted left by rs2[4:0]', nextPc: SEQ, rd: 'rs1v << rs2v[4:0]' },
  { mnemonic: 'slt', section: '2.4', says: 'rd = 1 if rs1 < rs2 signed, else 0', nextPc: SEQ, rd: 'zext(rs1v <s rs2v, 32)' },
  { mnemonic: 'sltu', section: '2.4', says: 'rd = 1 if rs1 < rs2 unsigned, else 0', nextPc: SEQ, rd: 'zext(rs1v < rs2v, 32)' },
  { mnemonic: 'xor', section: '2.4', says: 'rd = rs1 xor rs2', nextPc: SEQ, rd: 'rs1v ^ rs2v' },
  { mnemonic: 'srl', section: '2.4', says: 'rd = rs1 shifted right logically by rs2[4:0]', nextPc: SEQ, rd: 'rs1v >> rs2v[4:0]' },
  { mnemonic: 'sra', section: '2.4', says: 'rd = rs1 shifted right arithmetically by rs2[4:0]', nextPc: SEQ, rd: 'rs1v >>> rs2v[4:0]' },
  { mnemonic: 'or', section: '2.4', says: 'rd = rs1 or rs2', nextPc: SEQ, rd: 'rs1v | rs2v' },
  { mnemonic: 'and', section: '2.4', says: 'rd = rs1 and rs2', nextPc: SEQ, rd: 'rs1v & rs2v' },
  // 2.7 Memory ordering: on one hart that performs its accesses in program order, FENCE changes
  // no architectural state (the reference interpreter treats it so; common practice, no source).
  { mnemonic: 'fence', section: '2.7', says: 'orders memory accesses; no register or memory changes', nextPc: SEQ, special: 'fence' },
  // 2.8 Environment call and breakpoint: control passes to the execution environment.
  { mnemonic: 'ecall', section: '2.8', says: 'a service request to the execution environment', special: 'environment-call' },
  { mnemonic: 'ebreak', section: '2.8', says: 'returns control to a debugging environment', special: 'breakpoint' },
];

// ---- The parsed form.

/** A name a row defines (imm, addr, target, taken) and its tree. */
export interface Definition {
  readonly name: (typeof DEFINED_NAMES)[number]['name'];
  readonly expr: Expr;
}

/** A row as checked trees. A load's and a store's `address` is the tree of the definition `addr`. */
export interface Effect extends EffectFields<Expr> {
  /** The names the row uses that it defines, in the order of DEFINED_NAMES; each uses only the inputs and earlier ones. */
  readonly definitions: readonly Definition[];
}

/** A problem of one row: the field, its text, and what the parser or checker said. */
export interface SemanticsProblem {
  readonly mnemonic: string;
  readonly field: string;
  readonly text: string;
  readonly diagnostics: readonly Diagnostic[];
}

/** A row read: its effect when every expression checks, else its problems. */
export interface ParsedRow {
  readonly effect?: Effect;
  readonly problems: SemanticsProblem[];
}

/** The width each field must have. */
const WIDTH = { nextPc: 32, rd: 32, misaligned: 1 } as const;

/**
 * Reads one row: parses every text and checks it in the row's scope (the inputs and the names
 * defined before it) at the width its place needs. Problems: a text that does not parse or
 * check, a mnemonic rv32i.ts does not have, an rd value on an instruction that writes no
 * register or none on one that does.
 */
export function parseSemanticsRow(row: SemanticsRow): ParsedRow {
  const problems: SemanticsProblem[] = [];
  const spec = instructionByMnemonic(row.mnemonic);
  if (!spec) return { problems: [{ mnemonic: row.mnemonic, field: 'mnemonic', text: row.mnemonic, diagnostics: [] }] };
  const known = new Map(SEMANTICS_INPUTS);
  let scope: Scope = scopeOf(known);
  const tree = (field: string, text: string, width: number): Expr | undefined => {
    const parsed = parseExpression(text, 0);
    if (!parsed.expr) {
      problems.push({ mnemonic: row.mnemonic, field, text, diagnostics: parsed.diagnostics });
      return undefined;
    }
    const checked = checkExpression(parsed.expr, scope, width);
    if (checked.diagnostics.length) problems.push({ mnemonic: row.mnemonic, field, text, diagnostics: checked.diagnostics });
    return checked.diagnostics.length ? undefined : parsed.expr;
  };
  const definitions: Definition[] = [];
  const texts: Record<Definition['name'], string | undefined> = {
    imm: spec.format === 'R' ? undefined : IMMEDIATES[spec.format],
    addr: row.load?.address ?? row.store?.address,
    target: row.target,
    taken: row.taken,
  };
  for (const { name, width } of DEFINED_NAMES) {
    const text = texts[name];
    if (text === undefined) continue;
    const expr = tree(name, text, width);
    if (expr) definitions.push({ name, expr });
    known.set(name, { width });
    scope = scopeOf(known);
  }
  const addr = definitions.find((d) => d.name === 'addr')?.expr;
  const nextPc = row.nextPc === undefined ? undefined : tree('nextPc', row.nextPc, WIDTH.nextPc);
  const rd = row.rd === undefined ? undefined : tree('rd', row.rd, WIDTH.rd);
  const misaligned = row.misaligned === undefined ? undefined : tree('misaligned', row.misaligned, WIDTH.misaligned);
  const storeValue = row.store === undefined ? undefined : tree('store.value', row.store.value, 8 * row.store.size);
  if (row.rd !== undefined && !spec.writesRd) problems.push({ mnemonic: row.mnemonic, field: 'rd', text: row.rd, diagnostics: [] });
  if (row.rd === undefined && spec.writesRd) problems.push({ mnemonic: row.mnemonic, field: 'rd', text: '(missing)', diagnostics: [] });
  if (problems.length) return { problems };
  const effect: Effect = {
    mnemonic: row.mnemonic,
    section: row.section,
    says: row.says,
    definitions: usedDefinitions(definitions, [nextPc, rd, misaligned, storeValue]),
    ...(nextPc && { nextPc }),
    ...(rd && { rd }),
    ...(row.load && { load: { address: addr!, size: row.load.size, signed: row.load.signed } }),
    ...(row.store && { store: { address: addr!, size: row.store.size, value: storeValue! } }),
    ...(misaligned && { misaligned }),
    ...(row.special && { special: row.special }),
  };
  return { effect, problems };
}

/** The definitions some tree of the row uses (a shift-immediate's format defines imm, but SLLI reads ir[24:20]). */
function usedDefinitions(definitions: readonly Definition[], results: readonly (Expr | undefined)[]): Definition[] {
  const used = new Set(results.flatMap((e) => (e ? [...namesUsed(e)] : [])));
  const kept: Definition[] = [];
  for (const d of [...definitions].reverse()) {
    if (!used.has(d.name) && d.name !== 'addr') continue;
    kept.unshift(d);
    for (const name of namesUsed(d.expr)) used.add(name);
  }
  return kept;
}

let parsedRows: Map<string, ParsedRow> | undefined;

function parsedTable(): Map<string, ParsedRow> {
  parsedRows ??= new Map(SEMANTICS.map((row) => [row.mnemonic, parseSemanticsRow(row)]));
  return parsedRows;
}

/**
 * Every problem of the table: a row whose text does not parse or width-check, a row for a
 * mnemonic rv32i.ts does not have or missing for one it has, an rd value on an instruction that
 * writes no register or none on one that does. Empty when the table is sound (a test keeps it so).
 */
export function semanticsProblems(): SemanticsProblem[] {
  const problems = [...parsedTable().values()].flatMap((p) => p.problems);
  const rows = new Set(SEMANTICS.map((r) => r.mnemonic));
  for (const spec of RV32I_INSTRUCTIONS) {
    if (!rows.has(spec.mnemonic)) problems.push({ mnemonic: spec.mnemonic, field: 'row', text: '(missing)', diagnostics: [] });
  }
  if (rows.size !== SEMANTICS.length) problems.push({ mnemonic: '(table)', field: 'row', text: 'a mnemonic has two rows', diagnostics: [] });
  return problems;
}

/** The checked trees of `mnemonic`'s row (lower case, as in rv32i.ts). Throws on a mnemonic without a sound row: the table is constant, so that is a bug. */
export function effectOf(mnemonic: string): Effect {
  const parsed = parsedTable().get(mnemonic.toLowerCase());
  if (!parsed?.effect) {
    const first = parsed?.problems[0];
    const why = first ? `${first.field} \`${first.text}\`${first.diagnostics[0] ? `: ${first.diagnostics[0].message}` : ''}` : 'no row';
    throw new Error(`RV32I semantics of "${mnemonic}": ${why}`);
  }
  return parsed.effect;
}

// ---- Running an effect (the definition's meaning, with the expression module's evaluator).

/** The architectural inputs of one instruction. Values are unsigned 32-bit numbers. */
export interface EffectInputs {
  readonly pc: number;
  readonly ir: number;
  readonly rs1v: number;
  readonly rs2v: number;
  /** The byte at a 32-bit address. */
  readonly readByte: (address: number) => number;
}

/** What an effect computes on given inputs; values unsigned. */
export interface EffectOutcome {
  /** Every defined name's value (imm, addr, target, taken). */
  readonly defined: ReadonlyMap<string, bigint>;
  /** True when the instruction raises instruction-address-misaligned and does not retire. */
  readonly misaligned: boolean;
  readonly nextPc?: bigint;
  readonly rd?: bigint;
  readonly store?: { readonly address: bigint; readonly size: 1 | 2 | 4; readonly value: bigint };
  readonly load?: { readonly address: bigint; readonly size: 1 | 2 | 4; readonly signed: boolean };
  /** The byte addresses the expressions read, in order of reading. */
  readonly bytesRead: readonly number[];
}

/** Evaluates every expression of `effect` on `inputs` with the expression module's reference evaluator. */
export function evaluateEffect(effect: Effect, inputs: EffectInputs): EffectOutcome {
  const values = new Map<string, bigint>([
    ['pc', BigInt(inputs.pc >>> 0)],
    ['ir', BigInt(inputs.ir >>> 0)],
    ['rs1v', BigInt(inputs.rs1v >>> 0)],
    ['rs2v', BigInt(inputs.rs2v >>> 0)],
  ]);
  const widths = new Map<string, number>([...SEMANTICS_INPUTS].map(([name, info]) => [name, info.width]));
  for (const { name, width } of DEFINED_NAMES) widths.set(name, width);
  const bytesRead: number[] = [];
  const options = {
    elements: (name: string) => SEMANTICS_INPUTS.get(name)?.elements,
    element: (_array: string, address: number) => {
      bytesRead.push(address);
      return inputs.readByte(address) & 0xff;
    },
  };
  const run = (expr: Expr) =>
    evaluate(
      expr,
      (name) => values.get(name) ?? 0n,
      (name) => widths.get(name) ?? 32,
      options,
    );
  for (const d of effect.definitions) values.set(d.name, run(d.expr));
  const defined = new Map([...values].filter(([name]) => !SEMANTICS_INPUTS.has(name)));
  const misaligned = effect.misaligned !== undefined && run(effect.misaligned) === 1n;
  return {
    defined,
    misaligned,
    ...(effect.nextPc && { nextPc: run(effect.nextPc) }),
    ...(effect.rd && { rd: run(effect.rd) }),
    ...(effect.store && { store: { address: values.get('addr')!, size: effect.store.size, value: run(effect.store.value) } }),
    ...(effect.load && { load: { address: values.get('addr')!, size: effect.load.size, signed: effect.load.signed } }),
    bytesRead,
  };
}

// ---- Printing (docs/semantics.md and hover).

/** The row of `mnemonic` as `name = expression` lines, printed back from the checked trees. */
export function describeEffect(effect: Effect): string[] {
  const lines = effect.definitions.map((d) => `${d.name} = ${formatExpression(d.expr)}`);
  if (effect.load) {
    const extension = effect.load.size === 4 ? '' : effect.load.signed ? ', sign-extended' : ', zero-extended';
    lines.push(`load ${effect.load.size} byte${effect.load.size > 1 ? 's' : ''} at addr${extension}`);
  }
  if (effect.store) lines.push(`store ${effect.store.size} byte${effect.store.size > 1 ? 's' : ''} at addr = ${formatExpression(effect.store.value)}`);
  if (effect.rd) lines.push(`rd = ${formatExpression(effect.rd)}`);
  if (effect.nextPc) lines.push(`next pc = ${formatExpression(effect.nextPc)}`);
  if (effect.misaligned) lines.push(`does not retire (instruction-address-misaligned) when ${formatExpression(effect.misaligned)}`);
  if (effect.special === 'environment-call') lines.push('environment call: the execution environment acts');
  if (effect.special === 'breakpoint') lines.push('breakpoint: control passes to the debugger');
  if (effect.special === 'fence') lines.push('fence: no register or memory changes');
  return lines;
}
