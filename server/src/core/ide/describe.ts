// Plain-words explanations the editor features share: what each part kind, strobe kind, value
// name, address input and keyword means, where a word bit lands (chip and data pin), and how
// hexadecimal per chip is written. Text only; it knows nothing of positions or of the protocol.
import type { Part, PartKind, Strobe, StrobeKind, WordLayout } from '../model/types';
import { partKindDescriptions, strobeKindDescriptions } from '../model/vocabulary';

export function partKindText(kind: PartKind): string {
  return partKindDescriptions[kind];
}

export function strobeKindText(kind: StrobeKind): string {
  return strobeKindDescriptions[kind];
}

/**
 * What each value name means to the part kind a field controls. ALU operations follow RV32I
 * semantics (RISC-V Unprivileged ISA 20191213, ch. 2.4); immediate formats ch. 2.3; memory
 * sizes and branch conditions ch. 2.6 and 2.5.
 */
const valueMeanings: Record<string, Record<string, string>> = {
  alu: {
    add: 'a + b (32-bit, wrapping)',
    sub: 'a − b (32-bit, wrapping)',
    sll: 'a shifted left by the low 5 bits of b',
    slt: '1 if a < b as signed numbers, else 0',
    sltu: '1 if a < b as unsigned numbers, else 0',
    xor: 'bitwise a XOR b',
    srl: 'a shifted right by the low 5 bits of b, zeros shifted in (logical)',
    sra: 'a shifted right by the low 5 bits of b, the sign bit copied in (arithmetic)',
    or: 'bitwise a OR b',
    and: 'bitwise a AND b',
    passa: 'a unchanged (operand bus A passed through)',
    passb: 'b unchanged (operand bus B passed through)',
  },
  immediate: {
    i: 'I format: instruction bits 31..20, sign-extended (loads, OP-IMM, JALR)',
    s: 'S format: bits 31..25 and 11..7, sign-extended (stores)',
    b: 'B format: a branch offset, bits 31, 7, 30..25, 11..8, times 2, sign-extended',
    u: 'U format: bits 31..12 in the upper 20 bits, low 12 bits zero (LUI, AUIPC)',
    j: 'J format: a jump offset, bits 31, 19..12, 20, 30..21, times 2, sign-extended (JAL)',
  },
  memory: {
    byte: 'one byte, sign-extended on read (lb, sb)',
    half: 'a halfword (2 bytes), sign-extended on read (lh, sh)',
    word: 'a word (4 bytes) (lw, sw)',
    ubyte: 'one byte, zero-extended on read (lbu)',
    uhalf: 'a halfword, zero-extended on read (lhu)',
  },
  compare: {
    eq: 'taken when a = b (beq)',
    ne: 'taken when a ≠ b (bne)',
    lt: 'taken when a < b as signed numbers (blt)',
    ge: 'taken when a ≥ b as signed numbers (bge)',
    ltu: 'taken when a < b as unsigned numbers (bltu)',
    geu: 'taken when a ≥ b as unsigned numbers (bgeu)',
  },
};

/** The meaning of a value name for a part kind, when the kind gives it one. */
export function valueMeaning(kind: PartKind | undefined, value: string): string | undefined {
  return kind ? valueMeanings[kind]?.[value] : undefined;
}

/** What the ROM bit of a strobe is when it is asserted, in words. */
export function activeLevelText(strobe: Strobe): string {
  return strobe.active === 'low'
    ? 'active low: the ROM bit is 0 when asserted and 1 when idle (typical for /OE and /WE inputs)'
    : 'active high: the ROM bit is 1 when asserted and 0 when idle';
}

/** The chip holding word bit `bitIndex` and its data pin within that chip (chip 0 holds the lowest bits). */
export function chipOfBit(layout: WordLayout, bitIndex: number): { chip: number; pin: number } | undefined {
  let first = 0;
  for (let chip = 0; chip < layout.chipWidths.length; chip++) {
    const width = layout.chipWidths[chip];
    if (bitIndex < first + width) return { chip, pin: bitIndex - first };
    first += width;
  }
  return undefined;
}

/** "chip 2, D5" or "chip 2, D0..D3", split where a range crosses chips; "no chip" beyond them. */
export function chipPinsText(layout: WordLayout, lo: number, hi: number): string {
  const pieces: string[] = [];
  let bit = lo;
  while (bit <= hi) {
    const at = chipOfBit(layout, bit);
    if (!at) {
      pieces.push(`bits ${bit}..${hi} on no chip (the chips hold fewer bits than the word)`);
      break;
    }
    let last = bit;
    while (last + 1 <= hi && chipOfBit(layout, last + 1)?.chip === at.chip) last++;
    const endPin = at.pin + (last - bit);
    pieces.push(endPin === at.pin ? `chip ${at.chip}, D${at.pin}` : `chip ${at.chip}, D${at.pin}..D${endPin}`);
    bit = last + 1;
  }
  return pieces.join(' and ');
}

/** The first bit of each chip and its width. */
export function chipSlices(layout: WordLayout): { chip: number; lo: number; width: number }[] {
  const slices: { chip: number; lo: number; width: number }[] = [];
  let lo = 0;
  layout.chipWidths.forEach((width, chip) => {
    slices.push({ chip, lo, width });
    lo += width;
  });
  return slices;
}

/** The value of `width` bits of a word (in 32-bit lanes) starting at bit `lo`. */
export function bitsOf(word: Uint32Array, lo: number, width: number): number {
  let value = 0;
  for (let i = width - 1; i >= 0; i--) {
    const bit = lo + i;
    const lane = bit >>> 5;
    value = value * 2 + (lane < word.length ? (word[lane] >>> (bit & 31)) & 1 : 0);
  }
  return value;
}

/** Hexadecimal of a chip's data, as many digits as its width needs, upper case. */
export function hexDigits(value: number, width: number): string {
  return value.toString(16).toUpperCase().padStart(Math.max(1, Math.ceil(width / 4)), '0');
}

/** Binary of a code in exactly `width` digits. */
export function binaryDigits(value: number, width: number): string {
  return value.toString(2).padStart(width, '0').slice(-width);
}

/** Per chip, the hexadecimal of its data lines in a word, chip 0 first. */
export function chipHex(layout: WordLayout, word: Uint32Array): string[] {
  return chipSlices(layout).map(({ lo, width }) => hexDigits(bitsOf(word, lo, width), width));
}

/** Address inputs the notation names, with the instruction bits they carry (RV32I base formats, ch. 2.2). */
export const addressInputTexts: Record<string, string> = {
  step: 'the step counter: which step of the instruction is running (its width is set by the `step` address lines)',
  opcode: 'instruction bits 6..2, the major opcode (bits 1..0 are always 11)',
  funct3: 'instruction bits 14..12: selects the operation, branch condition or access size',
  f7b5: 'instruction bit 30 (funct7 bit 5): tells sub from add and sra from srl',
  funct7: 'instruction bits 31..25',
  ir: 'instruction register bits, `ir[n]` or `ir[hi:lo]`',
};

/** Words that have a fixed meaning where they stand. */
export const keywordTexts: Record<string, string> = {
  machine: 'names the machine; `isa rv32i` promises the whole RV32I base instruction set',
  kind: 'defines a part kind in the notation: its settings, inputs, controls, state, ports and closing-edge actions (docs/notation.md, "Part kinds")',
  bus: 'a shared bus: `bus NAME WIDTH [keeper]`',
  part: 'a part on the buses: `part NAME KIND ...`',
  strobe: 'a one-bit control output of the control store: `strobe NAME KIND ...`',
  connect: 'a part\'s output that drives a bus in every step, with no strobe: `connect PART[.PORT] -> BUS[hi:lo]`; the contention check counts it in every step',
  field: 'a multi-bit control output holding one code per step: `field NAME WIDTH -> PART { name=code ... }`',
  store: 'starts a named control store; the `word` and `address` lines after it belong to it',
  word: 'the control word and its split over ROM chips; body lines place each strobe and field on its bits',
  address: 'the control-store address lines and what feeds them (step counter, instruction bits, flags)',
  map: 'a decode map: a field value from instruction bits or flags, so one step line serves many instructions',
  phase: 'a named run of steps shared by many classes (such as fetch); classes bring it in with `use`',
  class: 'the steps of one RV32I major opcode',
  keeper: 'bus-hold keepers: an undriven bus keeps its last driven value (a load then stores a stale value) instead of floating',
  active: '`active high` or `active low`: the ROM bit level that asserts the strobe',
  accept: '`accept width-mismatch`: the width change on this line is deliberate, so this line does not report it (every other line still does)',
  high: 'active high: the ROM bit is 1 when the strobe is asserted',
  low: 'active low: the ROM bit is 0 when the strobe is asserted (typical for /OE and /WE inputs)',
  use: 'places a phase\'s steps into this class, at `at N` or right after the steps written so far',
  if: 'a guard: this alternative applies only when every term holds',
  else: 'the alternative taken when no other line of this step applies',
  isa: '`isa rv32i`: the coverage check then requires a class for every RV32I major opcode',
  as: 'the split of the word over chips: `4 x 8` or `8 + 8 + 16`',
};

/** The ports of a part, for hovers: name, direction and what it carries. */
export function partPorts(part: Part): string[] {
  switch (part.kind) {
    case 'regfile':
      return [
        '`rs1`: output, the register the instruction\'s rs1 field (bits 19..15) selects',
        '`rs2`: output, the register the rs2 field (bits 24..20) selects',
        '`rd`: input, loads the register the rd field (bits 11..7) selects',
        '`x[n]`: fixed register n',
      ];
    case 'register':
    case 'counter':
    case 'instruction':
      return ['output: drives a bus through an enable strobe', 'input: loads a bus at a clock strobe\'s edge'];
    case 'immediate':
    case 'alu':
    case 'constant':
      return ['output: drives a bus through an enable strobe'];
    case 'compare':
      return [`inputs: buses \`${part.a}\` and \`${part.b}\``, `output: flag \`${part.flag}\`, latched at its clock strobe's edge`];
    case 'memory':
      return ['data out: drives a bus through a read strobe', 'data in: stores a bus at a write strobe\'s closing edge'];
    case 'custom':
      return [
        ...part.def.drives.map((d) => `\`${d.name}\`: output, drives a bus through an enable strobe` + (d.description ? ` (${d.description})` : '')),
        ...part.def.edges.map((e) => `\`${e.name}\`: ${e.width ? 'input, loads a bus' : 'acts'} at a strobe's closing edge` + (e.description ? ` (${e.description})` : '')),
        ...part.def.flags.map((f) => `\`${f.name}\`: flag \`${part.flagNames.get(f.name) ?? f.name}\``),
      ];
  }
}

/** The settings of a part as written or defaulted, for hovers. */
export function partSettings(part: Part): string[] {
  const settings = [`width ${part.width}`];
  switch (part.kind) {
    case 'regfile':
      settings.push(`x0=${part.x0}` + (part.x0 === 'hardwired' ? ' (reads 0, ignores writes)' : part.x0 === 'stored' ? ' (a real register)' : ' (stored; a zero detector on rd blocks its clock)'));
      break;
    case 'register':
    case 'instruction':
      settings.push(`reset=${part.reset}`);
      break;
    case 'counter':
      settings.push(`inc=${part.increment}`, `bit0=${part.bit0Zero ? 'zero (bit 0 always stored as 0)' : 'kept'}`, `reset=${part.reset}`);
      break;
    case 'immediate':
      if (part.source) settings.push(`from \`${part.source}\``);
      break;
    case 'alu':
      settings.push(`operand a from bus \`${part.a}\``, `operand b from bus \`${part.b}\``);
      break;
    case 'compare':
      settings.push(`a from bus \`${part.a}\``, `b from bus \`${part.b}\``, `flag \`${part.flag}\``, part.condition === 'funct3' ? 'cond=funct3 (RV32I branch encoding)' : 'condition from a field');
      break;
    case 'memory':
      settings.push(`address from ${part.addressFrom === 'bus' ? 'bus' : 'register'} \`${part.address}\``);
      break;
    case 'constant':
      settings.push(`value=${part.value} (0x${part.value.toString(16).toUpperCase()})`);
      break;
  }
  if (part.controlField) settings.push(`controlled by field \`${part.controlField}\``);
  return settings;
}
