// The coverage checks: every RV32I instruction reaches a class and a decode-map row, every
// class ends, steps fit the counter, guards are exhaustive (for what instructions and flags
// reach) and disjoint, class opcodes are usable.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { dedent, expectDiagnostics } from '../support/annotated';
import { machine } from './prelude';
import { readFileSync } from 'node:fs';

const demo = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');

describe('instruction-uncovered', () => {
  it('names each RV32I major opcode without a class when the machine declares isa rv32i', () => {
    const text = demo.replace(/class MISC-MEM[\s\S]*?(?=class SYSTEM)/, '');
    const d = analyse(text).diagnostics.filter((x) => x.code === 'instruction-uncovered');
    expect(d.map((x) => x.message)).toEqual([
      'no class handles opcode 0001111 (MISC-MEM): fence would run the fill word and do nothing; add `class MISC-MEM opcode=0001111`',
    ]);
  });

  it('does not demand the whole ISA from a file without isa rv32i', () => {
    expectDiagnostics(machine(`
      class OP opcode=0110011
        use fetch
        2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, done
    `), ['instruction-uncovered']);
  });

  it('names the instruction a decode map misses (RV32I: sra is funct3=101, funct7=0100000)', () => {
    const text = machine(`
      class OP opcode=0110011
        use fetch
        2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, done
      #                        ^^^^^^^^^^^^ instruction-uncovered: no row for sra (funct3=101, f7b5=1)
    `).replace('101 1 sra', '        ');
    expectDiagnostics(text, ['instruction-uncovered']);
  });

  it('requires OP-IMM maps to cover both values of bit 30 for addi (an immediate bit there)', () => {
    const text = machine(`
      map bad_imm (funct3, f7b5) -> alu.fn
        000 0 add   010 - slt   011 - sltu   100 - xor   110 - or   111 - and
        001 0 sll   101 0 srl   101 1 sra
      class OP-IMM opcode=0010011
        use fetch
        2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=bad_imm, alu.oe, x.rd.ck, done
      #                                 ^^^^^^^^^^^^^^ instruction-uncovered: no row for addi (funct3=000, f7b5=1)
    `);
    expectDiagnostics(text, ['instruction-uncovered']);
  });

  // RV32I: slli, srli, srai are OP-IMM with funct3 = 001 and 101; the others never have them.
  // Shifts end at step 2; what the other instructions run after that is the fixture's tail.
  const shiftsEndEarly = (plainRows: string, tail: string) =>
    machine(`
      map plain_fn (funct3) -> alu.fn
        ${plainRows}
      map shift_fn (funct3, f7b5) -> alu.fn
        001 0 sll   101 0 srl   101 1 sra
      class OP-IMM opcode=0010011
        use fetch
        2 if funct3=-01: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=shift_fn, alu.oe, x.rd.ck, done
    `) + dedent(tail);
  const allPlain = '000 add   010 slt   011 sltu   100 xor   110 or   111 and';

  it('follows each instruction along its guards: a map in a step shifts never reach needs no shift rows', () => {
    expectDiagnostics(
      shiftsEndEarly(allPlain, `
          2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=passa, alu.oe, t.ck
          3: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=plain_fn, alu.oe, x.rd.ck, done
      `),
      ['instruction-uncovered'],
    );
  });

  it('checks the map of an else line only for the instructions that fall to it', () => {
    expectDiagnostics(shiftsEndEarly(allPlain, `
        2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=plain_fn, alu.oe, x.rd.ck, done
    `), ['instruction-uncovered']);
  });

  it('still names an instruction that reaches the step and finds no row there', () => {
    expectDiagnostics(
      shiftsEndEarly('000 add   010 slt   011 sltu   100 xor   110 or', `
          2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=passa, alu.oe, t.ck
          3: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=plain_fn, alu.oe, x.rd.ck, done
        #                                 ^^^^^^^^^^^^^^^ instruction-uncovered: no row for andi (funct3=111)
      `),
      ['instruction-uncovered'],
    );
  });

  it('checks a map under a flag guard only for the flag value that reaches it', () => {
    // The map reads the flag; the line applies only when taken = 1, so rows for taken = 0 are not needed.
    const text = machine(`
      map taken_fn (funct3, taken) -> alu.fn
        --- 1 add
      class BRANCH opcode=1100011
        use fetch
        2: x.rs1.oe, x.rs2.oe, cmp.ck
        3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=taken_fn, alu.oe, pc.ck, done
        3 else: pc.inc, done
    `);
    expectDiagnostics(text, ['instruction-uncovered']);
  });
});

describe('class-no-end', () => {
  it('fires at the class name when no step ends, with a fix that adds the end strobe', () => {
    const a = expectDiagnostics(
      machine(`
        class OP opcode=0110011
        #     ^^ class-no-end: never asserts
          use fetch
          2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck
      `),
      ['class-no-end'],
    );
    const fix = a.diagnostics.find((d) => d.code === 'class-no-end')!.fixes![0];
    const fixed = a.text.slice(0, fix.edits[0].span.start) + fix.edits[0].newText + a.text.slice(fix.edits[0].span.end);
    expect(fixed).toContain('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, done\n');
    expect(analyse(fixed).diagnostics.filter((d) => d.code === 'class-no-end')).toHaveLength(0);
  });

  it('fires when one path (a branch not taken) runs past the last step', () => {
    expectDiagnostics(
      machine(`
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
          3 if !taken: pc.inc
        # ^ class-no-end: does not end for beq
      `),
      ['class-no-end'],
    );
  });

  it('is silent when every path ends, even at different steps', () => {
    expectDiagnostics(machine(`
      class BRANCH opcode=1100011
        use fetch
        2: x.rs1.oe, x.rs2.oe, cmp.ck
        3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
        3 else: pc.inc
        4: done
    `), ['class-no-end']);
  });
});

describe('step-overflow and step-gap', () => {
  it('step-overflow fires beyond the 3-bit counter; step-gap on a skipped number', () => {
    expectDiagnostics(
      machine(`
        class OP opcode=0110011
          use fetch
          2: x.rs1.oe
          4: x.rs1.oe
        # ^ step-gap: has no step 3
          5: x.rs1.oe
          6: x.rs1.oe
          7: x.rs1.oe
          8: x.rs1.oe, done
        # ^ step-overflow: does not fit the 3-bit step counter
      `),
      ['step-overflow', 'step-gap'],
    );
  });
});

describe('guard-gap and guard-overlap', () => {
  it('guard-gap names the instructions that fall into the gap', () => {
    expectDiagnostics(
      machine(`
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3 if taken & funct3=000: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
          3 if !taken: pc.inc, done
        # ^ guard-gap: bne, blt, bge, bltu, bgeu would run the fill word
      `),
      ['guard-gap'],
    );
  });

  it('guard-gap ignores gaps only illegal encodings reach (LOAD funct3=011 is not RV32I)', () => {
    expectDiagnostics(machine(`
      class LOAD opcode=0000011
        use fetch
        2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, mar.ck
        3 if funct3=0--: mem.size=word, mem.rd, x.rd.ck, done
        3 if funct3=10-: mem.size=ubyte, mem.rd, x.rd.ck, done
    `), ['guard-gap']);
  });

  it('guard-overlap fires on overlapping guards and on a step defined by a phase and the class', () => {
    expectDiagnostics(
      machine(`
        class BRANCH opcode=1100011
          use fetch
          1: x.rs1.oe
        # ^ guard-overlap: step 1 is defined twice
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
          3 if funct3=000: pc.inc, done
        # ^ guard-overlap: both lines apply when funct3=000 taken=1
          3 else: pc.inc, done
      `),
      ['guard-overlap'],
    );
  });
});

describe('class-opcode', () => {
  it('fires on a missing opcode, low bits not 11, and a duplicate', () => {
    expectDiagnostics(
      machine(`
        class A
        #     ^ class-opcode: has no opcode
          use fetch
          2: done
        class B opcode=0110010
        #              ^^^^^^^ class-opcode: does not end in 11
          use fetch
          2: done
        class C opcode=0110011
          use fetch
          2: done
        class D opcode=0110011
        #              ^^^^^^^ class-opcode: already handles
          use fetch
          2: done
      `),
      ['class-opcode'],
    );
  });

  it('is silent for distinct valid opcodes, including a custom-0 opcode (0001011)', () => {
    expectDiagnostics(machine(`
      class OP opcode=0110011
        use fetch
        2: done
      class CUSTOM opcode=0001011
        use fetch
        2: done
    `), ['class-opcode']);
  });
});
