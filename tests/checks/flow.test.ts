// The control-flow checks of a machine with a sequencer part (micro-loop, loop-exit-unchanged,
// jump-outside, step-unreachable) and guard and instruction coverage along the step graph: each fires on its fault example at the exact range and on a
// broken copy of a real sequencer machine, and none fires on windlass-32 or the sequencer
// machines of tests/support/sequencer.ts, which run every test program identical to
// qemu-riscv32 (tests/sim). The sequencer's next step is the standard library's definition
// (count, load, hold, clear), as docs/notation.md "Sequencing" states; that a hold with no way
// out or a wait on a flag nothing changes never ends is common practice, no source.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { codes, edit, found } from '../support/findings';
import { sequencerDemo, shiftLoopDemo } from '../support/sequencer';

const root = join(__dirname, '../..');
const read = (path: string) => readFileSync(join(root, path), 'utf8');
const windlass = read('examples/windlass-32.pwt');
const flowCodes = ['micro-loop', 'loop-exit-unchanged', 'jump-outside', 'step-unreachable', 'class-no-end'];


describe('control-flow checks stay silent on correct sequencer machines', () => {
  it.each([
    ['windlass-32', windlass],
    ['the sequencer demo', sequencerDemo()],
    ['the shift-loop demo', shiftLoopDemo()],
  ])('%s has no diagnostics at all', (_name, text) => {
    expect(codes(text)).toEqual([]);
  });

  it('a wait whose exit flag the loop latches again is not loop-exit-unchanged', () => {
    // BRANCH waits at step 3 until the comparator says taken, latching it again each step.
    const text = edit(sequencerDemo(), '  3 if taken:', '  3 if !taken: x.rs1.oe, x.rs2.oe, cmp.ck, seqop=hold\n  3 if taken:');
    expect(codes(text).filter((c) => flowCodes.includes(c))).toEqual([]);
  });
});

describe('micro-loop', () => {
  it('fires on its fault example at the step that holds for ever, naming the steps and the instruction', () => {
    const d = found(read('examples/faults/micro-loop.pwt'), 'micro-loop');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('2');
    expect(d[0].line).toBe('  2: a.oe, b.ck, cnt.dn, seqop=hold');
    expect(d[0].message).toMatch(/^add reaches step 2 of class OP, from which no path returns the sequencer `seq` to step 0/);
  });

  it('fires on the shift loop when its exit holds instead of returning to 0', () => {
    const text = edit(shiftLoopDemo(), '  4 else: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, seqop=clear', '  4 else: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, seqop=hold');
    const d = found(text, 'micro-loop');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('4');
    expect(d[0].line).toMatch(/^  4 if !shz:/);
    expect(d[0].message).toMatch(/^slli reaches step 4 of class OP-IMM/);
    expect(codes(text).filter((c) => flowCodes.includes(c))).toEqual(['micro-loop']);
  });

  it('is silent when no step of the class returns to 0 at all (class-no-end says so)', () => {
    const text = edit(read('examples/faults/micro-loop.pwt'), '  1 if z: a.oe, b.ck, seqop=clear', '  1 if z: a.oe, b.ck, seqop=hold');
    expect(codes(text)).toEqual(['class-no-end']);
  });
});

describe('loop-exit-unchanged', () => {
  it('fires on its fault example at the waiting step, naming the flag', () => {
    const d = found(read('examples/faults/loop-exit-unchanged.pwt'), 'loop-exit-unchanged');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('1');
    expect(d[0].line).toBe('  1 if !z: a.oe, b.ck, seqop=hold');
    expect(d[0].message).toMatch(/^step 1 of class OP repeats for add until `z` changes, but no step of the loop changes it: entered with z=0/);
  });

  it('is silent once the loop counts its counter down', () => {
    const text = edit(read('examples/faults/loop-exit-unchanged.pwt'), '  1 if !z: a.oe, b.ck, seqop=hold', '  1 if !z: a.oe, b.ck, cnt.dn, seqop=hold');
    expect(codes(text)).toEqual([]);
  });

  it('fires on windlass-32 when the shift phase forgets to count down, at each use of the phase', () => {
    const text = edit(windlass, 't.ck, cnt.dn, seqop=hold', 't.ck, seqop=hold');
    const d = found(text, 'loop-exit-unchanged');
    expect(d.map((x) => x.range)).toEqual(['use shift at 3', 'use shift at 3']);
    expect(d.map((x) => x.message.split(' for ')[0])).toEqual(['step 3 of class OP-IMM repeats', 'step 3 of class OP repeats']);
    expect(d[0].message).toContain('until `shz` changes');
    expect(codes(text).filter((c) => flowCodes.includes(c))).toEqual(['loop-exit-unchanged', 'loop-exit-unchanged']);
  });

  it('follows a combinational flag: it changes only where a loop step drives the bus it reads', () => {
    // A zero detector on a kept bus: `busy` reads `result` within the step (model/flagFacts.ts).
    const base = edit(
      edit(
        edit(read('examples/faults/loop-exit-unchanged.pwt'), 'bus result 8\n', 'kind zdet "zero detector"\n  setting width number = 8 "bits"\n  input a width "the bus it watches"\n  flag nz = a != 0\nbus result 8 keeper\n'),
        'part seq',
        'part zd zdet result -> busy\npart seq',
      ),
      'address 8\n  step 0..1  z 2  opcode 3..7',
      'address 9\n  step 0..1  z 2  opcode 3..7  busy 8',
    );
    const waiting = edit(edit(base, '  1 if !z: a.oe, b.ck, seqop=hold', '  1 if busy: seqop=hold'), '  1 else: seqop=clear', '  1 else: cnt.dn, seqop=clear');
    const d = found(waiting, 'loop-exit-unchanged');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('1');
    expect(d[0].message).toContain('until `busy` changes, but no step of the loop changes it: entered with busy=1');
    // Driving the bus in the loop (the same in both words, so the address settles) may change it.
    const driven = edit(edit(waiting, '  1 if busy: seqop=hold', '  1 if busy: a.oe, b.ck, seqop=hold'), '  1 else: cnt.dn, seqop=clear', '  1 else: a.oe, cnt.dn, seqop=clear');
    expect(codes(driven)).toEqual([]);
  });

  it('fires on a wait for the comparator that does not latch it again', () => {
    const text = edit(sequencerDemo(), '  3 if taken:', '  3 if !taken: pc.oe, alu.fn=passa, alu.oe, mar.ck, seqop=hold\n  3 if taken:');
    const d = found(text, 'loop-exit-unchanged');
    expect(d.length).toBeGreaterThan(0);
    expect(d[0].range).toBe('3');
    expect(d[0].message).toContain('until `taken` changes');
  });
});

describe('jump-outside', () => {
  it('fires on its fault example at the jumping step, naming the target', () => {
    const d = found(read('examples/faults/jump-outside.pwt'), 'jump-outside');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('1');
    expect(d[0].line).toBe('  1 if z: a.oe, b.ck, seqop=load, next=3');
    expect(d[0].message).toMatch(/^step 1 of class OP jumps to step 3, which the class does not write/);
  });

  it('fires on windlass-32 when the shift set-up jumps past the phase', () => {
    const text = edit(windlass, 't.ck, imm.fmt=i, imm.oe, cnt.ld\n', 't.ck, imm.fmt=i, imm.oe, cnt.ld, seqop=load, next=5\n');
    const d = found(text, 'jump-outside');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('2');
    expect(d[0].line).toMatch(/^  2 if funct3=-01: .*next=5$/);
    expect(d[0].message).toMatch(/^step 2 of class OP-IMM jumps to step 5/);
  });

  it('is silent on a jump to a step the class writes', () => {
    const text = edit(read('examples/faults/jump-outside.pwt'), 'seqop=load, next=3', 'seqop=load, next=2');
    expect(codes(text)).toEqual([]);
  });
});

describe('step-unreachable', () => {
  it('fires on its fault example at the step jumped over, not at the target', () => {
    const d = found(read('examples/faults/step-unreachable.pwt'), 'step-unreachable');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('1');
    expect(d[0].line).toBe('  1: a.oe, b.ck, cnt.dn, seqop=clear');
  });

  it('is silent on a step reached only by a jump back', () => {
    const text = edit(read('examples/faults/step-unreachable.pwt'), '  2: a.oe, b.ck, seqop=clear\n', '  2 if z: a.oe, b.ck, seqop=clear\n  2 else: a.oe, b.ck, seqop=load, next=1\n');
    expect(codes(text)).toEqual([]);
  });

  it('fires on the shift-loop demo when the loop exits before its last written step', () => {
    const text = edit(shiftLoopDemo(), '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld\n', '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld, seqop=load, next=4\n  5: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, seqop=clear\n');
    const d = found(text, 'step-unreachable');
    expect(d.map((x) => x.line)).toEqual(['  5: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, seqop=clear']);
  });
});

describe('coverage along the step graph', () => {
  const slliStep3 = '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld\n';

  it('a step only SLLI reaches need not cover the other OP-IMM instructions (no guard-gap)', () => {
    const text = edit(shiftLoopDemo(), slliStep3, '  3 if funct3=001: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld\n');
    expect(codes(text)).toEqual([]);
  });

  it('guard-gap still fires, naming only SLLI, when the step does not cover the one instruction that reaches it', () => {
    const text = edit(shiftLoopDemo(), slliStep3, '  3 if funct3=101: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld\n');
    const d = found(text, 'guard-gap');
    expect(d).toHaveLength(1);
    expect(d[0].range).toBe('3');
    expect(d[0].message).toMatch(/; slli would run the fill word/);
  });

  it('a decode map on a step reached only by a jump past an ending step needs a row for every instruction that jumps there', () => {
    // OP jumps from step 2 to step 6 (step 3 is never reached); step 6 uses op_fn, which lacks `and`.
    let text = edit(sequencerDemo(), '  2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n', '  2: seqop=load, next=6\n  3: pc.inc, seqop=clear\n  6: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n');
    expect(codes(text)).toEqual(['step-unreachable']);
    text = edit(text, '   111 0 and', '');
    const uncovered = found(text, 'instruction-uncovered');
    expect(uncovered.length).toBeGreaterThan(0);
    expect(uncovered.map((d) => d.message).join('\n')).toContain('and');
  });
});
