// Loads of some lines of a bus (`clock wide[23:8] -> h16`): the undriven-latch and stale-latch
// checks take the lines the load reads one by one. Drivers of different lines (enables of some
// lines, a connection that drives in every step) together cover a load; a load of lines nothing
// drives names exactly those lines; a driver of other lines of the bus does not matter to it,
// even when that driver's own input is undriven. (Project rules, docs/notation.md "Bus lines and
// connections"; the meaning of a floating line versus a kept one is common practice, no source.)
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { expectDiagnostics } from '../support/annotated';
import { machine } from './prelude';

const CODES = ['undriven-latch', 'stale-latch', 'width-mismatch', 'wrong-wiring'];

/** Parts and strobes on a bus `wide` (no keepers) and a bus `kept` (keepers). */
const lanes = `
  bus wide 32
  bus kept 32 keeper
  part lo16 register 16
  part hi16 register 16
  part b8   register 8
  part h16  register 16
  part k16  constant 16 value=0x1234
  part sum8 alu left right
  strobe lo.oe   enable lo16 -> wide[15:0]
  strobe hi.oe   enable hi16 -> wide[31:16]
  strobe lok.oe  enable lo16 -> kept[15:0]
  strobe s8.oe   enable sum8 -> kept[31:16] accept width-mismatch
  strobe b0.ck   clock wide[7:0] -> b8
  strobe b1.ck   clock wide[15:8] -> b8
  strobe b3.ck   clock wide[31:24] -> b8
  strobe mid.ck  clock wide[23:8] -> h16
  strobe kb0.ck  clock kept[7:0] -> b8
  strobe kb3.ck  clock kept[31:24] -> b8
  connect k16 -> wide[31:16]
`;

describe('loads of some lines of a bus', () => {
  it('a load of lines some drivers cover is silent; one of lines nothing drives names them', () => {
    expectDiagnostics(
      machine(`
        ${lanes.trim().split('\n').join('\n        ')}
        class OP opcode=0110011
          use fetch
          2: lo.oe, b0.ck, b1.ck
          3: b0.ck
        #    ^^^^^ undriven-latch: \`b0.ck\` loads \`b8\` from bus \`wide\`, but nothing drives lines 7..0 of \`wide\` in step 3 of class OP
          4: b3.ck, mid.ck
        #           ^^^^^^ undriven-latch: nothing drives lines 15..8 of \`wide\` in step 4 of class OP
          5: lo.oe, mid.ck, pc.inc, done
      `),
      CODES,
    );
  });

  it('a connection covers its lines in every step, and the message names only the lines left', () => {
    // Step 4 above: the connection k16 drives wide[31:16], so b3.ck (31..24) is silent and
    // mid.ck (23..8) misses exactly 15..8; step 5 adds lo.oe for 15..0 and is silent.
    const a = analyse(machine(`
      ${lanes.trim().split('\n').join('\n      ')}
      class OP opcode=0110011
        use fetch
        2: b3.ck, mid.ck, pc.inc, done
    `));
    const found = a.diagnostics.filter((d) => d.code === 'undriven-latch').map((d) => d.message);
    expect(found).toEqual([expect.stringContaining('nothing drives lines 15..8 of `wide` in step 2 of class OP and it has no keepers')]);
  });

  it('with keepers the same load is stale-latch, and names the lines', () => {
    expectDiagnostics(
      machine(`
        ${lanes.trim().split('\n').join('\n        ')}
        class OP opcode=0110011
          use fetch
          2: lok.oe, kb0.ck, kb3.ck, pc.inc, done
        #                    ^^^^^^ stale-latch: nothing drives lines 31..24 of \`kept\` in step 2 of class OP
      `),
      CODES,
    );
  });

  it('a driver of other lines is not followed: its undriven input matters only to loads of its lines', () => {
    // sum8 (the ALU on left and right) drives kept[31:16]; nothing drives `right` in step 2.
    expectDiagnostics(
      machine(`
        ${lanes.trim().split('\n').join('\n        ')}
        class OP opcode=0110011
          use fetch
          2: x.rs1.oe, lok.oe, s8.oe, alu.fn=add, kb0.ck
          3: x.rs1.oe, lok.oe, s8.oe, alu.fn=add, kb3.ck, pc.inc, done
        #                                         ^^^^^^ stale-latch: the output \`sum8.y\` on \`kept\` computed from bus \`right\`
      `),
      CODES,
    );
  });

  it('the loaded lines must match the part\'s width, named exactly; a load of lines the bus lacks is wrong wiring', () => {
    const text = machine(`
      bus wide 32
      part b8  register 8
      part h16 register 16
      strobe b8.ck   clock wide[15:0] -> b8
      strobe h16.ck  clock wide[15:0] -> h16
      strobe x.lo    clock wide[7:0] -> x.rd
      strobe b8.ok   clock wide[15:0] -> b8 accept width-mismatch
      strobe far.ck  clock wide[40:33] -> b8
      #                        ^^^^^^^ wrong-wiring: names a line bus \`wide\` does not have (its lines are 31..0)
    `);
    const a = expectDiagnostics(text, ['wrong-wiring']);
    // width-mismatch spans the whole strobe line (column 0, which a caret annotation cannot mark).
    const widths = a.diagnostics.filter((d) => d.code === 'width-mismatch').map((d) => ({ line: a.lines.lineText(a.lines.position(d.span.start).line), message: d.message }));
    expect(widths).toEqual([
      { line: 'strobe b8.ck   clock wide[15:0] -> b8', message: expect.stringContaining('`b8.load` is 8 bits wide but lines 15..0 of the bus `wide` are 16') },
      { line: 'strobe x.lo    clock wide[7:0] -> x.rd', message: expect.stringContaining('`x.rd` is 32 bits wide but lines 7..0 of the bus `wide` are 8') },
    ]);
  });
});
