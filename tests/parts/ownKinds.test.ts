// Parts of a table's own kinds in the checks: a multiplexer reads only the input its field
// picks in a step, so the other may float; the input it does pick must be driven, and a load
// through it of an undriven bus is reported like a load through the ALU.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { gantryWithConnection, gantryWithHalves } from '../support/ownKinds';
import { hover } from '../../server/src/core/ide/hover';

const gantry = readFileSync(new URL('../../examples/gantry-32.pwt', import.meta.url), 'utf8');
const lui = '  2: imm.fmt=u, imm.oe, bsel=imm, bmux.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done';

function codesOf(text: string): { code: string; message: string; line: string }[] {
  const a = analyse(text);
  return a.diagnostics.map((d) => ({ code: d.code, message: d.message, line: a.lines.lineText(a.lines.position(d.span.start).line) }));
}

describe('checks on parts of the table\'s own kinds', () => {
  it('the kind the README shows is the example\'s, as written', () => {
    const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
    const shown = /```\n(kind opa_mux[\s\S]*?)```/.exec(readme)![1];
    expect(gantry).toContain(shown);
  });

  it('the example checks clean: each multiplexer reads only the bus its field picks', () => {
    expect(gantry).toContain(lui);
    expect(codesOf(gantry)).toEqual([]);
  });

  it('a load through a multiplexer whose chosen input nothing drives is reported', () => {
    const broken = gantry.replace(lui, '  2: imm.fmt=u, bsel=imm, bmux.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done');
    const found = codesOf(broken).filter((d) => d.code === 'undriven-latch');
    expect(found).toHaveLength(1);
    expect(found[0].message).toContain('the output `bmux.y` on `opb` computed from bus `immb`');
    expect(found[0].line).toContain('x.rd.ck');
  });

  it('switching the multiplexer to an input nothing drives is reported too', () => {
    const broken = gantry.replace(lui, '  2: imm.fmt=u, imm.oe, bsel=reg, bmux.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done');
    const found = codesOf(broken).filter((d) => d.code === 'undriven-latch');
    expect(found.map((d) => d.message.includes('from bus `rs2`'))).toEqual([true]);
  });

  it('two drivers on one bus through parts of the table\'s own kinds are contention', () => {
    const broken = gantry.replace(lui, '  2: imm.fmt=u, imm.oe, bsel=imm, bmux.oe, alu.fn=passb, alu.oe, p4.oe, x.rd.ck, pc.inc, done');
    expect(codesOf(broken).map((d) => d.code)).toContain('bus-contention');
  });

  describe('strobes that drive some lines of a bus', () => {
    const halves = gantryWithHalves(gantry);
    const jal = '  2: p4lo.oe, p4hi.oe, x.rd.ck';

    it('two drivers of different lines of one bus do not fight, and together feed a load', () => {
      expect(halves).toContain(jal);
      expect(codesOf(halves)).toEqual([]);
    });

    it('a load of a bus some of whose lines nobody drives names those lines', () => {
      const found = codesOf(halves.replace(jal, '  2: p4lo.oe, x.rd.ck')).filter((d) => d.code === 'undriven-latch');
      expect(found.map((d) => d.message)).toEqual([expect.stringContaining('nothing drives lines 31..16 of `result` in step 2 of class JAL')]);
    });

    it('drivers that share lines fight, and the message names the lines', () => {
      const found = codesOf(halves.replace(jal, '  2: p4lo.oe, alu.fn=passa, alu.oe, x.rd.ck')).filter((d) => d.code === 'bus-contention');
      expect(found.map((d) => d.message)).toEqual([expect.stringContaining('`p4lo.oe` and `alu.oe` both drive lines 15..0 of bus `result` in step 2 of class JAL')]);
    });
  });

  describe('connections, which drive in every step', () => {
    const connected = gantryWithConnection(gantry);

    it('a bus only a connection drives checks clean', () => {
      expect(connected).toContain('connect pc -> pcb');
      expect(codesOf(connected)).toEqual([]);
    });

    it('an enable on a connected bus fights the connection wherever it is asserted', () => {
      const broken = connected.replace('strobe imm.oe   enable imm -> immb', 'strobe imm.oe   enable imm -> immb\nstrobe imm.pc   enable imm -> pcb').replace('imm.oe 8', 'imm.oe 8  imm.pc 39').replace('word 32 as 4 x 8', 'word 40 as 5 x 8').replace(lui, '  2: imm.fmt=u, imm.pc, imm.oe, bsel=imm, bmux.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done');
      const found = codesOf(broken).filter((d) => d.code === 'bus-contention');
      expect(found.map((d) => d.message)).toEqual([expect.stringContaining('`connect pc` (always on) and `imm.pc` both drive bus `pcb` in step 2 of class LUI')]);
    });

    it('two connections on one bus fight in every step, reported once where they are declared', () => {
      const broken = connected.replace('connect pc -> pcb', 'connect pc -> pcb\nconnect mar -> pcb');
      const found = codesOf(broken).filter((d) => d.code === 'bus-contention');
      expect(found).toHaveLength(1);
      expect(found[0].message).toContain('`connect pc` and `connect mar` both drive bus `pcb` in every step');
      expect(found[0].line.startsWith('connect mar -> pcb')).toBe(true);
    });
  });

  it('hover on a part of the table\'s own kind names its kind, settings, inputs and the lines its strobes drive', () => {
    const halves = gantryWithHalves(gantry);
    const a = analyse(halves);
    const at = (needle: string, delta = 0) => hover(a, halves.indexOf(needle) + delta)!.markdown;
    const part = at('part p4hi', 6);
    expect(part).toContain('- **kind** `half4` (of this table) — one half of pc + 4');
    expect(part).toContain('- **settings** half=high; x from part `pc`');
    // What the port computes with this part's setting: the select on `half` takes its `high` arm.
    expect(part).toContain('- **ports** `part`: output, drives a bus through an enable strobe (`(x + 4)[31:16]`)');
    expect(part).toContain('`p4hi.oe` enable p4hi.part → `result[31:16]`');
    const strobe = at('strobe p4hi.oe', 8);
    expect(strobe).toContain('- **part** `p4hi`, kind `half4` (of this table) — one half of pc + 4');
    expect(strobe).toContain('- **bus** `result` — lines 31..16 of 32 (the others are left to other drivers)');
  });
});
