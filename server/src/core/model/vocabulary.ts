// What each built-in part kind understands: the value names a field controlling it may use
// (their meaning is fixed; their codes are the user's), its ports, and the instruction-bit
// names the notation accepts as address inputs.
import type { InputVar, PartKind, StrobeKind } from './types';

/** Operations of the ALU part: the RV32I integer operations plus two pass-throughs. */
export const aluOperations = ['add', 'sub', 'sll', 'slt', 'sltu', 'xor', 'srl', 'sra', 'or', 'and', 'passa', 'passb'] as const;
/** Immediate formats of the RISC-V base ISA (spec ch. 2.3). */
export const immediateFormats = ['i', 's', 'b', 'u', 'j'] as const;
/** Memory access sizes: byte, halfword, word; u = zero-extended on read. */
export const memorySizes = ['byte', 'half', 'word', 'ubyte', 'uhalf'] as const;
/** Branch conditions of RV32I. */
export const compareConditions = ['eq', 'ne', 'lt', 'ge', 'ltu', 'geu'] as const;

export const partKinds: PartKind[] = ['regfile', 'register', 'counter', 'instruction', 'immediate', 'alu', 'compare', 'memory', 'constant'];
export const strobeKinds: StrobeKind[] = ['enable', 'read', 'write', 'clock', 'count', 'end', 'trap'];

/** The value names a field controlling this kind of part must use, or undefined if no field may. */
export function controlVocabulary(kind: PartKind): readonly string[] | undefined {
  switch (kind) {
    case 'alu':
      return aluOperations;
    case 'immediate':
      return immediateFormats;
    case 'memory':
      return memorySizes;
    case 'compare':
      return compareConditions;
    default:
      return undefined;
  }
}

export const partKindDescriptions: Record<PartKind, string> = {
  regfile: 'register file: 32 registers selected by the instruction\'s rs1, rs2 and rd fields',
  register: 'register: loads a bus at the closing edge, can drive a bus',
  counter: 'counter: a register that can also count up by its increment',
  instruction: 'instruction register: its bits feed the address lines, register selects and immediate generator',
  immediate: 'immediate generator: sign-extended I/S/B/U/J immediate of the instruction',
  alu: 'ALU: combines its two operand buses',
  compare: 'comparator: tests its two operand buses and latches a flag',
  memory: 'memory port: reads and writes bytes, halfwords and words',
  constant: 'constant source: a fixed value',
  custom: 'a part of a kind this table declares (`kind`); hover the kind for its definition',
};

export const strobeKindDescriptions: Record<StrobeKind, string> = {
  enable: 'output enable: the part drives the bus for the whole step',
  read: 'memory read: memory data drives the bus for the whole step',
  write: 'memory write: the bus is written to memory at the closing edge',
  clock: 'clock: the part loads at the step\'s closing edge',
  count: 'count: the counter adds its increment at the closing edge',
  end: 'end of instruction: the step counter returns to 0 after this step',
  trap: 'trap: hands the instruction to the environment (monitor or simulator), for ecall and ebreak',
};

/** Named slices of the instruction word usable as address inputs, guards and map inputs (RV32I base formats). */
export const instructionFields: Record<string, InputVar & { kind: 'ir' }> = {
  opcode: { kind: 'ir', hi: 6, lo: 2 },
  funct3: { kind: 'ir', hi: 14, lo: 12 },
  f7b5: { kind: 'ir', hi: 30, lo: 30 },
  funct7: { kind: 'ir', hi: 31, lo: 25 },
};

export function inputWidth(input: InputVar, stepBits = 0): number {
  if (input.kind === 'ir') return input.hi - input.lo + 1;
  if (input.kind === 'flag') return 1;
  return stepBits;
}

export function sameInput(a: InputVar, b: InputVar): boolean {
  if (a.kind === 'ir' && b.kind === 'ir') return a.hi === b.hi && a.lo === b.lo;
  if (a.kind === 'flag' && b.kind === 'flag') return a.name === b.name;
  return a.kind === b.kind;
}
