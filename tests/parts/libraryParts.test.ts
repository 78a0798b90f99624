// The standard library's parts are built like any part of a kind (model/buildPart.ts): the
// rules that used to be written for particular library kinds now follow from their definitions
// (parts/library/standard.ts): an input marked `instruction` comes from the instruction register
// (the part whose kind `holds instruction`), a control a choice setting makes read needs a field,
// a kind whose drive ports read a register array is wired by port name, a width setting not
// written follows the bus its input is wired to, widths are the ports' own. (Project rules and
// docs/notation.md; no outside source.)
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { expectDiagnostics } from '../support/annotated';
import { machine, prelude } from '../checks/prelude';

const wiring = (text: string) => analyse(text).diagnostics.filter((d) => d.code === 'wrong-wiring' || d.code === 'width-mismatch');

describe('library parts built from their definitions', () => {
  it('every part of the check prelude is a part of its library kind, and the prelude checks clean of wiring problems', () => {
    const a = analyse(prelude);
    expect([...a.machine.parts.values()].map((p) => `${p.name}:${p.kindName}`)).toEqual(['x:regfile', 'pc:counter', 'ir:instruction', 'mar:register', 't:register', 'imm:immediate', 'alu:alu', 'cmp:compare', 'mem:memory', 'four:constant']);
    expect(wiring(prelude)).toEqual([]);
    expect(a.machine.instructionRegister).toBe('ir');
    expect([...a.machine.parts.get('imm')!.inputs]).toEqual([['ir', { from: 'part', name: 'ir' }]]);
    expect([...a.machine.parts.get('cmp')!.flagNames]).toEqual([['taken', 'taken']]);
  });

  it('an input marked `after from instruction` left off the line reads the instruction register; naming another part is wrong wiring', () => {
    const bare = analyse(prelude.replace('part imm  immediate from ir', 'part imm  immediate'));
    expect(wiring(bare.text)).toEqual([]);
    expect([...bare.machine.parts.get('imm')!.inputs]).toEqual([['ir', { from: 'instruction' }]]);
    const other = wiring(prelude.replace('part imm  immediate from ir', 'part imm  immediate from mar'));
    expect(other.map((d) => d.message)).toEqual(['input `ir` of `imm` reads the instruction: take it from the instruction register `ir`, not from part `mar` (kind `register`)']);
  });

  it('a part reading the instruction needs an instruction register', () => {
    const text = prelude.replace('part ir   instruction 32', 'part ir   register 32');
    const messages = wiring(text).map((d) => d.message);
    expect(messages).toContain('part `x` (kind `regfile`) reads instruction fields (input `ir`): declare an instruction register, e.g. `part ir instruction 32`');
  });

  it('a comparator whose cond=field setting reads its test control needs a field; with cond=funct3 a field would drive nothing', () => {
    expectDiagnostics(
      machine(`
        bus k 32
        part c2 compare left right -> t2 cond=field
        #    ^^ wrong-wiring: reads its control \`test\` with its settings and no field drives it: set \`cond=funct3\`, or declare a field \`-> c2\` with values eq, ne, lt, ge, ltu, geu
        part c3 compare left right -> t3 cond=funct3
        field c3.test 3 -> c3 { eq=0 }
        #                  ^^ wrong-wiring: does not read its control \`test\` with \`cond=funct3\`
        part c4 compare left right -> t4
        field c4.test 3 -> c4 { eq=0 ne=1 }
      `),
      ['wrong-wiring'],
    );
  });

  it('an ALU with no field for its function is not a wiring error (no setting chose to read it)', () => {
    expect(wiring(machine(`part a2 alu left right\nstrobe a2.oe enable a2 -> result\n`))).toEqual([]);
  });

  it('the register file is wired by port name: its drive ports read its register array', () => {
    expectDiagnostics(
      machine(`
        strobe xx.oe enable x -> left
        #                   ^ wrong-wiring: say which port of part \`x\` (kind \`regfile\`): \`x.rs1\`, \`x.rs2\`, \`x.rd\` or \`x[n]\`
        strobe xx.ck clock result -> x.rs1
        #                            ^^^^^ wrong-wiring: \`x.rs1\` is an output: load \`x\` through \`x.rd\`
        strobe four.c count four
        #                   ^^^^ wrong-wiring: cannot count
      `),
      ['wrong-wiring'],
    );
  });

  it('an ALU without a width takes its operand bus\'s; widths are the ports\' own', () => {
    const text = machine(`
      bus l8 8
      bus r8 8
      part a8 alu l8 r8
      strobe a8.oe enable a8 -> l8
      strobe mem.lo read mem -> l8
    `);
    const a = analyse(text);
    expect(a.machine.parts.get('a8')!.settings.get('width')).toBe(8);
    // The memory's data port is its width setting's 32 bits: an 8-bit bus loses 24 of them.
    expect(wiring(text).map((d) => d.message)).toEqual([expect.stringContaining('`mem.data` is 32 bits wide but the bus `l8` is 8')]);
  });
});
