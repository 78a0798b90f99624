// Variants of the examples that declare kinds of their own, shared by the checks and the
// simulator tests.

/**
 * gantry-32 with its return-address adder split into two 16-bit halves that drive lines 15..0
 * and 31..16 of the result bus in the same step (partial-width drives joined on one bus).
 */
export function gantryWithHalves(text: string): string {
  const replaced = text
    .replace('part p4   plus4 pc "pc + 4 for JAL and JALR."', 'part p4lo half4 pc half=low\npart p4hi half4 pc half=high')
    .replace('kind hold ', 'kind half4 "one half of pc + 4"\n  input x 32\n  setting half choice low high = low\n  drive part 16 = select half { low: (x + 4)[15:0], high: (x + 4)[31:16] }\n\nkind hold ')
    .replace('strobe p4.oe    enable p4 -> result', 'strobe p4lo.oe  enable p4lo -> result[15:0]\nstrobe p4hi.oe  enable p4hi -> result[31:16]')
    .replace('p4.oe 15', 'p4lo.oe 15')
    .replace('alu.fn 16..19  t.ck 20  t.oe 21  sys.trap 22  done 23', 'alu.fn 16..19  t.ck 20  t.oe 21  sys.trap 22  done 23  p4hi.oe 24')
    .replace('imm.fmt 24..26  mem.size 27..29  asel 30  bsel 31', 'imm.fmt 25..27  mem.size 28..30  asel 31  bsel 32')
    .replace('word 32 as 4 x 8 chip=28C64', 'word 40 as 5 x 8 chip=28C64')
    .replaceAll('  2: p4.oe, x.rd.ck', '  2: p4lo.oe, p4hi.oe, x.rd.ck')
    .replaceAll('  3: p4.oe, x.rd.ck', '  3: p4lo.oe, p4hi.oe, x.rd.ck');
  if (replaced.includes('p4.oe') || !replaced.includes('p4hi.oe 24')) throw new Error('gantry-32 changed: update gantryWithHalves');
  return replaced;
}

/**
 * gantry-32 with the program counter wired to its own bus for good: `connect pc -> pcb` instead
 * of a strobe, so no step enables it (an always-on connection).
 */
export function gantryWithConnection(text: string): string {
  const replaced = text
    .replace('strobe pc.oe    enable pc -> pcb', 'connect pc -> pcb "The program counter always drives its own bus."')
    .replace('  x.rs1.oe 0  x.rs2.oe 1  x.rd.ck 2  pc.oe 3', '  x.rs1.oe 0  x.rs2.oe 1  x.rd.ck 2')
    .replace(/pc\.oe, /g, '');
  if (/\bpc\.oe\b/.test(replaced)) throw new Error('gantry-32 changed: update gantryWithConnection');
  return replaced;
}

/**
 * gantry-32 with the jump holding register `t` loaded a byte lane at a time: four clock strobes
 * each load one byte of the result bus (`clock result[15:8] -> t.lane1`), so JALR assembles its
 * target from four byte loads in one step (partial-width loads). Also applies to
 * gantryWithHalves's text (the result bus then has drivers of its two halves as well).
 */
export function gantryWithByteLanes(text: string): string {
  const replaced = text
    .replace(
      'kind hold ',
      'kind lanes "holding register loaded a byte at a time; bit 0 always stored as 0"\n' +
        '  state b0 8 = 0\n  state b1 8 = 0\n  state b2 8 = 0\n  state b3 8 = 0\n' +
        '  drive out 32 = {b3, b2, b1, b0}\n' +
        '  on lane0 8: b0 <= in & 0xfe\n  on lane1 8: b1 <= in\n  on lane2 8: b2 <= in\n  on lane3 8: b3 <= in\n\nkind hold ',
    )
    .replace('part t    hold "Jump target of JALR, bit 0 cleared."', 'part t    lanes "Jump target of JALR, bit 0 cleared, loaded a byte at a time."')
    .replace(
      'strobe t.ck     clock result -> t',
      'strobe t.ck0    clock result[7:0] -> t.lane0\nstrobe t.ck1    clock result[15:8] -> t.lane1\nstrobe t.ck2    clock result[23:16] -> t.lane2\nstrobe t.ck3    clock result[31:24] -> t.lane3',
    )
    .replace('  t.ck 20  ', '  t.ck0 20  ')
    .replace(/(\n  imm\.fmt \d+\.\.\d+  mem\.size \d+\.\.\d+  asel \d+  bsel \d+)\n/, '$1\n  t.ck1 36  t.ck2 37  t.ck3 38\n')
    .replace(/word (32 as 4|40 as 5) x 8 chip=28C64/, 'word 40 as 5 x 8 chip=28C64')
    .replace('alu.fn=add, alu.oe, t.ck\n', 'alu.fn=add, alu.oe, t.ck0, t.ck1, t.ck2, t.ck3\n');
  if (/\bt\.ck\b/.test(replaced) || !replaced.includes('t.ck3 38')) throw new Error('gantry-32 changed: update gantryWithByteLanes');
  return replaced;
}

/** The branch comparator of halyard-32 without its latch: its flag is combinational. */
const branchComparatorKind = [
  'kind brcmp "branch comparator without a latch: the address lines read its result within the step"',
  '  input a 32 "operand a (a bus)"',
  '  input b 32 "operand b (a bus)"',
  '  input ir 32 instruction "the instruction register: funct3 is the condition"',
  '  flag taken = select ir[14:12] { 0: a == b, 1: a != b, 4: a <s b, 5: a >=s b, 6: a < b, 7: a >= b, else: 0b0 }',
  '',
].join('\n');

/**
 * halyard-32 with the comparator flag made combinational (kind `brcmp`, no `cmp.ck`): BRANCH
 * compares in step 2 and the same step's word depends on the result. Both words of step 2 put
 * rs1 and rs2 on the operand buses; only what they do at the closing edge differs (a branch not
 * taken ends in step 2, one taken adds the offset in step 3).
 */
export function halyardWithCombinationalBranch(text: string, step2 = ['  2 if taken: x.rs1.oe, x.rs2.oe', '  2 else: x.rs1.oe, x.rs2.oe, pc.inc, done', '  3: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done']): string {
  const replaced = text
    .replace('\nbus left ', `\n${branchComparatorKind}\nbus left `)
    .replace('part cmp  compare left right -> taken cond=funct3 loads=8 in_ua=1 tpd_ns=120 tsu_ns=20 "Branch comparator; the condition comes from funct3."', 'part cmp  brcmp left right -> taken loads=8 in_ua=1 tpd_ns=120 "Branch comparator without a latch; the condition comes from funct3."')
    .replace('strobe cmp.ck    clock cmp               active high "Comparator latches the taken flag."\n', '')
    .replace('alu.oe 12   cmp.ck 13   mem.rd 14', 'alu.oe 12   mem.rd 14')
    .replace('  2: x.rs1.oe, x.rs2.oe, cmp.ck\n  3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done\n  3 else: pc.inc, done', step2.join('\n'));
  if (replaced.includes('cmp.ck') || !replaced.includes('kind brcmp') || !replaced.includes(step2[0])) throw new Error('halyard-32 changed: update halyardWithCombinationalBranch');
  return replaced;
}
