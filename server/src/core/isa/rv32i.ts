// The RV32I base instruction set as data: the 40 instructions with their format, major opcode
// and function fields, field extractors, the five immediate decoders, a matcher from a 32-bit
// word to its table entry, and a small encoder. Everything else in the ISA layer (disassembler,
// reference interpreter) and the microcode tools build on this table.
//
// Source: The RISC-V Instruction Set Manual, Volume I: Unprivileged ISA, version 20191213,
// chapter 2 (RV32I base integer instruction set) and chapter 24 (RV32/64G instruction set
// listings, table "RV32I Base Instruction Set").
//
// This module deliberately is not an assembler (no text parsing, no pseudo-instructions, no
// labels) and knows nothing about extensions: FENCE.I (Zifencei), the CSR instructions (Zicsr),
// M, A, F, D and C encodings are all illegal here, as they are on a bare RV32I processor.

/** The six base instruction formats of chapter 2.2 (B and J are the immediate variants of S and U). */
export type InstructionFormat = 'R' | 'I' | 'S' | 'B' | 'U' | 'J';

/** Names of the major opcodes used by RV32I (spec table "RISC-V base opcode map"). */
export type MajorOpcodeName =
  | 'LUI'
  | 'AUIPC'
  | 'JAL'
  | 'JALR'
  | 'BRANCH'
  | 'LOAD'
  | 'STORE'
  | 'OP-IMM'
  | 'OP'
  | 'MISC-MEM'
  | 'SYSTEM';

export interface MajorOpcode {
  readonly name: MajorOpcodeName;
  /** The 7-bit value of inst[6:0]; the low two bits are always 11 for 32-bit instructions. */
  readonly opcode: number;
  /** Format every instruction of this major opcode uses. */
  readonly format: InstructionFormat;
}

/** The 11 major opcodes of RV32I with their 7-bit values (inst[6:0]). */
export const MAJOR_OPCODES: readonly MajorOpcode[] = [
  { name: 'LUI', opcode: 0b0110111, format: 'U' },
  { name: 'AUIPC', opcode: 0b0010111, format: 'U' },
  { name: 'JAL', opcode: 0b1101111, format: 'J' },
  { name: 'JALR', opcode: 0b1100111, format: 'I' },
  { name: 'BRANCH', opcode: 0b1100011, format: 'B' },
  { name: 'LOAD', opcode: 0b0000011, format: 'I' },
  { name: 'STORE', opcode: 0b0100011, format: 'S' },
  { name: 'OP-IMM', opcode: 0b0010011, format: 'I' },
  { name: 'OP', opcode: 0b0110011, format: 'R' },
  { name: 'MISC-MEM', opcode: 0b0001111, format: 'I' },
  { name: 'SYSTEM', opcode: 0b1110011, format: 'I' },
];

/**
 * Formats that carry an rd field in inst[11:7]. S and B use those bits for immediate bits
 * instead. Note that FENCE, ECALL and EBREAK are I-type and so have the field, but it is
 * ignored (FENCE) or must be zero (ECALL, EBREAK).
 */
export const FORMATS_WITH_RD: ReadonlySet<InstructionFormat> = new Set<InstructionFormat>(['R', 'I', 'U', 'J']);

/** Formats that read rs1 (inst[19:15]). */
export const FORMATS_WITH_RS1: ReadonlySet<InstructionFormat> = new Set<InstructionFormat>(['R', 'I', 'S', 'B']);

/** Formats that read rs2 (inst[24:20]). */
export const FORMATS_WITH_RS2: ReadonlySet<InstructionFormat> = new Set<InstructionFormat>(['R', 'S', 'B']);

export interface InstructionSpec {
  /** Lower-case assembler mnemonic, as GNU as writes it. */
  readonly mnemonic: string;
  readonly format: InstructionFormat;
  readonly major: MajorOpcodeName;
  /** 7-bit major opcode, inst[6:0]. */
  readonly opcode: number;
  /** inst[14:12], or null when the instruction has no funct3 (LUI, AUIPC, JAL). */
  readonly funct3: number | null;
  /**
   * inst[31:25] when it is fixed: the funct7 of OP instructions, and for SLLI/SRLI/SRAI the
   * imm[11:5] pattern (0000000 or 0100000; RV32I has no shamt[5]). Null otherwise.
   */
  readonly funct7: number | null;
  /** The fixed 12-bit immediate of ECALL (0) and EBREAK (1); null for everything else. */
  readonly imm12: number | null;
  /** True when the instruction writes rd (FENCE, ECALL and EBREAK have the field but do not). */
  readonly writesRd: boolean;
  /** Position in RV32I_INSTRUCTIONS (the order of the spec listing). */
  readonly index: number;
}

type SpecRow = [mnemonic: string, major: MajorOpcodeName, funct3: number | null, funct7: number | null, imm12: number | null];

// The rows follow the order of the chapter 24 RV32I listing.
const ROWS: SpecRow[] = [
  ['lui', 'LUI', null, null, null],
  ['auipc', 'AUIPC', null, null, null],
  ['jal', 'JAL', null, null, null],
  ['jalr', 'JALR', 0b000, null, null],
  ['beq', 'BRANCH', 0b000, null, null],
  ['bne', 'BRANCH', 0b001, null, null],
  ['blt', 'BRANCH', 0b100, null, null],
  ['bge', 'BRANCH', 0b101, null, null],
  ['bltu', 'BRANCH', 0b110, null, null],
  ['bgeu', 'BRANCH', 0b111, null, null],
  ['lb', 'LOAD', 0b000, null, null],
  ['lh', 'LOAD', 0b001, null, null],
  ['lw', 'LOAD', 0b010, null, null],
  ['lbu', 'LOAD', 0b100, null, null],
  ['lhu', 'LOAD', 0b101, null, null],
  ['sb', 'STORE', 0b000, null, null],
  ['sh', 'STORE', 0b001, null, null],
  ['sw', 'STORE', 0b010, null, null],
  ['addi', 'OP-IMM', 0b000, null, null],
  ['slti', 'OP-IMM', 0b010, null, null],
  ['sltiu', 'OP-IMM', 0b011, null, null],
  ['xori', 'OP-IMM', 0b100, null, null],
  ['ori', 'OP-IMM', 0b110, null, null],
  ['andi', 'OP-IMM', 0b111, null, null],
  ['slli', 'OP-IMM', 0b001, 0b0000000, null],
  ['srli', 'OP-IMM', 0b101, 0b0000000, null],
  ['srai', 'OP-IMM', 0b101, 0b0100000, null],
  ['add', 'OP', 0b000, 0b0000000, null],
  ['sub', 'OP', 0b000, 0b0100000, null],
  ['sll', 'OP', 0b001, 0b0000000, null],
  ['slt', 'OP', 0b010, 0b0000000, null],
  ['sltu', 'OP', 0b011, 0b0000000, null],
  ['xor', 'OP', 0b100, 0b0000000, null],
  ['srl', 'OP', 0b101, 0b0000000, null],
  ['sra', 'OP', 0b101, 0b0100000, null],
  ['or', 'OP', 0b110, 0b0000000, null],
  ['and', 'OP', 0b111, 0b0000000, null],
  ['fence', 'MISC-MEM', 0b000, null, null],
  ['ecall', 'SYSTEM', 0b000, null, 0],
  ['ebreak', 'SYSTEM', 0b000, null, 1],
];

const MAJOR_BY_NAME = new Map<MajorOpcodeName, MajorOpcode>(MAJOR_OPCODES.map((m) => [m.name, m]));

/** The 40 RV32I instructions in the order of the spec listing. */
export const RV32I_INSTRUCTIONS: readonly InstructionSpec[] = ROWS.map(([mnemonic, majorName, funct3, funct7, imm12], index) => {
  const major = MAJOR_BY_NAME.get(majorName)!;
  const writesRd = FORMATS_WITH_RD.has(major.format) && majorName !== 'MISC-MEM' && majorName !== 'SYSTEM';
  return Object.freeze({ mnemonic, format: major.format, major: majorName, opcode: major.opcode, funct3, funct7, imm12, writesRd, index });
});

const BY_MNEMONIC = new Map<string, InstructionSpec>(RV32I_INSTRUCTIONS.map((s) => [s.mnemonic, s]));

/** The table entry for a mnemonic (case-insensitive), or undefined. */
export function instructionByMnemonic(mnemonic: string): InstructionSpec | undefined {
  return BY_MNEMONIC.get(mnemonic.toLowerCase());
}

/** The major opcode whose 7-bit value is `opcode`, or undefined for opcodes RV32I does not use. */
export function majorOpcodeOf(opcode: number): MajorOpcode | undefined {
  return MAJOR_OPCODES.find((m) => m.opcode === opcode);
}

// ---- Field extractors (spec figure "RISC-V base instruction formats"). All take the word as any
// JavaScript number holding 32 bits (signed or unsigned) and return small non-negative integers.

/** inst[6:0]. */
export function opcodeField(word: number): number {
  return word & 0x7f;
}
/** inst[11:7]. */
export function rdField(word: number): number {
  return (word >>> 7) & 0x1f;
}
/** inst[14:12]. */
export function funct3Field(word: number): number {
  return (word >>> 12) & 0x7;
}
/** inst[19:15]. */
export function rs1Field(word: number): number {
  return (word >>> 15) & 0x1f;
}
/** inst[24:20]; for the immediate shifts this is the shift amount. */
export function rs2Field(word: number): number {
  return (word >>> 20) & 0x1f;
}
/** inst[31:25]. */
export function funct7Field(word: number): number {
  return (word >>> 25) & 0x7f;
}
/**
 * inst[30], the bit that tells SUB from ADD, SRA from SRL and SRAI from SRLI. For OP-IMM it is
 * part of the immediate of every instruction except the shifts: `addi x1,x0,-5` has it set.
 */
export function bit30Field(word: number): number {
  return (word >>> 30) & 1;
}

// ---- Immediates (spec section 2.3, "Immediate Encoding Variants"). All are sign-extended from
// inst[31] and returned as signed 32-bit integers.

/** I-immediate: inst[31:20]. */
export function immI(word: number): number {
  return word >> 20;
}
/** S-immediate: inst[31:25] then inst[11:7]. */
export function immS(word: number): number {
  return ((word >> 25) << 5) | ((word >>> 7) & 0x1f);
}
/** B-immediate: inst[31], inst[7], inst[30:25], inst[11:8], then a zero bit. */
export function immB(word: number): number {
  return ((word >> 31) << 12) | (((word >>> 7) & 1) << 11) | (((word >>> 25) & 0x3f) << 5) | (((word >>> 8) & 0xf) << 1);
}
/** U-immediate: inst[31:12] followed by twelve zero bits. */
export function immU(word: number): number {
  // A bitwise AND in JavaScript already yields a signed 32-bit result.
  return word & 0xfffff000;
}
/** J-immediate: inst[31], inst[19:12], inst[20], inst[30:21], then a zero bit. */
export function immJ(word: number): number {
  return ((word >> 31) << 20) | (word & 0x000ff000) | (((word >>> 20) & 1) << 11) | (((word >>> 21) & 0x3ff) << 1);
}

/** The immediate of `word` as its instruction's format defines it (0 for R-type). */
export function immediateOf(spec: InstructionSpec, word: number): number {
  switch (spec.format) {
    case 'I':
      return immI(word);
    case 'S':
      return immS(word);
    case 'B':
      return immB(word);
    case 'U':
      return immU(word);
    case 'J':
      return immJ(word);
    case 'R':
      return 0;
  }
}

/**
 * The table entry of a 32-bit instruction word, or null when the word is not a legal RV32I
 * instruction. Rules beyond opcode/funct3/funct7 come from chapter 2:
 * - the shift-immediate instructions need inst[31:25] exactly 0000000 or 0100000 (on RV32 a set
 *   inst[25], i.e. shamt[5], is reserved);
 * - FENCE is matched on opcode and funct3 alone: "base implementations shall ignore" the rd,
 *   rs1 and fm fields and treat reserved fm/pred/succ combinations as a normal fence (2.7);
 * - ECALL and EBREAK need rd, rs1 and funct3 zero and the exact 12-bit immediate.
 * Words whose low two bits are not 11 (compressed instructions) are illegal without the C extension.
 */
export function matchInstruction(word: number): InstructionSpec | null {
  const opcode = word & 0x7f;
  const funct3 = (word >>> 12) & 7;
  const funct7 = (word >>> 25) & 0x7f;
  const candidates = BY_OPCODE.get(opcode);
  if (!candidates) return null;
  for (const spec of candidates) {
    if (spec.funct3 !== null && spec.funct3 !== funct3) continue;
    if (spec.funct7 !== null && spec.funct7 !== funct7) continue;
    if (spec.imm12 !== null) {
      if ((word >>> 20) !== spec.imm12 || rs1Field(word) !== 0 || rdField(word) !== 0) continue;
    }
    return spec;
  }
  return null;
}

const BY_OPCODE = new Map<number, InstructionSpec[]>();
for (const spec of RV32I_INSTRUCTIONS) {
  const list = BY_OPCODE.get(spec.opcode) ?? [];
  list.push(spec);
  BY_OPCODE.set(spec.opcode, list);
}

/** All fields of a word at once, for displays and the lock-step comparison. */
export interface DecodedFields {
  readonly opcode: number;
  readonly rd: number;
  readonly funct3: number;
  readonly rs1: number;
  readonly rs2: number;
  readonly funct7: number;
  readonly bit30: number;
}

export function fieldsOf(word: number): DecodedFields {
  return {
    opcode: opcodeField(word),
    rd: rdField(word),
    funct3: funct3Field(word),
    rs1: rs1Field(word),
    rs2: rs2Field(word),
    funct7: funct7Field(word),
    bit30: bit30Field(word),
  };
}

// ---- Encoder: the inverse of the extractors, for tests and tools that build instruction words
// without going through an assembler.

export interface EncodeOperands {
  rd?: number;
  rs1?: number;
  rs2?: number;
  /** Signed immediate in bytes (branch/jump offsets, U-type: the full value with low 12 bits zero, or the 20-bit field via `immIsUpper20`). For shifts, the shift amount. For FENCE, ignored. */
  imm?: number;
  /** For LUI/AUIPC: `imm` is the 20-bit upper field as written in assembly (`lui x1,0x12345`). */
  immIsUpper20?: boolean;
  /** FENCE predecessor and successor sets, 4-bit masks i=8 o=4 r=2 w=1 (default 0b1111 each). */
  pred?: number;
  succ?: number;
}

export type EncodeResult = { ok: true; word: number } | { ok: false; error: string };

function checkRegister(name: string, value: number | undefined): string | null {
  if (value === undefined) return null;
  if (!Number.isInteger(value) || value < 0 || value > 31) return `${name} must be a register number 0..31, got ${value}`;
  return null;
}

/** Encodes one instruction; out-of-range operands give an error naming the operand and the range. */
export function encodeInstruction(mnemonic: string, operands: EncodeOperands = {}): EncodeResult {
  const spec = instructionByMnemonic(mnemonic);
  if (!spec) return { ok: false, error: `"${mnemonic}" is not an RV32I instruction` };
  for (const key of ['rd', 'rs1', 'rs2'] as const) {
    const problem = checkRegister(key, operands[key]);
    if (problem) return { ok: false, error: `${spec.mnemonic}: ${problem}` };
  }
  const rd = operands.rd ?? 0;
  const rs1 = operands.rs1 ?? 0;
  const rs2 = operands.rs2 ?? 0;
  const imm = operands.imm ?? 0;
  if (!Number.isInteger(imm)) return { ok: false, error: `${spec.mnemonic}: immediate must be an integer, got ${imm}` };
  const base = spec.opcode | ((spec.funct3 ?? 0) << 12);
  const range = (low: number, high: number, what: string): string | null =>
    imm < low || imm > high ? `${spec.mnemonic}: ${what} ${imm} is outside ${low}..${high}` : null;
  let problem: string | null = null;
  let word = 0;
  if (spec.major === 'OP-IMM' && spec.funct7 !== null) {
    problem = range(0, 31, 'shift amount');
    word = base | (rd << 7) | (rs1 << 15) | (imm << 20) | (spec.funct7 << 25);
  } else if (spec.major === 'MISC-MEM') {
    const pred = operands.pred ?? 0b1111;
    const succ = operands.succ ?? 0b1111;
    if (pred < 0 || pred > 15 || succ < 0 || succ > 15) problem = `${spec.mnemonic}: pred and succ are 4-bit masks`;
    word = base | (succ << 20) | (pred << 24);
  } else if (spec.imm12 !== null) {
    word = base | (spec.imm12 << 20);
  } else {
    switch (spec.format) {
      case 'R':
        word = base | (rd << 7) | (rs1 << 15) | (rs2 << 20) | (spec.funct7! << 25);
        break;
      case 'I':
        problem = range(-2048, 2047, 'immediate');
        word = base | (rd << 7) | (rs1 << 15) | ((imm & 0xfff) << 20);
        break;
      case 'S':
        problem = range(-2048, 2047, 'offset');
        word = base | ((imm & 0x1f) << 7) | (rs1 << 15) | (rs2 << 20) | (((imm >> 5) & 0x7f) << 25);
        break;
      case 'B':
        problem = range(-4096, 4094, 'branch offset') ?? (imm & 1 ? `${spec.mnemonic}: branch offset ${imm} must be even` : null);
        word =
          base |
          (((imm >> 11) & 1) << 7) |
          (((imm >> 1) & 0xf) << 8) |
          (rs1 << 15) |
          (rs2 << 20) |
          (((imm >> 5) & 0x3f) << 25) |
          (((imm >> 12) & 1) << 31);
        break;
      case 'U':
        if (operands.immIsUpper20) {
          problem = range(0, 0xfffff, 'upper immediate');
          word = base | (rd << 7) | ((imm & 0xfffff) << 12);
        } else {
          problem =
            range(-0x80000000, 0xffffffff, 'immediate') ?? (imm & 0xfff ? `${spec.mnemonic}: immediate ${imm} must have its low 12 bits zero` : null);
          word = base | (rd << 7) | (imm & 0xfffff000);
        }
        break;
      case 'J':
        problem = range(-(1 << 20), (1 << 20) - 2, 'jump offset') ?? (imm & 1 ? `${spec.mnemonic}: jump offset ${imm} must be even` : null);
        word = base | (rd << 7) | (imm & 0x000ff000) | (((imm >> 11) & 1) << 20) | (((imm >> 1) & 0x3ff) << 21) | (((imm >> 20) & 1) << 31);
        break;
    }
  }
  if (problem) return { ok: false, error: problem };
  return { ok: true, word: word >>> 0 };
}
