// The listing on a machine with a sequencer part (issue 15, item 5): each word's line ends with
// where the step goes next with that word's codes, read back from the burned word through the
// sequencer's definition (model/sequencing.ts): `-> N`, `stays`, `-> 0 (ends)`. A machine without
// a sequencer keeps its listing as it was (tests/cli/demo-regression.test.ts pins the demo's).
//
// The expected targets follow from the tables' own steps (examples/windlass-32.pwt; the
// next-address demo of tests/support/sequencer.ts): common practice, no source. The hex words
// are the encoder's, held here so that a change to either shows.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { planBuild } from '../../server/src/core/encode/plan';
import { nextAddressDemo } from '../support/sequencer';

function listing(text: string, source: string, allowed: string[] = []): string[] {
  const analysis = analyse(text);
  expect(analysis.diagnostics.filter((d) => d.severity === 'error').map((d) => d.code)).toEqual(allowed);
  const plan = planBuild(analysis.machine, { stem: 't', source, formats: ['list'] });
  const file = plan.files.find((f) => f.name === 't.main.lst')!;
  expect(file.kind).toBe('text');
  return [...(file.kind === 'text' ? file.chunks() : [])].join('').split('\n');
}

const at = (lines: string[], ...addresses: string[]) => addresses.map((a) => lines.find((l) => l.startsWith(`  ${a}  `)));

describe('the listing of windlass-32 (a sequencer that counts, holds and clears)', () => {
  const lines = listing(readFileSync(new URL('../../examples/windlass-32.pwt', import.meta.url), 'utf8'), 'windlass-32.pwt');

  it('says in its head what the last item of a line is', () => {
    expect(lines).toContain("# Last on a word's line: where the sequencer `seq` goes next with that word's codes: -> N (step N), stays (the same step again), -> 0 (ends) (back to step 0: the instruction ends).");
  });

  it('SLLI: the fetch counts on, step 2 to the loop, the loop step stays until the counter is zero, then ends', () => {
    expect(at(lines, '0x0420', '0x0421', '0x0422', '0x0423', '0x2423')).toEqual([
      '  0x0420  step=0 taken=0 f7b5=0 funct3=001 opcode=00100 shz=0  OP-IMM     83    CE    87    00    00     pc.oe mar.ck alu.oe alu.fn=passa  -> 1',
      '  0x0421  step=1 taken=0 f7b5=0 funct3=001 opcode=00100 shz=0  OP-IMM     4B    9E    87    02    00     ir.ck mem.rd mem.size=word  -> 2',
      '  0x0422  step=2 taken=0 f7b5=0 funct3=001 opcode=00100 shz=0  OP-IMM     0A    CB    87    10    00     x.rs1.oe t.ck imm.oe alu.oe cnt.ld alu.fn=passa imm.fmt=i  -> 3',
      '  0x0423  step=3 taken=0 f7b5=0 funct3=001 opcode=00100 shz=0  OP-IMM     0B    CF    09    A0    00     t.ck alu.oe t.left cnt.dn alu.fn=shl1 seqop=hold  stays',
      '  0x2423  step=3 taken=0 f7b5=0 funct3=001 opcode=00100 shz=1  OP-IMM     2F    DC    87    C0    00     x.rd.ck pc.inc t.oe seqop=clear  -> 0 (ends)',
    ]);
  });

  it('BEQ and JALR: both ways of a branch end at step 3; JALR counts to step 4 and ends there', () => {
    expect(at(lines, '0x1802', '0x1803', '0x180B', '0x1903', '0x1904')).toEqual([
      '  0x1802  step=2 taken=0 f7b5=0 funct3=000 opcode=11000 shz=0  BRANCH     08    FE    87    00    00     x.rs1.oe x.rs2.oe cmp.ck  -> 3',
      '  0x1803  step=3 taken=0 f7b5=0 funct3=000 opcode=11000 shz=0  BRANCH     2B    DE    87    C0    00     pc.inc seqop=clear  -> 0 (ends)',
      '  0x180B  step=3 taken=1 f7b5=0 funct3=000 opcode=11000 shz=0  BRANCH     13    CA    A0    C0    00     pc.oe pc.ck imm.oe alu.oe alu.fn=add imm.fmt=b seqop=clear  -> 0 (ends)',
      '  0x1903  step=3 taken=0 f7b5=0 funct3=000 opcode=11001 shz=0  JALR       07    C6    80    00    00     x.rd.ck pc.oe four.oe alu.oe alu.fn=add  -> 4',
      '  0x1904  step=4 taken=0 f7b5=0 funct3=000 opcode=11001 shz=0  JALR       1B    DC    87    C0    00     pc.ck t.oe seqop=clear  -> 0 (ends)',
    ]);
  });

  it('every word from the table names its next step; fill runs do not', () => {
    const words = lines.filter((l) => l.startsWith('  0x') && !/ fill[ :]/.test(l));
    // As many as the head says come from the table.
    const head = /^# (\d+) words from the table/.exec(lines.find((l) => l.includes('words from the table'))!)!;
    expect(words.length).toBe(Number(head[1]));
    expect(words.length).toBeGreaterThan(2000);
    for (const line of words) expect(line, line).toMatch(/ {2}(-> \d+|-> 0 \(ends\)|stays)$/);
    for (const line of lines.filter((l) => / fill \(/.test(l))) expect(line).not.toMatch(/->|stays/);
  });
});

describe('the listing of the next-address demo (each word names its next step, a pick chooses)', () => {
  it('BRANCH step 3 jumps to 4 when taken and to 5 when not, as its pick field says', () => {
    const lines = listing(nextAddressDemo(), 't.pwt');
    // Address lines: step 0..2, taken 3, f7b5 4, funct3 5..7, opcode 8..12; BRANCH is opcode 11000.
    // Chip 4 holds nx (bits 32..34) and alt (35..37): nx=5, alt=4 is 0b100101 = 0x25; pick is bit 28 (chip 3's 0x10).
    expect(at(lines, '0x1802', '0x1803', '0x180B', '0x1804', '0x1805')).toEqual([
      '  0x1802  step=2 taken=0 f7b5=0 funct3=000 opcode=11000  BRANCH     08    FE    0E    00    03     x.rs1.oe x.rs2.oe cmp.ck nx=3  -> 3',
      '  0x1803  step=3 taken=0 f7b5=0 funct3=000 opcode=11000  BRANCH     0B    DE    0E    00    25     pick=next nx=5 alt=4  -> 5',
      '  0x180B  step=3 taken=1 f7b5=0 funct3=000 opcode=11000  BRANCH     0B    DE    0E    10    25     pick=other nx=5 alt=4  -> 4',
      '  0x1804  step=4 taken=0 f7b5=0 funct3=000 opcode=11000  BRANCH     13    CA    20    00    00     pc.oe pc.ck imm.oe alu.oe alu.fn=add imm.fmt=b nx=0  -> 0 (ends)',
      '  0x1805  step=5 taken=0 f7b5=0 funct3=000 opcode=11000  BRANCH     2B    DE    0E    00    00     pc.inc nx=0  -> 0 (ends)',
    ]);
  });
});

describe('a sequencer whose next step comes from a bus', () => {
  it('the word does not fix it: the listing says `-> ?`, not a guess', () => {
    const text = [
      'kind busstep "a step register that loads its next step from a bus"',
      '  setting width number = 2 "bits"',
      '  input t width "the next step (a bus)"',
      '  state q width = 0',
      '  holds step q',
      '  on next always: q <= t "at every closing edge: the bus"',
      'bus s 2',
      'part k constant 2 value=1',
      'part seq busstep 2 s',
      'strobe k.oe enable k -> s',
      'word 8 as 8',
      '  k.oe 0',
      'address 7',
      '  step 0..1   opcode 2..6',
      'class X opcode=0110011',
      '  0: k.oe',
      '  1: k.oe',
      '',
    ].join('\n');
    // The bus always carries 1, so the class never ends (class-no-end), and the checks cannot
    // follow a next step read from a bus (next-step-unknown); the listing is still written.
    const lines = listing(text, 't.pwt', ['class-no-end', 'next-step-unknown']).filter((l) => l.startsWith('  0x'));
    expect(lines).toEqual([
      '  0x0000-0x002F  fill (48 words)',
      '  0x0030  step=0 opcode=01100  X          01     k.oe  -> ? (the word does not fix it)',
      '  0x0031  step=1 opcode=01100  X          01     k.oe  -> ? (the word does not fix it)',
      '  0x0032-0x007F  fill (78 words)',
    ]);
  });
});
