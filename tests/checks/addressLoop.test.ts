// address-loop, and the step timing of a combinational flag on the address lines
// (docs/notation.md, "Timing model"). The fixtures are halyard-32 with its branch comparator
// made combinational (tests/support/ownKinds.ts, halyardWithCombinationalBranch) and small
// tables with caret annotations. The timing figures are the demo's own (its header names their
// sources); adding the second store access in series is common practice, no source.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { hover } from '../../server/src/core/ide/hover';
import { dedent, expectDiagnostics } from '../support/annotated';
import { halyardWithCombinationalBranch } from '../support/ownKinds';
import { DEMO_TEXT } from '../sim/support';

const detector = dedent(`
  kind same "equality detector on a bus and a register"
    input x 8 "the bus"
    input y 8 "the register it compares with"
    flag eq = x == y
  kind addsub "adder of two buses"
    input a 8
    input b 8
    control fn: add sub
    drive y 8 = select fn { add: a + b, sub: a - b }
  bus data 8
  bus p 8 keeper
  bus q 8 keeper
  part a register 8
  part b register 8
  part c register 8
  part s addsub p q
  part d same data c -> eq
  strobe a.oe enable a -> p active low
  strobe b.oe enable b -> q active low
  strobe s.oe enable s -> data active low
  strobe c.ck clock data -> c
  strobe done end
  field s.fn 1 -> s { add=0 sub=1 }
  word 8 as 1 x 8
    a.oe 0  b.oe 1  s.oe 2  c.ck 3  done 4  s.fn 5
  address 3
    step 0..1  eq 2
`);

describe('address-loop', () => {
  it('fires where the words of the two flag values drive a bus the flag reads differently (the range is the first word\'s step number)', () => {
    const a = expectDiagnostics(
      detector +
        dedent(`
          class OP opcode=0110011
            0: a.oe, b.oe
            1 if eq: a.oe, s.fn=add, s.oe, done
          # ^ address-loop: \`q\` is driven by \`b.oe\` with eq=0 but by nothing with eq=1
            1 else: a.oe, b.oe, s.fn=add, s.oe, c.ck, done
        `),
      ['address-loop'],
    );
    const d = a.diagnostics.find((x) => x.code === 'address-loop')!;
    expect(d.message).toBe(
      "step 1 of class OP: combinational flag `eq` (it reads bus `data`) chooses this step's word within the step, but the two words drive its inputs differently: `q` is driven by `b.oe` with eq=0 but by nothing with eq=1. The flag can change the word that decides it, so the address may oscillate or settle either way; make both words drive the flag's inputs the same, or latch the flag at a closing edge and test it in the next step",
    );
    expect(d.related!.map((r) => r.message)).toEqual(['the word with eq=1', 'the word with eq=0']);
  });

  it('follows the path through a driver\'s control field: another ALU function is another flag input', () => {
    expectDiagnostics(
      detector +
        dedent(`
          class OP opcode=0110011
            0: a.oe, b.oe
            1 if !eq: a.oe, b.oe, s.fn=add, s.oe, c.ck, done
          # ^ address-loop: \`s.fn\` is add with eq=0 but sub with eq=1
            1 else: a.oe, b.oe, s.fn=sub, s.oe, done
        `),
      ['address-loop'],
    );
  });

  it('is silent where both words drive the flag\'s inputs the same and differ only at the closing edge', () => {
    expectDiagnostics(
      detector +
        dedent(`
          class OP opcode=0110011
            0: a.oe, b.oe
            1 if eq: a.oe, b.oe, s.fn=add, s.oe, done
            1 else: a.oe, b.oe, s.fn=add, s.oe, c.ck, done
        `),
      ['address-loop'],
    );
  });

  it('is silent on the demo with a combinational branch comparator, and fires when the taken word drives pc instead of rs1', () => {
    expect(analyse(halyardWithCombinationalBranch(DEMO_TEXT)).diagnostics).toEqual([]);
    const text = halyardWithCombinationalBranch(DEMO_TEXT, ['  2 if taken: pc.oe, x.rs2.oe', '  2 else: x.rs1.oe, x.rs2.oe, pc.inc, done', '  3: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done']);
    const found = analyse(text).diagnostics;
    expect(found.map((d) => [d.code, text.slice(d.span.start, d.span.end), text.slice(0, d.span.start).split('\n').length])).toEqual([['address-loop', '2', text.slice(0, text.indexOf('  2 if taken: pc.oe')).split('\n').length]]);
    expect(found[0].message).toContain('`left` is driven by `x.rs1.oe` with taken=0 but by `pc.oe` with taken=1');
  });

  it('is silent for a latched flag (the demo as shipped)', () => {
    expect(analyse(DEMO_TEXT).diagnostics.filter((d) => d.code === 'address-loop')).toEqual([]);
  });
});

describe('step timing through a combinational flag', () => {
  // At 2200 kHz a step lasts 455 ns: the demo's longest path (JAL step 3, 390 ns) fits.
  const fast = (text: string) => text.replace('clock_khz=1000', 'clock_khz=2200');

  it('is silent on the demo with its latched flag at 2200 kHz', () => {
    expect(analyse(fast(DEMO_TEXT)).diagnostics.filter((d) => d.code === 'step-timing')).toEqual([]);
  });

  it('adds the flag\'s path and a second store access where the guards test a combinational flag', () => {
    const text = fast(halyardWithCombinationalBranch(DEMO_TEXT));
    const found = analyse(text).diagnostics.filter((d) => d.code === 'step-timing');
    expect(found).toHaveLength(1);
    expect(text.slice(found[0].span.start, found[0].span.end)).toBe('clock_khz=2200');
    // access 150 + en 38 + settle 10 + comparator tpd 120 + access 150 + pc's tsu 20 = 488 ns.
    expect(found[0].message).toBe(
      'at 2200 kHz a step lasts 455 ns, but step 2 of class BRANCH (else) needs 488 ns (control store access 150 + x.rs1.oe enable 38 + left settling 10 + cmp flag taken to the address 120 + control store access 150 + pc.inc setup 20) before pc.inc; the fastest safe clock is 2049 kHz before margin (an estimate from your figures)',
    );
    expect(found[0].related!.map((r) => r.message)).toEqual(['step 2 of class BRANCH needs 488 ns', 'step 2 of class BRANCH needs 468 ns']);
  });
});

describe('hover on a flag', () => {
  it('says a combinational flag settles within the step and which buses it reads', () => {
    const text = halyardWithCombinationalBranch(DEMO_TEXT);
    const markdown = hover(analyse(text), text.indexOf('taken 3') + 1)?.markdown ?? '';
    expect(markdown).toContain("- **combinational**: it reads bus `left`, bus `right` and settles within the step from what the step's word drives");
  });

  it('says the demo\'s flag is latched', () => {
    const markdown = hover(analyse(DEMO_TEXT), DEMO_TEXT.indexOf('taken 3') + 1)?.markdown ?? '';
    expect(markdown).toContain('- **latched**: it reads only what changes at a closing edge');
  });
});
