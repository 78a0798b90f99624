// The layout checks (bits, address lines, chips) and the address checks (what the ROM can see).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { dedent, expectDiagnostics } from '../support/annotated';
import { decoderStoreTable } from '../support/fixtures';
import { prelude } from './prelude';

const base = dedent(`
  bus result 8
  part a register 8
  part b register 8
  strobe a.oe enable a -> result active low
  strobe b.ck clock result -> b
  strobe done end
  field spare 3 { off=0 on=5 }
`);

const body = dedent(`
  class OP opcode=0110011
    0: a.oe, b.ck, spare=on, done
`);

function table(layout: string): string {
  return base + dedent(layout) + body;
}

describe('bit-overlap, bit-range, placement-width', () => {
  it('fire on shared bits, bits beyond the word, and wrong widths', () => {
    expectDiagnostics(
      table(`
        word 8 as 1 x 8
          a.oe 0  b.ck 0  done 9  spare 3..4
        #         ^^^^^^ bit-overlap: already carries \`a.oe\`
        #                 ^^^^^^ bit-range: outside the 8-bit word
        #                         ^^^^^^^^^^ placement-width: 3 bits wide but placed on 2
        address 1
          step 0
      `),
      ['bit-overlap', 'bit-range', 'placement-width'],
    );
  });

  it('fire on address lines too', () => {
    expectDiagnostics(
      table(`
        word 8 as 1 x 8
          a.oe 0  b.ck 1  done 2  spare 3..5
        address 6
          step 0  opcode 0..4  funct3 6..8
        #         ^^^^^^^^^^^ bit-overlap: address line 0
        #                      ^^^^^^^^^^^ bit-range: address line 8
      `),
      ['bit-overlap', 'bit-range', 'placement-width'],
    );
  });

  it('are silent on a good layout', () => {
    expectDiagnostics(table(`
      word 8 as 1 x 8
        a.oe 0  b.ck 1  done 2  spare 3..5
      address 1
        step 0
    `), ['bit-overlap', 'bit-range', 'placement-width']);
  });
});

describe('unplaced-signal, value-too-wide, chip-capacity', () => {
  it('unplaced-signal fires at the declaration of a used but unplaced strobe', () => {
    const a = analyse(table(`
      word 8 as 1 x 8
        a.oe 0  b.ck 1  spare 3..5
      address 1
        step 0
    `));
    const d = a.diagnostics.filter((x) => x.code === 'unplaced-signal');
    expect(d.map((x) => a.text.slice(x.span.start, x.span.end))).toEqual(['done']);
  });

  it('value-too-wide fires on a code that needs more bits than the field has', () => {
    expectDiagnostics(
      dedent(`
        field f 2 { a=0 b=4 }
        #                 ^ value-too-wide: does not fit in the 2 bit(s)
      `),
      ['value-too-wide'],
    );
  });

  it('chip-capacity fires on too few chip bits, a too-small chip and a chip of the wrong width', () => {
    const a = analyse(table(`
      word 16 as 1 x 8 chip=28C16
        a.oe 0  b.ck 1  done 2  spare 3..5
      address 12
        step 0
    `));
    const messages = a.diagnostics.filter((d) => d.code === 'chip-capacity').map((d) => d.message);
    expect(messages).toEqual([
      'the chips of store main hold 8 data bits but the word has 16; add chips or narrow the word',
      'store main uses 12 address lines (4096 words) but a 28C16 holds 2048 words (11 lines); choose a bigger chip or fewer address lines',
    ]);
    const wrongWidth = analyse(table(`
      word 16 as 1 x 16 chip=28C64
        a.oe 0  b.ck 1  done 2  spare 3..5
      address 1
        step 0
    `));
    expect(wrongWidth.diagnostics.filter((d) => d.code === 'chip-capacity').map((d) => d.message)).toEqual([
      'a 28C64 has 8 data lines, but the word is split into 16-bit chips; split it as 2 x 8',
    ]);
  });

  it('chip-capacity is silent when the chips fit (28C64: 8K x 8, 13 address lines)', () => {
    expectDiagnostics(table(`
      word 16 as 2 x 8 chip=28C64
        a.oe 0  b.ck 1  done 2  spare 3..5
      address 13
        step 0
    `), ['chip-capacity']);
  });
});

describe('not-addressable and store-ambiguous', () => {
  it('not-addressable fires on a guard input no address line carries', () => {
    const text = prelude.replace('  step 0..2  taken 3  f7b5 4  funct3 5..7  opcode 8..12', '  step 0..2  f7b5 4  funct3 5..7  opcode 8..12') +
      dedent(`
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3 if taken: pc.inc, done
        #      ^^^^^ not-addressable: no store's address lines carry it
          3 else: pc.inc, done
      `);
    expectDiagnostics(text, ['not-addressable']);
  });

  it('store-ambiguous fires when a step-less store holds a strobe that changes from step to step', () => {
    const a = analyse(readFixture('store-ambiguous'));
    const d = a.diagnostics.filter((x) => x.code === 'store-ambiguous');
    expect(d).toHaveLength(1);
    expect(d[0].message).toContain('store decode cannot hold `b.ck`: class OP step 0 and class OP step 1 need different values');
  });

  it('store-ambiguous is silent for a decoder store holding a field that only execute steps set', () => {
    const text = decoderStoreTable;
    expect(analyse(text).diagnostics.map((d) => d.code)).toEqual([]);
  });
});

function readFixture(name: string): string {
  return require('node:fs').readFileSync(`examples/faults/${name}.pwt`, 'utf8');
}
