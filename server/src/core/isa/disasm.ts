// Disassembler for single RV32I instruction words. The text follows the conventions of GNU
// objdump with `-M no-aliases,numeric`: real mnemonics only (no `li`, `mv`, `ret`), registers as
// x0..x31, shift amounts and upper immediates in hex, other immediates in signed decimal,
// memory operands as `offset(base)`. Branch and jump targets are absolute hex addresses when the
// caller gives the instruction's pc, otherwise GNU-as relative syntax `.+16` / `.-16`, which the
// assembler accepts back. Words that are not RV32I instructions become `.word 0x........`.
//
// Deliberately not here: symbol lookup for targets (callers that have an ELF symbol table can
// append their own `<label>`), pseudo-instruction folding, and any extension beyond RV32I.
//
// Public API:
//   disassemble(word, pc?, options?) -> string
//   disassembleParts(word, pc?, options?) -> { spec, mnemonic, operands } (spec null when illegal)
//   registerName(index, style) -> 'x5' or 't0'
//   ABI_REGISTER_NAMES -> the psABI names x0..x31 map to
//   hex32(value) -> eight lower-case hex digits, for listings and trace displays
import { immB, immI, immJ, immS, matchInstruction, rdField, rs1Field, rs2Field, type InstructionSpec } from './rv32i';

export type RegisterNameStyle = 'numeric' | 'abi';

export interface DisassembleOptions {
  /** 'numeric' (default) prints x0..x31; 'abi' prints zero, ra, sp, ... as the psABI names them. */
  registerNames?: RegisterNameStyle;
}

/** Register names from the RISC-V ELF psABI specification, "Integer Register Convention". */
export const ABI_REGISTER_NAMES: readonly string[] = [
  'zero', 'ra', 'sp', 'gp', 'tp', 't0', 't1', 't2', 's0', 's1', 'a0', 'a1', 'a2', 'a3', 'a4', 'a5',
  'a6', 'a7', 's2', 's3', 's4', 's5', 's6', 's7', 's8', 's9', 's10', 's11', 't3', 't4', 't5', 't6',
];

export function registerName(index: number, style: RegisterNameStyle = 'numeric'): string {
  return style === 'abi' ? ABI_REGISTER_NAMES[index]! : `x${index}`;
}

function hex(value: number): string {
  return `0x${(value >>> 0).toString(16)}`;
}

/** Eight-digit lower-case hex of a 32-bit value, without prefix. */
export function hex32(value: number): string {
  return (value >>> 0).toString(16).padStart(8, '0');
}

function target(pc: number | undefined, offset: number): string {
  if (pc === undefined) return offset < 0 ? `.${offset}` : `.+${offset}`;
  return hex((pc + offset) >>> 0);
}

// FENCE pred/succ bits, from bit 3 down: device input, device output, memory reads, memory writes (spec 2.7).
function fenceSet(mask: number): string {
  let text = '';
  if (mask & 8) text += 'i';
  if (mask & 4) text += 'o';
  if (mask & 2) text += 'r';
  if (mask & 1) text += 'w';
  return text === '' ? '0' : text;
}

export interface DisassembledParts {
  /** Table entry, or null when the word is not a legal RV32I instruction. */
  readonly spec: InstructionSpec | null;
  readonly mnemonic: string;
  readonly operands: string;
}

export function disassembleParts(word: number, pc?: number, options: DisassembleOptions = {}): DisassembledParts {
  const spec = matchInstruction(word);
  if (!spec) return { spec: null, mnemonic: '.word', operands: `0x${hex32(word)}` };
  const style = options.registerNames ?? 'numeric';
  const rd = registerName(rdField(word), style);
  const rs1 = registerName(rs1Field(word), style);
  const rs2 = registerName(rs2Field(word), style);
  const parts = (operands: string, mnemonic: string = spec.mnemonic): DisassembledParts => ({ spec, mnemonic, operands });
  switch (spec.major) {
    case 'LUI':
    case 'AUIPC':
      return parts(`${rd},${hex(word >>> 12)}`);
    case 'JAL':
      return parts(`${rd},${target(pc, immJ(word))}`);
    case 'JALR':
    case 'LOAD':
      return parts(`${rd},${immI(word)}(${rs1})`);
    case 'BRANCH':
      return parts(`${rs1},${rs2},${target(pc, immB(word))}`);
    case 'STORE':
      return parts(`${rs2},${immS(word)}(${rs1})`);
    case 'OP-IMM':
      if (spec.funct7 !== null) return parts(`${rd},${rs1},${hex(rs2Field(word))}`);
      return parts(`${rd},${rs1},${immI(word)}`);
    case 'OP':
      return parts(`${rd},${rs1},${rs2}`);
    case 'MISC-MEM': {
      const fm = (word >>> 28) & 0xf;
      const pred = (word >>> 24) & 0xf;
      const succ = (word >>> 20) & 0xf;
      // FENCE.TSO is FENCE with fm=1000 and pred=succ=RW (spec 2.7).
      if (fm === 0b1000 && pred === 0b0011 && succ === 0b0011) return parts('', 'fence.tso');
      return parts(`${fenceSet(pred)},${fenceSet(succ)}`);
    }
    case 'SYSTEM':
      return parts('');
  }
}

/** One line of assembly for `word`; see the module comment for the conventions. */
export function disassemble(word: number, pc?: number, options: DisassembleOptions = {}): string {
  const { mnemonic, operands } = disassembleParts(word, pc, options);
  return operands === '' ? mnemonic : `${mnemonic} ${operands}`;
}
