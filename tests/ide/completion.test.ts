// Completion by context: each case is a fixture with a `$0` cursor and the exact labels
// expected there (in order), plus the span an item replaces.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { complete } from '../../server/src/core/ide/completion';
import { dedent } from '../support/annotated';
import { cursor, demoText } from './support';

const base = dedent(`
  machine "Tiny"
  bus left 8 keeper "Left operand."
  bus result 8
  part a register 8 "Holding register."
  part b register 8
  part x regfile 8
  part ir instruction 32
  part alu alu left left
  part cmp compare left left -> taken cond=funct3
  part mem memory 8 addr=a
  strobe a.oe enable a -> left active low "a drives left."
  strobe b.ck clock result -> b
  strobe alu.oe enable alu -> result
  strobe done end
  field alu.fn 4 -> alu { add=0 sub=8 } "ALU function."
  word 16 as 2 x 8
    a.oe 0  b.ck 1  alu.oe 2  alu.fn 4..7
  address 6
    step 0  taken 1  funct3 2..4
  map fn (funct3) -> alu.fn "Decode."
    000 add  001 sub
  phase fetch "Fetch."
    0: a.oe, b.ck
`);

function labelsAt(marked: string): string[] {
  const { text, offset } = cursor(marked);
  return complete(analyse(text), offset).items.map((i) => i.label);
}

describe('completion contexts', () => {
  it('declaration keywords and missing RV32I classes at the start of a line', () => {
    const labels = labelsAt(base + '$0');
    expect(labels.slice(0, 13)).toEqual(['machine', 'kind', 'bus', 'part', 'strobe', 'connect', 'field', 'store', 'word', 'address', 'map', 'phase', 'class']);
    expect(labels.slice(13)).toEqual(['class LUI', 'class AUIPC', 'class JAL', 'class JALR', 'class BRANCH', 'class LOAD', 'class STORE', 'class OP-IMM', 'class OP', 'class MISC-MEM', 'class SYSTEM']);
    // A declared class is not offered again.
    expect(labelsAt(base + 'class OP opcode=0110011\n  0: done\n$0')).not.toContain('class OP');
  });

  it('strobe and field names after the colon and after a comma of a step', () => {
    const expected = ['alu.fn', 'a.oe', 'b.ck', 'alu.oe', 'done'];
    expect(labelsAt(base + 'class OP opcode=0110011\n  0: $0')).toEqual(expected);
    expect(labelsAt(base + 'class OP opcode=0110011\n  0: a.oe, $0')).toEqual(expected);
    expect(labelsAt(base + 'class OP opcode=0110011\n  0 if taken: a.oe, b.$0')).toEqual(expected);
  });

  it('a field completion inserts `name=`, a strobe its name', () => {
    const { text, offset } = cursor(base + 'class OP opcode=0110011\n  0: $0');
    const items = complete(analyse(text), offset).items;
    expect(items.find((i) => i.label === 'alu.fn')?.insertText).toBe('alu.fn=');
    expect(items.find((i) => i.label === 'a.oe')?.insertText).toBeUndefined();
    expect(items.find((i) => i.label === 'a.oe')?.documentation).toBe('a drives left.');
  });

  it("a field's values and the maps that set it after `field=`", () => {
    expect(labelsAt(base + 'class OP opcode=0110011\n  0: alu.fn=$0')).toEqual(['add', 'sub', 'fn']);
    expect(labelsAt(base + 'class OP opcode=0110011\n  0: a.oe, alu.fn=s$0')).toEqual(['add', 'sub', 'fn']);
  });

  it('phases after `use`, then `at`', () => {
    expect(labelsAt(base + 'class OP opcode=0110011\n  use $0')).toEqual(['fetch']);
    expect(labelsAt(base + 'class OP opcode=0110011\n  use fetch $0')).toEqual(['at']);
  });

  it('part kinds after a new part name, settings after the kind', () => {
    expect(labelsAt(base + 'part c $0')).toEqual(['regfile', 'register', 'counter', 'instruction', 'immediate', 'alu', 'compare', 'memory', 'constant', 'sequencer', 'callseq', 'nextstep', 'loopcount', 'presetcount']);
    expect(labelsAt(base + 'part pc counter 32 $0')).toEqual(['inc=', 'bit0=', 'reset=']);
    expect(labelsAt(base + 'part y regfile 32 x0=$0')).toEqual(['hardwired', 'stored', 'guarded']);
    // Parts holding a value (registers, the instruction register among them), then buses.
    expect(labelsAt(base + 'part m memory 8 addr=$0')).toEqual(['a', 'b', 'ir', 'left', 'result']);
  });

  it('strobe kinds, then parts or ports, then buses after the arrow', () => {
    expect(labelsAt(base + 'strobe c.oe $0')).toEqual(['enable', 'read', 'write', 'clock', 'count', 'end', 'trap']);
    expect(labelsAt(base + 'strobe c.oe enable $0')).toEqual(['a', 'b', 'x.rs1', 'x.rs2', 'ir', 'alu']);
    expect(labelsAt(base + 'strobe c.oe enable a -> $0')).toEqual(['left', 'result']);
    expect(labelsAt(base + 'strobe c.ck clock result -> $0')).toEqual(['a', 'b', 'x.rd', 'ir']);
    expect(labelsAt(base + 'strobe m.rd read $0')).toEqual(['mem']);
    expect(labelsAt(base + 'strobe c.oe enable a -> left active $0')).toEqual(['high', 'low']);
  });

  it('address inputs in guards and map inputs', () => {
    expect(labelsAt(base + 'class OP opcode=0110011\n  0 if $0')).toEqual(['opcode', 'funct3', 'f7b5', 'funct7', 'ir[n]', 'taken']);
    expect(labelsAt(base + 'class OP opcode=0110011\n  0 if taken & !$0')).toEqual(['opcode', 'funct3', 'f7b5', 'funct7', 'ir[n]', 'taken']);
    expect(labelsAt(base + 'map g ($0')).toEqual(['opcode', 'funct3', 'f7b5', 'funct7', 'ir[n]', 'taken']);
    expect(labelsAt(base + 'map g (funct3) -> $0')).toEqual(['alu.fn']);
  });

  it('value names in a map row, after its patterns', () => {
    expect(labelsAt(base.replace('000 add  001 sub', '000 add  001 $0'))).toEqual(['add', 'sub']);
  });

  it('the value vocabulary inside a field`s braces, minus the values already listed', () => {
    const labels = labelsAt(base + 'field f 4 -> alu { add=0 $0 }');
    expect(labels).toEqual(['sub', 'sll', 'slt', 'sltu', 'xor', 'srl', 'sra', 'or', 'and', 'passa', 'passb']);
  });

  it('chips after `chip=` and RV32I opcodes after `opcode=`', () => {
    expect(labelsAt(base + 'store s\nword 8 as 1 x 8 chip=$0')).toEqual(['28C16', '28C64', '28C256', '27C64', '27C256', '27C512', '27C010', '39SF010', '39SF020', '39SF040']);
    expect(labelsAt(base + 'class X opcode=$0')).toEqual(['0110111', '0010111', '1101111', '1100111', '1100011', '0000011', '0100011', '0010011', '0110011', '0001111', '1110011']);
  });

  it('unplaced signals in a word layout body', () => {
    expect(labelsAt(base.replace('  a.oe 0  b.ck 1  alu.oe 2  alu.fn 4..7', '  a.oe 0  b.ck 1  alu.oe 2  alu.fn 4..7  $0'))).toEqual(['done']);
  });

  it('nothing inside a comment or a description', () => {
    expect(labelsAt(base + 'class OP opcode=0110011\n  0: a.oe # a comment $0')).toEqual([]);
    expect(labelsAt(base + 'bus c 8 "some $0')).toEqual([]);
  });

  it('replaces the partial name before the cursor, dots included', () => {
    const { text, offset } = cursor(base + 'class OP opcode=0110011\n  0: a.oe, alu.o$0');
    const result = complete(analyse(text), offset);
    expect(text.slice(result.replace.start, result.replace.end)).toBe('alu.o');
  });

  it('works on the demo: step actions and map values', () => {
    const { text, offset } = cursor(demoText.replace('  2: pc.inc, done', '  2: pc.inc, alu.fn=$0, done'));
    const labels = complete(analyse(text), offset).items.map((i) => i.label);
    expect(labels).toEqual(['add', 'sll', 'slt', 'sltu', 'xor', 'srl', 'or', 'and', 'sub', 'sra', 'passa', 'passb', 'op_fn', 'imm_fn']);
  });
});
