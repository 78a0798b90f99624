// Checks the RV32I instruction table, field extractors, immediates, matcher and encoder against
// the RISC-V Unprivileged ISA specification (20191213) and against encodings produced by GNU as
// 2.40 (listed in /work/shared/design/reference-facts.md; tests/outside/isa-gnu-as.test.ts
// re-derives them by running the assembler).
import { describe, expect, it } from 'vitest';
import {
  FORMATS_WITH_RD,
  MAJOR_OPCODES,
  RV32I_INSTRUCTIONS,
  bit30Field,
  encodeInstruction,
  fieldsOf,
  immB,
  immI,
  immJ,
  immS,
  immU,
  immediateOf,
  instructionByMnemonic,
  matchInstruction,
  type InstructionFormat,
} from '../../server/src/core/isa/rv32i';

// RISC-V Unprivileged ISA 20191213, ch. 24 "RV32/64G Instruction Set Listings", table
// "RV32I Base Instruction Set", transcribed row by row (field names as printed in the spec).
const RV32I_LISTING = `
imm[31:12]                          rd           0110111 LUI
imm[31:12]                          rd           0010111 AUIPC
imm[20|10:1|11|19:12]               rd           1101111 JAL
imm[11:0]           rs1 000         rd           1100111 JALR
imm[12|10:5]    rs2 rs1 000         imm[4:1|11]  1100011 BEQ
imm[12|10:5]    rs2 rs1 001         imm[4:1|11]  1100011 BNE
imm[12|10:5]    rs2 rs1 100         imm[4:1|11]  1100011 BLT
imm[12|10:5]    rs2 rs1 101         imm[4:1|11]  1100011 BGE
imm[12|10:5]    rs2 rs1 110         imm[4:1|11]  1100011 BLTU
imm[12|10:5]    rs2 rs1 111         imm[4:1|11]  1100011 BGEU
imm[11:0]           rs1 000         rd           0000011 LB
imm[11:0]           rs1 001         rd           0000011 LH
imm[11:0]           rs1 010         rd           0000011 LW
imm[11:0]           rs1 100         rd           0000011 LBU
imm[11:0]           rs1 101         rd           0000011 LHU
imm[11:5]       rs2 rs1 000         imm[4:0]     0100011 SB
imm[11:5]       rs2 rs1 001         imm[4:0]     0100011 SH
imm[11:5]       rs2 rs1 010         imm[4:0]     0100011 SW
imm[11:0]           rs1 000         rd           0010011 ADDI
imm[11:0]           rs1 010         rd           0010011 SLTI
imm[11:0]           rs1 011         rd           0010011 SLTIU
imm[11:0]           rs1 100         rd           0010011 XORI
imm[11:0]           rs1 110         rd           0010011 ORI
imm[11:0]           rs1 111         rd           0010011 ANDI
0000000       shamt rs1 001         rd           0010011 SLLI
0000000       shamt rs1 101         rd           0010011 SRLI
0100000       shamt rs1 101         rd           0010011 SRAI
0000000         rs2 rs1 000         rd           0110011 ADD
0100000         rs2 rs1 000         rd           0110011 SUB
0000000         rs2 rs1 001         rd           0110011 SLL
0000000         rs2 rs1 010         rd           0110011 SLT
0000000         rs2 rs1 011         rd           0110011 SLTU
0000000         rs2 rs1 100         rd           0110011 XOR
0000000         rs2 rs1 101         rd           0110011 SRL
0100000         rs2 rs1 101         rd           0110011 SRA
0000000         rs2 rs1 110         rd           0110011 OR
0000000         rs2 rs1 111         rd           0110011 AND
fm pred succ        rs1 000         rd           0001111 FENCE
000000000000      00000 000         00000        1110011 ECALL
000000000001      00000 000         00000        1110011 EBREAK
`;

interface ListingRow {
  mnemonic: string;
  opcode: number;
  funct3: number | null;
  funct7: number | null;
  imm12: number | null;
  format: InstructionFormat;
}

// Reads a listing row: the last token is the mnemonic, the one before it the opcode; a 3-bit
// token is funct3; a leading 7-bit token is funct7 (or the imm[11:5] of a shift), a leading
// 12-bit token the fixed immediate of ECALL/EBREAK. The format follows from the field layout
// (spec figure "RISC-V base instruction formats showing immediate variants").
function parseRow(line: string): ListingRow {
  const tokens = line.trim().split(/\s+/);
  const mnemonic = tokens.pop()!.toLowerCase();
  const opcode = parseInt(tokens.pop()!, 2);
  const funct3Token = tokens.find((t, i) => i > 0 && /^[01]{3}$/.test(t));
  const first = tokens[0]!;
  const funct7 = /^[01]{7}$/.test(first) ? parseInt(first, 2) : null;
  const imm12 = /^[01]{12}$/.test(first) ? parseInt(first, 2) : null;
  let format: InstructionFormat;
  if (first === 'imm[31:12]') format = 'U';
  else if (first === 'imm[20|10:1|11|19:12]') format = 'J';
  else if (first === 'imm[12|10:5]') format = 'B';
  else if (first === 'imm[11:5]') format = 'S';
  else if (funct7 !== null && tokens[1] === 'rs2') format = 'R';
  else format = 'I';
  return { mnemonic, opcode, funct3: funct3Token ? parseInt(funct3Token, 2) : null, funct7, imm12, format };
}

const LISTING_ROWS = RV32I_LISTING.trim().split('\n').map(parseRow);

describe('RV32I table against the spec listing', () => {
  it('has exactly the 40 instructions of the listing, in listing order', () => {
    expect(LISTING_ROWS).toHaveLength(40);
    expect(RV32I_INSTRUCTIONS.map((s) => s.mnemonic)).toEqual(LISTING_ROWS.map((r) => r.mnemonic));
  });

  it.each(LISTING_ROWS)('$mnemonic: opcode, funct3, funct7, fixed immediate and format', (row) => {
    const spec = instructionByMnemonic(row.mnemonic)!;
    expect(spec).toBeDefined();
    expect({ opcode: spec.opcode, funct3: spec.funct3, funct7: spec.funct7, imm12: spec.imm12, format: spec.format }).toEqual({
      opcode: row.opcode,
      funct3: row.funct3,
      funct7: row.funct7,
      imm12: row.imm12,
      format: row.format,
    });
  });

  it('group sizes match the spec chapter 2 count: 2 U, 2 jumps, 6 branches, 5 loads, 3 stores, 9 OP-IMM, 10 OP, fence, ecall, ebreak', () => {
    const count = (major: string) => RV32I_INSTRUCTIONS.filter((s) => s.major === major).length;
    expect([count('LUI') + count('AUIPC'), count('JAL') + count('JALR'), count('BRANCH'), count('LOAD'), count('STORE'), count('OP-IMM'), count('OP'), count('MISC-MEM'), count('SYSTEM')]).toEqual([
      2, 2, 6, 5, 3, 9, 10, 1, 2,
    ]);
  });

  // Major opcode values: spec table "RISC-V base opcode map" (ch. 24), also in reference-facts.md.
  it('major opcodes have the 7-bit values of the base opcode map', () => {
    const text = MAJOR_OPCODES.map((m) => `${m.name} ${m.opcode.toString(2).padStart(7, '0')}`).join('\n');
    expect(text).toBe(
      [
        'LUI 0110111',
        'AUIPC 0010111',
        'JAL 1101111',
        'JALR 1100111',
        'BRANCH 1100011',
        'LOAD 0000011',
        'STORE 0100011',
        'OP-IMM 0010011',
        'OP 0110011',
        'MISC-MEM 0001111',
        'SYSTEM 1110011',
      ].join('\n'),
    );
  });

  // Spec figure "RISC-V base instruction formats": rd sits in inst[11:7] in R, I, U and J; S and B put imm bits there.
  it('formats with an rd field are R, I, U, J', () => {
    expect([...FORMATS_WITH_RD].sort()).toEqual(['I', 'J', 'R', 'U']);
    expect(FORMATS_WITH_RD.has('S')).toBe(false);
    expect(FORMATS_WITH_RD.has('B')).toBe(false);
  });

  it('writesRd is false exactly for S, B, FENCE, ECALL, EBREAK', () => {
    const noRd = RV32I_INSTRUCTIONS.filter((s) => !s.writesRd).map((s) => s.mnemonic);
    expect(noRd).toEqual(['beq', 'bne', 'blt', 'bge', 'bltu', 'bgeu', 'sb', 'sh', 'sw', 'fence', 'ecall', 'ebreak']);
  });
});

// Encodings produced by GNU as 2.40 (`riscv64-unknown-elf-as -march=rv32i`), with the fields
// and immediates the spec's encoding rules (ch. 2.2-2.3) give for the written operands.
const GNU_AS_WORDS: { source: string; word: number; mnemonic: string; rd?: number; rs1?: number; rs2?: number; imm?: number }[] = [
  { source: 'lui x1,0x12345', word: 0x123450b7, mnemonic: 'lui', rd: 1, imm: 0x12345000 },
  { source: 'auipc x2,1', word: 0x00001117, mnemonic: 'auipc', rd: 2, imm: 0x1000 },
  { source: 'jal x1,+8', word: 0x008000ef, mnemonic: 'jal', rd: 1, imm: 8 },
  { source: 'jalr x1,4(x2)', word: 0x004100e7, mnemonic: 'jalr', rd: 1, rs1: 2, imm: 4 },
  { source: 'beq x1,x2,+16', word: 0x00208863, mnemonic: 'beq', rs1: 1, rs2: 2, imm: 16 },
  { source: 'bne x1,x2,-16', word: 0xfe2098e3, mnemonic: 'bne', rs1: 1, rs2: 2, imm: -16 },
  { source: 'bge x1,x2,-4096', word: 0x8020d063, mnemonic: 'bge', rs1: 1, rs2: 2, imm: -4096 },
  { source: 'bgeu x1,x2,+4094', word: 0x7e20ffe3, mnemonic: 'bgeu', rs1: 1, rs2: 2, imm: 4094 },
  { source: 'lb x3,-1(x4)', word: 0xfff20183, mnemonic: 'lb', rd: 3, rs1: 4, imm: -1 },
  { source: 'sb x5,-1(x6)', word: 0xfe530fa3, mnemonic: 'sb', rs1: 6, rs2: 5, imm: -1 },
  { source: 'sw x5,2047(x6)', word: 0x7e532fa3, mnemonic: 'sw', rs1: 6, rs2: 5, imm: 2047 },
  { source: 'slli x9,x10,31', word: 0x01f51493, mnemonic: 'slli', rd: 9, rs1: 10, imm: 31 },
  { source: 'srai x9,x10,1', word: 0x40155493, mnemonic: 'srai', rd: 9, rs1: 10, imm: 1 },
  { source: 'add x11,x12,x13', word: 0x00d605b3, mnemonic: 'add', rd: 11, rs1: 12, rs2: 13 },
  { source: 'sub x11,x12,x13', word: 0x40d605b3, mnemonic: 'sub', rd: 11, rs1: 12, rs2: 13 },
  { source: 'sra x11,x12,x13', word: 0x40d655b3, mnemonic: 'sra', rd: 11, rs1: 12, rs2: 13 },
  { source: 'fence iorw,iorw', word: 0x0ff0000f, mnemonic: 'fence' },
  { source: 'ecall', word: 0x00000073, mnemonic: 'ecall' },
  { source: 'ebreak', word: 0x00100073, mnemonic: 'ebreak' },
  { source: 'nop', word: 0x00000013, mnemonic: 'addi', rd: 0, rs1: 0, imm: 0 },
];

describe('fields and immediates against GNU as 2.40 encodings', () => {
  it.each(GNU_AS_WORDS)('$source = $word', (row) => {
    const spec = matchInstruction(row.word);
    expect(spec?.mnemonic).toBe(row.mnemonic);
    const fields = fieldsOf(row.word);
    if (row.rd !== undefined) expect(fields.rd).toBe(row.rd);
    if (row.rs1 !== undefined) expect(fields.rs1).toBe(row.rs1);
    if (row.rs2 !== undefined) expect(fields.rs2).toBe(row.rs2);
    if (row.imm !== undefined) {
      // Shifts carry their amount in the rs2 position (spec 2.4); everything else uses the format's immediate.
      const value = spec!.major === 'OP-IMM' && spec!.funct7 !== null ? fields.rs2 : immediateOf(spec!, row.word);
      expect(value).toBe(row.imm);
    }
  });

  it('SRAI and SUB have instruction bit 30 set, SRLI and ADD do not', () => {
    expect(bit30Field(0x40155493)).toBe(1);
    expect(bit30Field(0x40d605b3)).toBe(1);
    expect(bit30Field(0x00155493 /* srli x9,x10,1 */)).toBe(0);
    expect(bit30Field(0x00d605b3)).toBe(0);
  });

  // addi x1,x0,-5 is ffb00093 (GNU as 2.40, seen in objdump here): bit 30 is an immediate bit.
  it('ADDI with a negative immediate has bit 30 set and still decodes as addi', () => {
    expect(bit30Field(0xffb00093)).toBe(1);
    expect(matchInstruction(0xffb00093)?.mnemonic).toBe('addi');
    expect(immI(0xffb00093)).toBe(-5);
  });

  // Spec 2.3: every immediate is sign-extended from inst[31]; the extremes of each format.
  it('immediate extremes: sign bit set and clear', () => {
    expect(immI(0x80000000)).toBe(-2048);
    expect(immI(0x7ff00000)).toBe(2047);
    expect(immS(0xfe000f80)).toBe(-1);
    expect(immS(0x7e000f80)).toBe(2047);
    expect(immB(0x80000000)).toBe(-4096);
    expect(immB(0x7e000f80)).toBe(4094);
    expect(immU(0x80000000)).toBe(-0x80000000);
    expect(immU(0x7ffff000)).toBe(0x7ffff000);
    expect(immJ(0x80000000)).toBe(-(1 << 20));
    expect(immJ(0x7ffff000)).toBe((1 << 20) - 2);
    expect(immB(0x00000080)).toBe(2048); // inst[7] is imm[11] of a branch
    expect(immJ(0x00100000)).toBe(2048); // inst[20] is imm[11] of a jump
  });
});

describe('matchInstruction rejects what RV32I does not define', () => {
  // Each word is a real encoding from another extension or a reserved RV32I pattern.
  const illegal: [string, number][] = [
    ['all zeros (spec 2.2: defined illegal)', 0x00000000],
    ['all ones (spec 2.2: defined illegal)', 0xffffffff],
    ['mul x1,x2,x3 (M extension)', 0x023100b3],
    ['fence.i (Zifencei, not RV32I)', 0x0000100f],
    ['csrrw x0,mstatus,x1 (Zicsr)', 0x30009073],
    ['mret (privileged)', 0x30200073],
    ['wfi (privileged)', 0x10500073],
    ['c.li x10,0 (compressed: low bits not 11)', 0x00004501],
    ['slli with shamt[5] set (reserved on RV32, 2.4)', 0x02051493],
    ['slli with inst[30] set', 0x40001013],
    ['srai with funct7 0100001', 0x42155493],
    ['add with funct7 0000001', 0x02d605b3],
    ['sub with funct3 001', 0x40d615b3],
    ['ecall with rd = x1', 0x000000f3],
    ['ecall with rs1 = x1', 0x00008073],
    ['jalr with funct3 001', 0x004110e7],
    ['branch funct3 010', 0x0020a063],
    ['ld (RV64 only, load funct3 011)', 0x00013083],
    ['lwu (RV64 only, load funct3 110)', 0x00016083],
    ['sd (RV64 only, store funct3 011)', 0x00113023],
    ['addiw (OP-IMM-32, RV64 only)', 0x0000009b],
    ['flw (F extension)', 0x00002007],
  ];
  it.each(illegal)('%s', (_label, word) => {
    expect(matchInstruction(word)).toBeNull();
  });

  // The counterpart: near neighbours of the rejected words that are legal.
  const legal: [string, number, string][] = [
    ['slli x9,x10,31', 0x01f51493, 'slli'],
    ['srli x9,x10,1', 0x00155493, 'srli'],
    ['sub x11,x12,x13', 0x40d605b3, 'sub'],
    ['sll x11,x12,x13', 0x00d615b3, 'sll'],
    ['jalr x1,4(x2)', 0x004100e7, 'jalr'],
    ['lhu', 0x00015083, 'lhu'],
    // Spec 2.7: FENCE ignores rd, rs1 and fm; such words must still be fences (qemu agrees).
    ['fence with rd = x1', 0x0ff0008f, 'fence'],
    ['fence with rs1 = x5', 0x0ff2800f, 'fence'],
    ['fence.tso (fm = 1000)', 0x8330000f, 'fence'],
  ];
  it.each(legal)('%s is legal', (_label, word, mnemonic) => {
    expect(matchInstruction(word)?.mnemonic).toBe(mnemonic);
  });
});

describe('encodeInstruction', () => {
  const cases: [string, Parameters<typeof encodeInstruction>[1], number][] = [
    ['lui', { rd: 1, imm: 0x12345, immIsUpper20: true }, 0x123450b7],
    ['lui', { rd: 1, imm: 0x12345000 }, 0x123450b7],
    ['auipc', { rd: 2, imm: 1, immIsUpper20: true }, 0x00001117],
    ['jal', { rd: 1, imm: 8 }, 0x008000ef],
    ['jalr', { rd: 1, rs1: 2, imm: 4 }, 0x004100e7],
    ['beq', { rs1: 1, rs2: 2, imm: 16 }, 0x00208863],
    ['bne', { rs1: 1, rs2: 2, imm: -16 }, 0xfe2098e3],
    ['bge', { rs1: 1, rs2: 2, imm: -4096 }, 0x8020d063],
    ['bgeu', { rs1: 1, rs2: 2, imm: 4094 }, 0x7e20ffe3],
    ['lb', { rd: 3, rs1: 4, imm: -1 }, 0xfff20183],
    ['sb', { rs1: 6, rs2: 5, imm: -1 }, 0xfe530fa3],
    ['sw', { rs1: 6, rs2: 5, imm: 2047 }, 0x7e532fa3],
    ['slli', { rd: 9, rs1: 10, imm: 31 }, 0x01f51493],
    ['srai', { rd: 9, rs1: 10, imm: 1 }, 0x40155493],
    ['add', { rd: 11, rs1: 12, rs2: 13 }, 0x00d605b3],
    ['sub', { rd: 11, rs1: 12, rs2: 13 }, 0x40d605b3],
    ['sra', { rd: 11, rs1: 12, rs2: 13 }, 0x40d655b3],
    ['fence', {}, 0x0ff0000f],
    ['ecall', {}, 0x00000073],
    ['ebreak', {}, 0x00100073],
    ['addi', {}, 0x00000013],
  ];
  it.each(cases)('%s %o matches GNU as', (mnemonic, operands, word) => {
    expect(encodeInstruction(mnemonic, operands)).toEqual({ ok: true, word });
  });

  it('rejects out-of-range operands with a message naming the range', () => {
    expect(encodeInstruction('addi', { rd: 1, imm: 2048 })).toEqual({ ok: false, error: 'addi: immediate 2048 is outside -2048..2047' });
    expect(encodeInstruction('beq', { imm: 3 })).toEqual({ ok: false, error: 'beq: branch offset 3 must be even' });
    expect(encodeInstruction('beq', { imm: 4096 })).toEqual({ ok: false, error: 'beq: branch offset 4096 is outside -4096..4094' });
    expect(encodeInstruction('slli', { imm: 32 })).toEqual({ ok: false, error: 'slli: shift amount 32 is outside 0..31' });
    expect(encodeInstruction('add', { rd: 32 })).toEqual({ ok: false, error: 'add: rd must be a register number 0..31, got 32' });
    expect(encodeInstruction('mul', {})).toEqual({ ok: false, error: '"mul" is not an RV32I instruction' });
    expect(encodeInstruction('lui', { imm: 0x1001 })).toEqual({ ok: false, error: 'lui: immediate 4097 must have its low 12 bits zero' });
  });

  it('round-trips every instruction through matchInstruction', () => {
    for (const spec of RV32I_INSTRUCTIONS) {
      const encoded = encodeInstruction(spec.mnemonic, { rd: 7, rs1: 13, rs2: 29, imm: spec.format === 'U' ? -4096 : spec.funct7 !== null && spec.major === 'OP-IMM' ? 17 : -6 });
      expect(encoded.ok, spec.mnemonic).toBe(true);
      if (encoded.ok) expect(matchInstruction(encoded.word)?.mnemonic).toBe(spec.mnemonic);
    }
  });
});
