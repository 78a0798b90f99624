// Text conventions of the disassembler. The reference for every line is GNU objdump 2.40 with
// `-M no-aliases,numeric` (text copied from its output here, see tests/outside/isa-gnu-as.test.ts
// for the automated comparison); where we differ on purpose the comment says why.
import { describe, expect, it } from 'vitest';
import { disassemble, disassembleParts, hex32 } from '../../server/src/core/isa/disasm';

describe('disassemble', () => {
  it('formats each instruction group like objdump -M no-aliases,numeric', () => {
    expect(disassemble(0x123450b7)).toBe('lui x1,0x12345');
    expect(disassemble(0x004100e7)).toBe('jalr x1,4(x2)');
    expect(disassemble(0xfff20183)).toBe('lb x3,-1(x4)');
    expect(disassemble(0xfe530fa3)).toBe('sb x5,-1(x6)');
    expect(disassemble(0x01f51493)).toBe('slli x9,x10,0x1f');
    expect(disassemble(0xffb00093)).toBe('addi x1,x0,-5');
    expect(disassemble(0x40d605b3)).toBe('sub x11,x12,x13');
    expect(disassemble(0x0ff0000f)).toBe('fence iorw,iorw');
    expect(disassemble(0x8330000f)).toBe('fence.tso');
    expect(disassemble(0x00000073)).toBe('ecall');
    expect(disassemble(0x00100073)).toBe('ebreak');
  });

  it('branch and jump targets: absolute hex with a pc, GNU-as relative form without', () => {
    // objdump: "14: fe2098e3  bne x1,x2,4"; 0x14 - 16 = 0x4.
    expect(disassemble(0xfe2098e3, 0x14)).toBe('bne x1,x2,0x4');
    expect(disassemble(0xfe2098e3)).toBe('bne x1,x2,.-16');
    expect(disassemble(0x008000ef, 0x8)).toBe('jal x1,0x10');
    expect(disassemble(0x008000ef)).toBe('jal x1,.+8');
    // Targets wrap modulo 2^32 (objdump: "18: 801ff06f jal x0,fffff818").
    expect(disassemble(0x801ff06f, 0x18)).toBe('jal x0,0xfffff818');
  });

  it('ABI register names on request (psABI integer register convention)', () => {
    expect(disassemble(0x00008067, undefined, { registerNames: 'abi' })).toBe('jalr zero,0(ra)');
    expect(disassemble(0x40d605b3, undefined, { registerNames: 'abi' })).toBe('sub a1,a2,a3');
  });

  it('illegal words become .word with eight hex digits and no table entry', () => {
    expect(disassemble(0)).toBe('.word 0x00000000');
    expect(disassemble(0x023100b3)).toBe('.word 0x023100b3');
    expect(disassembleParts(0x023100b3).spec).toBeNull();
    expect(disassembleParts(0x00d605b3).spec?.mnemonic).toBe('add');
  });

  // objdump writes an empty FENCE set as "unknown"; we write 0, the value of the 4-bit field.
  it('an empty FENCE predecessor or successor set prints as 0', () => {
    expect(disassemble(0x0200000f)).toBe('fence r,0');
    expect(disassemble(0x0000000f)).toBe('fence 0,0');
  });

  it('hex32 pads to eight digits and treats the value as unsigned', () => {
    expect(hex32(-1)).toBe('ffffffff');
    expect(hex32(0x13)).toBe('00000013');
  });
});
