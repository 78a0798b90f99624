// The demo machine with a sequencer part in place of the implicit step counter, and a variant
// doing SLLI as a loop of one-bit shifts counted down by a loop counter (tests/sim/sequencer.test.ts
// runs them; tests/logic/safeCare.test.ts classifies their word bits). Not a test file itself.
import { readFileSync } from 'node:fs';
import { expect } from 'vitest';
import { DEMO_TEXT, assemble, exitWords, ins } from '../sim/support';

/** Text with `from` replaced by `to` (exactly once). */
function replaceOnce(text: string, from: string, to: string): string {
  const at = text.indexOf(from);
  expect(at, `"${from}" occurs`).toBeGreaterThanOrEqual(0);
  expect(text.indexOf(from, at + 1), `"${from}" occurs once`).toBe(-1);
  return text.slice(0, at) + to + text.slice(at + from.length);
}

/** The demo with its `end` strobe removed and a fifth chip of word bits (32..39) for the step's hardware. */
function demoWithoutEnd(): string {
  let text = DEMO_TEXT;
  text = replaceOnce(text, 'strobe done      end                     active high loads=2 in_ua=1 "Last step: the step counter returns to 0."\n', '');
  text = replaceOnce(text, '  alu.fn 16..19   imm.fmt 20..22   done 23\n', '  alu.fn 16..19   imm.fmt 20..22\n');
  text = replaceOnce(text, 'word 32 as 4 x 8 chip=28C64', 'word 40 as 5 x 8 chip=28C64');
  return text;
}

/**
 * The demo with a sequencer: the `end` strobe removed, a 3-bit `sequencer` part (the address has
 * step 0..2) with its op field and a number field for the jump target in a fifth chip.
 */
export function sequencerDemo(): string {
  let text = demoWithoutEnd();
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
  return withShiftLoop(sequencerDemo(), ['   next 32..34\n', '   next 32..34\n  acc.oe 35   acc.ck 36   one.oe 37   sh.ld 38   sh.dn 39\n'], [
    '  2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n',
    [
      '  2 if funct3=001: x.rs1.oe, alu.fn=passa, alu.oe, acc.ck',
      '  2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear',
      '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld',
      '  4 if !shz: acc.oe, one.oe, alu.fn=sll, alu.oe, acc.ck, sh.dn, seqop=load, next=4',
      '  4 else: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, seqop=clear',
      '',
    ].join('\n'),
  ]);
}

/**
 * A demo variant with the shift loop's datapath: an accumulator, the constant 1 and a 5-bit loop
 * counter (its zero flag `shz` on address line 13, so 28C256 chips), their strobes placed by the
 * `bits` replacement, and the OP-IMM steps by the `steps` one.
 */
function withShiftLoop(base: string, bits: [string, string], steps: [string, string]): string {
  let text = base;
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
  text = replaceOnce(text, bits[0], bits[1]);
  text = replaceOnce(text, 'address 13\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12', 'address 14\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12   shz 13');
  return replaceOnce(text, steps[0], steps[1]);
}

/**
 * Every step's line with its next step named: a step that ends (`, done` in the demo) goes to
 * step 0 (`nx=0`), any other step `n` to `n + 1` (`nx=n+1`). Lines that already name one keep it.
 */
function nameNextSteps(text: string): string {
  return text
    .split('\n')
    .map((line) => {
      const step = /^ {2}(\d+)( if [^:]*| else)?: /.exec(line);
      if (!step || /\bnx=/.test(line)) return line;
      if (line.includes(', done')) return line.replace(', done', ', nx=0');
      return `${line}, nx=${Number(step[1]) + 1}`;
    })
    .join('\n');
}

/**
 * The demo as a next-address machine: the `end` strobe removed, a 3-bit `nextstep` part (the
 * library's next-address sequencer) whose `next` and `other` targets are number fields of the
 * word (`nx`, `alt`) and whose `pick` control is a one-bit field. Every step names its next
 * step (`nx=0` where the demo ends); BRANCH decides in a step of its own whose two alternatives,
 * under the `taken` address line, pick `next` (step 5: pc + 4) or `other` (step 4: pc + offset).
 */
export function nextAddressDemo(): string {
  let text = demoWithoutEnd();
  text = replaceOnce(text, '  mem.size 24..26   sys.trap 27\n', '  mem.size 24..26   sys.trap 27   pick 28\n  nx 32..34   alt 35..37\n');
  text = replaceOnce(text, 'part four constant', 'part seq  nextstep 3 next=nx other=alt "The step register: each word names its next step and another target."\npart four constant');
  text = replaceOnce(
    text,
    'field mem.size',
    'field pick 1 -> seq.pick idle=next { next=0 other=1 } "Which target the step goes to."\nfield nx 3 "The next step."\nfield alt 3 "The other target."\nfield mem.size',
  );
  text = replaceOnce(
    text,
    '  3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done\n  3 else: pc.inc, done\n',
    [
      '  3 if taken: pick=other, nx=5, alt=4',
      '  3 else: pick=next, nx=5, alt=4',
      '  4: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done',
      '  5: pc.inc, done',
      '',
    ].join('\n'),
  );
  text = nameNextSteps(text);
  expect(text).not.toContain(', done');
  return text;
}

/**
 * The next-address demo with SLLI one bit per step, as shiftLoopDemo does it: acc = rs1, a loop
 * counter loads shamt, and step 4 names itself as its next step while the counter runs (it
 * shifts acc and counts down), then writes rd and goes to step 0. The counter's zero flag is
 * address line 13.
 */
export function nextAddressShiftDemo(): string {
  return withShiftLoop(nextAddressDemo(), ['   alt 35..37\n', '   alt 35..37   acc.oe 38   acc.ck 39\n  one.oe 29   sh.ld 30   sh.dn 31\n'], [
    '  2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, nx=0\n',
    [
      '  2 if funct3=001: x.rs1.oe, alu.fn=passa, alu.oe, acc.ck, nx=3',
      '  2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, nx=0',
      '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld, nx=4',
      '  4 if !shz: acc.oe, one.oe, alu.fn=sll, alu.oe, acc.ck, sh.dn, nx=4',
      '  4 else: acc.oe, alu.fn=passa, alu.oe, x.rd.ck, pc.inc, nx=0',
      '',
    ].join('\n'),
  ]);
}

/**
 * A program of SLLI by 0, 1, 5 and 31 (and one SRLI), exiting with 8; `checkShifts` holds its
 * results to SLLI's meaning (RISC-V Unprivileged ISA 20191213, 2.4: shift left by imm[4:0]).
 * Eight OP-IMM instructions: four one-step ones and the four shifts.
 */
export function shiftProgram(): number[] {
  return assemble([
    ins('addi', { rd: 1, rs1: 0, imm: -3 }), // 0xfffffffd
    ins('slli', { rd: 2, rs1: 1, imm: 0 }),
    ins('slli', { rd: 3, rs1: 1, imm: 1 }),
    ins('slli', { rd: 4, rs1: 1, imm: 5 }),
    ins('addi', { rd: 5, rs1: 0, imm: 1 }),
    ins('slli', { rd: 6, rs1: 5, imm: 31 }),
    ins('srli', { rd: 7, rs1: 6, imm: 28 }), // the other OP-IMM functions still take one step
    ins('add', { rd: 10, rs1: 7, rs2: 0 }),
    ...exitWords(),
  ]);
}

/** The registers `shiftProgram` leaves: x2 = -3 << 0, x3 = -3 << 1, x4 = -3 << 5, x6 = 1 << 31. */
export function checkShifts(regs: ArrayLike<number>): void {
  const values = Array.from(regs, (v) => v >>> 0);
  expect(values[2]).toBe(0xfffffffd);
  expect(values[3]).toBe(0xfffffffa);
  expect(values[4]).toBe(0xffffffa0);
  expect(values[6]).toBe(0x80000000);
}

/**
 * The sequencer demo whose FENCE waits a fixed number of steps, counted by the library's
 * `presetcount` preset from a number field of the word (no bus): step 2 presets the count
 * `count`, step 3 holds while the counter is not zero, counting down, and ends at zero. FENCE
 * then takes 2 + 1 + (count + 1) steps. The counter's zero flag is address line 13.
 */
export function fixedLoopDemo(count: number): string {
  let text = sequencerDemo();
  text = replaceOnce(text, 'part four constant', 'part w    presetcount 3 count=wcount -> wz "Counts a fixed wait down from the word\'s count."\npart four constant');
  text = replaceOnce(
    text,
    'strobe sys.trap',
    ['strobe w.set     count w.preset          active high "Wait counter takes the count in the word."', 'strobe w.dn      count w.down            active high "Wait counter counts down."', 'strobe sys.trap'].join('\n'),
  );
  text = replaceOnce(text, 'field next 3 "Where a jump goes."\n', 'field next 3 "Where a jump goes."\nfield wcount 3 "How many steps FENCE waits."\n');
  text = replaceOnce(text, 'chip=28C64', 'chip=28C256');
  text = replaceOnce(text, '   next 32..34\n', '   next 32..34   wcount 35..37   w.set 38   w.dn 39\n');
  text = replaceOnce(text, 'address 13\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12', 'address 14\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12   wz 13');
  return replaceOnce(text, '  2: pc.inc, seqop=clear\n', `  2: w.set, wcount=${count}\n  3 if !wz: w.dn, wait\n  3 else: pc.inc, end\n`);
}

/**
 * examples/windlass-32.pwt with OP-IMM dispatched by a jump table: step 2 loads the sequencer
 * with the step a decode map on funct3 gives (the shifts' loop at step 3, the others' ALU step
 * at 4), in place of a guard on funct3. ADDI..ANDI take 4 steps, the shifts 4 + shamt.
 */
export function dispatchDemo(): string {
  let text = readFileSync(new URL('../../examples/windlass-32.pwt', import.meta.url), 'utf8');
  text = replaceOnce(
    text,
    '  2 if funct3=-01: x.rs1.oe, alu.fn=passa, alu.oe, t.ck, imm.fmt=i, imm.oe, cnt.ld\n  2 else: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n  use shift at 3\n',
    '  2: x.rs1.oe, alu.fn=passa, alu.oe, t.ck, imm.fmt=i, imm.oe, cnt.ld, seqop=load, next=imm_next\n  use shift at 3\n  4: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, seqop=clear\n',
  );
  return replaceOnce(text, 'map load_size', 'map imm_next (funct3) -> next "OP-IMM: the shifts go to the loop at step 3, the others to step 4."\n  000 4   001 3   010 4   011 4   100 4   101 3   110 4   111 4\n\nmap load_size');
}
