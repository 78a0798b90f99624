// The notation of a sequencer part (issue 15, first slice): `holds step`, an edge port that acts
// at every closing edge (`on NAME always`), an input wired to a number field of the word
// (`input target 4 field`, `target=next`) and number fields set by a number (`next=5`). What is
// wrong is reported where it stands, with its exact range; what is right reads clean and is
// encoded with the number as the field's code.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { decodeWord, encodeMachine } from '../../server/src/core/encode/encoder';
import { hover } from '../../server/src/core/ide/hover';
import { parse } from '../../server/src/core/syntax/parser';
import { expectDiagnostics } from '../support/annotated';
import { planBuild } from '../../server/src/core/encode/plan';
import { nextAddressShiftDemo } from '../support/sequencer';

/** A small sketch (no `isa`): one register, the library's sequencer with 2 step bits, its fields; lines as given. */
function sketch(parts: string[], steps: string[], extra: string[] = [], classLine = ['class X opcode=0110011']): string {
  return [
    'bus b 8',
    'part r register 8',
    ...parts,
    'strobe r.oe enable r -> b',
    ...extra,
    'field seqop 2 -> seq.op idle=count { count=0 load=1 hold=2 clear=3 }',
    'field next 2',
    'word 8 as 8',
    '  r.oe 0   seqop 1..2   next 3..4',
    'address 7',
    '  step 0..1   opcode 2..6',
    ...classLine,
    ...steps,
    '',
  ].join('\n');
}

const seq = ['part seq sequencer 2 target=next'];
const clean = ['  0: r.oe', '  1: seqop=load, next=3', '  3: seqop=clear'];

describe('a sequencer part in the notation', () => {
  it('reads clean: a number field without values, a jump to a number, the end by clearing the sequencer', () => {
    const text = sketch(seq, clean);
    expect(parse(text).errors).toEqual([]);
    expect(analyse(text).diagnostics.map((d) => `${d.code}: ${d.message}`)).toEqual([]);
  });

  it("encodes a number field's number as its code, beside the op field's value codes", () => {
    const { machine } = analyse(sketch(seq, clean));
    const store = encodeMachine(machine).stores[0];
    // Address: step on lines 0..1, opcode bits 6..2 (0110011 >> 2 = 0b01100) on lines 2..6.
    const at = (step: number) => step + (0b01100 << 2);
    expect(Object.fromEntries(decodeWord(machine, store, at(1)).fields)).toEqual({ seqop: 1, next: 3 });
    expect(Object.fromEntries(decodeWord(machine, store, at(3)).fields)).toEqual({ seqop: 3, next: 0 });
    // Word bits: seqop (bits 1..2) = 01 and next (bits 3..4) = 11 at step 1: 0b11010.
    expect(store.words[at(1) * store.lanes]).toBe(0b11010);
  });

  it("a number out of the field's range is a bad number at the number", () => {
    expectDiagnostics(
      sketch(seq, [
        '  0: r.oe, seqop=load, next=4',
        '#                           ^ bad-number: `next` has 2 bit(s): a number from 0 to 3; 4 does not fit',
        '  1: seqop=clear, next=0x10',
        '#                      ^^^^ bad-number: 16 does not fit',
      ]),
      ['bad-number', 'wrong-wiring', 'unexpected-token'],
    );
  });

  it('a number for a field of named values, and a name for a number field, are wrong wiring', () => {
    expectDiagnostics(
      sketch(seq, [
        '  0: r.oe, seqop=1, next=load',
        '#                ^ wrong-wiring: `seqop` has named values (count, load, hold, clear), not numbers',
        '#                        ^^^^ wrong-wiring: `next` is a number field: give it a number from 0 to 3',
        '  1: seqop=clear',
      ]),
      ['bad-number', 'wrong-wiring', 'undefined-name'],
    );
  });

  it('an `end` strobe on a sequencer machine is wrong wiring at its kind, saying to clear the sequencer', () => {
    expectDiagnostics(
      sketch(seq, ['  0: r.oe, done', '  1: seqop=clear'], ['strobe done end', '#           ^^^ wrong-wiring: end an instruction by returning the sequencer to step 0 with `seqop=clear`']),
      ['wrong-wiring'],
    );
  });

  it('a second part holding the step is wrong wiring at its name', () => {
    expectDiagnostics(
      sketch([...seq, 'part seq2 sequencer 2 target=next', '#    ^^^^ wrong-wiring: only one part may hold the step counter; `seq` already does'], ['  0: r.oe', '  1: seqop=clear']),
      ['wrong-wiring'],
    );
  });

  it('a `field` input wired to something not a number field is reported at the name on the part line', () => {
    const steps = ['  0: r.oe', '  1: seqop=clear'];
    expectDiagnostics(
      sketch(['part seq sequencer 2 target=seqop', '#                           ^^^^^ wrong-wiring: input `target` of `seq` reads a number from the word, but `seqop` controls `seq`'], steps),
      ['wrong-wiring'],
    );
    expectDiagnostics(
      sketch(['part seq sequencer 2 target=r.oe', '#                           ^^^^ wrong-wiring: takes a number field of the word (`field r.oe WIDTH`); `r.oe` is a strobe'], steps),
      ['wrong-wiring'],
    );
    expectDiagnostics(sketch(['part seq sequencer 2 target=b', '#                           ^ wrong-wiring: `b` is a bus'], steps), ['wrong-wiring']);
  });

  it('widths must agree: the field with the input, the step state with the step lines', () => {
    expectDiagnostics(
      sketch(
        [
          'part seq sequencer 3 target=next',
          '#    ^^^ wrong-wiring: part `seq` (kind `sequencer`) holds the step in 3 bit(s), but the address lines read 2 step bit(s) (`step 0..1`); make them equal',
          '#                           ^^^^ wrong-wiring: input `target` of `seq` is 3 bit(s) wide, but the field `next` is 2; make them equal',
        ],
        ['  0: r.oe', '  1: seqop=clear'],
      ),
      ['wrong-wiring'],
    );
  });

  it('no strobe may drive an `always` port', () => {
    expectDiagnostics(
      sketch(seq, ['  0: r.oe, s.n', '  1: seqop=clear'], ['strobe s.n count seq.next', '#                ^^^^^^^^ wrong-wiring: `seq.next` acts at every closing edge by itself']),
      ['wrong-wiring'],
    );
  });

  it('a class that never returns the sequencer to 0 does not end; one that does, by a jump, does', () => {
    expectDiagnostics(
      sketch(seq, ['  0: r.oe', '  1: seqop=load, next=1'], [], ['class X opcode=0110011', '#     ^ class-no-end: class X never returns the sequencer `seq` to step 0']),
      ['class-no-end'],
    );
    // A jump to step 0 ends the instruction as a clear does (the sequencer is back at 0).
    expectDiagnostics(sketch(seq, ['  0: r.oe', '  1: seqop=load, next=0']), ['class-no-end', 'step-gap']);
    // Counting past the last step wraps the 2-bit step to 0: the hardware ends there too.
    expectDiagnostics(sketch(seq, ['  0: r.oe', '  1: r.oe', '  2: r.oe', '  3: r.oe']), ['class-no-end']);
  });

  describe('step sugar: `goto N`, `wait` and `end` set the fields wired to the part holding the step', () => {
    const wordsOf = (text: string) => {
      const { machine } = analyse(text);
      return [...encodeMachine(machine).stores[0].words];
    };

    it('`goto 3` is `seqop=load, next=3`, `end` is `seqop=clear`, `wait` is `seqop=hold`: the same words', () => {
      const sugared = sketch(seq, ['  0: r.oe', '  1: goto 3', '  2: wait', '  3: end']);
      const plain = sketch(seq, ['  0: r.oe', '  1: seqop=load, next=3', '  2: seqop=hold', '  3: seqop=clear']);
      // Step 2 is jumped over in both, and the control-flow checks say so, the same way for both.
      const said = (text: string) => analyse(text).diagnostics.map((d) => `${d.code}: ${d.message}`);
      expect(said(sugared)).toEqual(['step-unreachable: step 2 of class X is never reached: no instruction of the class counts into it or jumps to it from step 0, so its word never runs; jump to it where it is meant to run, or remove it']);
      expect(said(sugared)).toEqual(said(plain));
      expect(wordsOf(sugared)).toEqual(wordsOf(plain));
    });

    it('a `goto` target out of range is a bad number at the number; `goto` without a sequencer is wrong wiring', () => {
      expectDiagnostics(sketch(seq, ['  0: r.oe, goto 4', '#               ^ bad-number: 4 does not fit', '  1: end']), ['bad-number', 'wrong-wiring']);
      const plain = ['bus b 8', 'part r register 8', 'strobe r.oe enable r -> b', 'strobe done end', 'word 8 as 8', '  r.oe 0   done 1', 'address 7', '  step 0..1   opcode 2..6', 'class X opcode=0110011', '  0: r.oe, goto 1', '#          ^^^^^^ wrong-wiring: `goto` jumps the sequencer, and this machine has none', '  1: done', ''].join('\n');
      expectDiagnostics(plain, ['wrong-wiring', 'bad-number', 'undefined-name']);
    });

    it('a declared strobe named `end` stays a strobe', () => {
      const plain = ['bus b 8', 'part r register 8', 'strobe r.oe enable r -> b', 'strobe end end', 'word 8 as 8', '  r.oe 0   end 1', 'address 7', '  step 0..1   opcode 2..6', 'class X opcode=0110011', '  0: r.oe', '  1: end', ''].join('\n');
      expect(analyse(plain).diagnostics).toEqual([]);
    });
  });

  it('a kind may not set a state both in an `always` port and in another port', () => {
    expectDiagnostics(
      [
        'kind stepper "a step counter"',
        '  state q 2 = 0',
        '  holds step q',
        '  on next always: q <= q + 1',
        '  on load 2: q <= in',
        '#            ^ kind-definition: `q` is set at every closing edge by `on next always`',
        '',
      ].join('\n'),
      ['kind-definition'],
    );
    expectDiagnostics(
      ['kind stepper "a step counter"', '  state q 2 = 0', '  drive out 2 = q', '  on next[n] always: q <= q', '#         ^ kind-definition: an `always` edge port acts at every closing edge with no strobe, so no strobe gives it a number', ''].join('\n'),
      ['kind-definition'],
    );
  });

  it('hover on a number field says so and names the part that reads it', () => {
    const text = sketch(seq, clean);
    const shown = hover(analyse(text), text.indexOf('field next') + 7);
    expect(JSON.stringify(shown)).toContain('a number field (a step sets it with a number, 0 to 3), read by `seq` (input `target`)');
  });
});

describe('step sugar on a next-address sequencer (the library nextstep)', () => {
  // The sugar stands for the number field whose code alone is the next step (docs/notation.md,
  // "Sequencing"): the images must be the very words the fields give when written out.
  const images = (text: string, clean = true) => {
    const analysis = analyse(text);
    if (clean) expect(analysis.diagnostics.filter((d) => d.severity === 'error').map((d) => d.message)).toEqual([]);
    const plan = planBuild(analysis.machine, { stem: 't', source: 't.pwt', formats: ['memh'] });
    return plan.files.map((f) => (f.kind === 'text' ? [...f.chunks()].join('') : Buffer.from(f.image.words.buffer).toString('hex')));
  };

  it('`end`, `goto N` and `wait` give the words of `nx=0`, `nx=N` and `nx=<the step>`', () => {
    const written = nextAddressShiftDemo();
    const sugared = written
      .replaceAll(', nx=0', ', end')
      .replace('  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld, nx=4', '  3: imm.fmt=i, imm.oe, alu.fn=passb, alu.oe, sh.ld, goto 4')
      .replace('  4 if !shz: acc.oe, one.oe, alu.fn=sll, alu.oe, acc.ck, sh.dn, nx=4', '  4 if !shz: acc.oe, one.oe, alu.fn=sll, alu.oe, acc.ck, sh.dn, wait');
    expect(sugared).toContain('wait');
    expect(sugared).not.toContain(', nx=0');
    expect(images(written).join('').length, 'the images are compared as text').toBeGreaterThan(10_000);
    expect(images(sugared)).toEqual(images(written));
    // Not vacuous: a wait in another step gives other words.
    expect(images(sugared.replace('sh.ld, goto 4', 'sh.ld, goto 5'), false)).not.toEqual(images(written));
  });

  it('`wait` in a phase is an error at the word: the step it stands at moves with `use`', () => {
    const text = nextAddressShiftDemo().replace(/phase fetch "[^"]*"\n {2}0: ([^\n]*), nx=1/, (m, actions) => m.replace(`${actions}, nx=1`, `${actions}, wait`));
    expect(text).toContain(', wait');
    const d = analyse(text).diagnostics.filter((x) => x.code === 'wrong-wiring');
    expect(d.map((x) => x.message)[0]).toContain('a phase does not know');
  });
});
