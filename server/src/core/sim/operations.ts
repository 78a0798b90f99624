// What the built-in combinational parts compute, as small numeric functions the simulator's hot
// loop calls: the ALU functions, the immediate generator's five formats, the comparator's
// conditions and the memory port's access sizes. Each part's operation is an enum number here so
// a micro-op can hold it in a typed array; the names are the notation's value names
// (model/vocabulary.ts). Semantics follow the RISC-V Unprivileged ISA 20191213, chapter 2:
// shifts use the low 5 bits of the right operand, slt/sltu compare signed/unsigned, immediates
// are sign-extended from instruction bit 31 (section 2.3).
//
// Deliberately not here: which part drives which bus, timing, or undefined values (the
// simulator tracks those); every function here gets defined 32-bit inputs.
import { immB, immI, immJ, immS, immU } from '../isa/rv32i';
import { aluOperations, compareConditions, immediateFormats, memorySizes } from '../model/vocabulary';

/** ALU function numbers: the index in `aluOperations` (add sub sll slt sltu xor srl sra or and passa passb); -1 for other names. */
export function aluFunctionNumber(name: string): number {
  return (aluOperations as readonly string[]).indexOf(name);
}

/** One ALU result as a signed 32-bit number; `fn` from aluFunctionNumber. */
export function aluCompute(fn: number, a: number, b: number): number {
  switch (fn) {
    case 0: // add
      return (a + b) | 0;
    case 1: // sub
      return (a - b) | 0;
    case 2: // sll
      return a << (b & 31);
    case 3: // slt
      return (a | 0) < (b | 0) ? 1 : 0;
    case 4: // sltu
      return a >>> 0 < b >>> 0 ? 1 : 0;
    case 5: // xor
      return a ^ b;
    case 6: // srl
      return a >>> (b & 31) | 0;
    case 7: // sra
      return a >> (b & 31);
    case 8: // or
      return a | b;
    case 9: // and
      return a & b;
    case 10: // passa
      return a | 0;
    case 11: // passb
      return b | 0;
    default:
      return 0;
  }
}

/** Which operands an ALU function looks at: 1 = a, 2 = b, 3 = both (an undefined operand it ignores does no harm). */
export function aluOperandsUsed(fn: number): number {
  if (fn === 10) return 1;
  if (fn === 11) return 2;
  return 3;
}

/** Immediate format numbers: index in `immediateFormats` (i s b u j). */
export function immediateFormatNumber(name: string): number {
  return (immediateFormats as readonly string[]).indexOf(name);
}

/** The sign-extended immediate of `word` in format `format` (RISC-V Unprivileged ISA 2.3). */
export function immediateOf(format: number, word: number): number {
  switch (format) {
    case 0:
      return immI(word);
    case 1:
      return immS(word);
    case 2:
      return immB(word);
    case 3:
      return immU(word);
    case 4:
      return immJ(word);
    default:
      return 0;
  }
}

/** Comparator condition numbers: index in `compareConditions` (eq ne lt ge ltu geu). */
export const CONDITION_FROM_FUNCT3 = 6;
export function conditionNumber(name: string): number {
  return (compareConditions as readonly string[]).indexOf(name);
}

/**
 * The condition a comparator wired with `cond=funct3` tests: the RV32I branch encoding
 * (000 beq, 001 bne, 100 blt, 101 bge, 110 bltu, 111 bgeu; spec 2.5). funct3 010 and 011 name no
 * branch: -1 (the simulator latches 0 then, and the lock-step reference calls the word illegal).
 */
export function conditionOfFunct3(funct3: number): number {
  switch (funct3 & 7) {
    case 0:
      return 0;
    case 1:
      return 1;
    case 4:
      return 2;
    case 5:
      return 3;
    case 6:
      return 4;
    case 7:
      return 5;
    default:
      return -1;
  }
}

/** Whether condition `cond` holds for operands a and b (1 or 0). */
export function compareHolds(cond: number, a: number, b: number): number {
  switch (cond) {
    case 0:
      return a === b ? 1 : 0;
    case 1:
      return a !== b ? 1 : 0;
    case 2:
      return (a | 0) < (b | 0) ? 1 : 0;
    case 3:
      return (a | 0) >= (b | 0) ? 1 : 0;
    case 4:
      return a >>> 0 < b >>> 0 ? 1 : 0;
    case 5:
      return a >>> 0 >= b >>> 0 ? 1 : 0;
    default:
      return 0;
  }
}

/** Memory size numbers: index in `memorySizes` (byte half word ubyte uhalf). */
export const SIZE_WORD = 2;
export function memorySizeNumber(name: string): number {
  return (memorySizes as readonly string[]).indexOf(name);
}

/** Bytes a size moves: 1, 2 or 4. */
export function sizeBytes(size: number): 1 | 2 | 4 {
  return size === 0 || size === 3 ? 1 : size === 1 || size === 4 ? 2 : 4;
}
