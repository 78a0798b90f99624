// The demo machine with a sequencer part in place of the implicit step counter, and a variant
// doing SLLI as a loop of one-bit shifts counted down by a loop counter (tests/sim/sequencer.test.ts
// runs them; tests/logic/safeCare.test.ts classifies their word bits). Not a test file itself.
import { expect } from 'vitest';
import { DEMO_TEXT } from '../sim/support';

/** Text with `from` replaced by `to` (exactly once). */
function replaceOnce(text: string, from: string, to: string): string {
  const at = text.indexOf(from);
  expect(at, `"${from}" occurs`).toBeGreaterThanOrEqual(0);
  expect(text.indexOf(from, at + 1), `"${from}" occurs once`).toBe(-1);
  return text.slice(0, at) + to + text.slice(at + from.length);
}

/**
 * The demo with a sequencer: the `end` strobe removed, a 3-bit `sequencer` part (the address has
 * step 0..2) with its op field and a number field for the jump target in a fifth chip.
 */
export function sequencerDemo(): string {
  let text = DEMO_TEXT;
  text = replaceOnce(text, 'strobe done      end                     active high loads=2 in_ua=1 "Last step: the step counter returns to 0."\n', '');
  text = replaceOnce(text, '  alu.fn 16..19   imm.fmt 20..22   done 23\n', '  alu.fn 16..19   imm.fmt 20..22\n');
  text = replaceOnce(text, 'word 32 as 4 x 8 chip=28C64', 'word 40 as 5 x 8 chip=28C64');
  text = replaceOnce(text, '  mem.size 24..26   sys.trap 27\n', '  mem.size 24..26   sys.trap 27   seqop 28..29   next 32..34\n');
  text = replaceOnce(
    text,
    'part four constant',
    'part seq  sequencer 3 target=next "The step counter: counts, jumps to `next`, holds or clears."\npart four constant',
  );
  text = replaceOnce(text, 'field mem.size', 'field seqop 2 -> seq.op idle=count { count=0 load=1 hold=2 clear=3 } "What the sequencer does at the closing edge."\nfield next 3 "Where a jump goes."\nfield mem.size');
  const ends = text.split(', done').length - 1;
  expect(ends).toBeGreaterThan(10);
  return text.replaceAll(', done', ', seqop=clear');
}

/**
 * The sequencer demo with SLLI done one bit per step: acc = rs1; a 5-bit loop counter loads
 * shamt from the low lines of the result bus; while it is not zero, acc = acc << 1 and it
 * counts down, jumping back to step 4; at zero rd = acc. The counter's zero flag is address line
 * 13 (so the store takes 28C256s, 32K x 8).
 */
export function shiftLoopDemo(): string {
  let text = sequencerDemo();
  text = replaceOnce(text, 'part four constant', 'part acc  register 32 "Shift accumulator."\npart one  constant 32 value=1 "The constant 1: the shift amount of one loop step."\npart sh   loopcount 5 -> shz "Counts the shifts down from shamt."\npart four constant');
  text = replaceOnce(
    text,
    'strobe sys.trap',
    [
      'strobe acc.oe    enable acc -> left      active low  "Accumulator drives the left bus."',
      'strobe acc.ck    clock result -> acc     active high "Accumulator loads the result bus."',
      'strobe one.oe    enable one -> right     active low  "Constant 1 drives the right bus."',
      'strobe sh.ld     clock result[4:0] -> sh.load active high "Loop counter loads the shift amount (result lines 4..0)."',
      'strobe sh.dn     count sh.down           active high "Loop counter counts down."',
      'strobe sys.trap',
    ].join('\n'),
  );
  text = replaceOnce(text, 'chip=28C64', 'chip=28C256');
  text = replaceOnce(text, '   next 32..34\n', '   next 32..34\n  acc.oe 35   acc.ck 36   one.oe 37   sh.ld 38   sh.dn 39\n');
  text = replaceOnce(text, 'address 13\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12', 'address 14\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12   shz 13');
  text = replaceOnce(
    text,
    '  2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n',
    [
      '  2 if funct3=001: x.rs1.oe, alu.fn=passa, alu.oe, acc.ck',
      '  2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear',
      '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld',
      '  4 if !shz: acc.oe, one.oe, alu.fn=sll, alu.oe, acc.ck, sh.dn, seqop=load, next=4',
      '  4 else: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, seqop=clear',
      '',
    ].join('\n'),
  );
  return text;
}
