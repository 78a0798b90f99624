// Hover text, computed by the core: every strobe of the demo explained completely (checked
// against facts read from the demo's text by this test, not by the core), exact text for a few
// hovers, and the step words checked against the encoder's own image of the demo.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { hover } from '../../server/src/core/ide/hover';
import { demoText, offsetOf } from './support';

const demo = analyse(demoText);
const hoverAt = (needle: string, delta = 0, nth = 0) => hover(demo, offsetOf(demoText, needle, delta, nth))?.markdown;

interface StrobeFacts {
  name: string;
  kind: string;
  wiring: string;
  level: 'high' | 'low';
  description: string;
  bit: number;
}

/** Strobe declarations and their bits, read with regular expressions from the demo's text. */
function strobeFacts(): StrobeFacts[] {
  const bits = new Map<string, number>();
  const wordBody = demoText.slice(demoText.indexOf('word 32'), demoText.indexOf('address 13'));
  for (const m of wordBody.matchAll(/([a-z][\w.]*) (\d+)(?!\.\.)\b/g)) bits.set(m[1], Number(m[2]));
  return [...demoText.matchAll(/^strobe (\S+)\s+(\w+)([^"]*?)\s+active (high|low)[^"\n]*"([^"]*)"/gm)].map((m) => ({
    name: m[1],
    kind: m[2],
    wiring: m[3].trim(),
    level: m[4] as 'high' | 'low',
    description: m[5],
    bit: bits.get(m[1])!,
  }));
}

/** Per strobe: how many step alternatives assert it, and in how many classes (phases expanded). */
function usageFromText(): Map<string, { steps: number; classes: Set<string> }> {
  const phases = new Map<string, string[][]>();
  const usage = new Map<string, { steps: number; classes: Set<string> }>();
  let current: { kind: 'phase' | 'class'; name: string; steps: string[][] } | undefined;
  const classes: { name: string; steps: string[][] }[] = [];
  for (const line of demoText.split('\n')) {
    let m: RegExpExecArray | null;
    if ((m = /^phase (\S+)/.exec(line))) {
      current = { kind: 'phase', name: m[1], steps: [] };
      phases.set(m[1], current.steps);
    } else if ((m = /^class (\S+)/.exec(line))) {
      current = { kind: 'class', name: m[1], steps: [] };
      classes.push(current);
    } else if (/^\S/.test(line)) {
      current = undefined;
    } else if (current && (m = /^\s+use (\S+)/.exec(line))) {
      current.steps.push(...phases.get(m[1])!);
    } else if (current && (m = /^\s+\d+[^:]*:\s*(.*)$/.exec(line))) {
      current.steps.push(m[1].split(',').map((a) => a.trim().split('=')[0]));
    }
  }
  for (const cls of classes) {
    for (const step of cls.steps) {
      for (const name of new Set(step)) {
        const entry = usage.get(name) ?? { steps: 0, classes: new Set<string>() };
        entry.steps++;
        entry.classes.add(cls.name);
        usage.set(name, entry);
      }
    }
  }
  return usage;
}

describe('strobe hovers of the demo', () => {
  const facts = strobeFacts();
  const usage = usageFromText();

  it('finds all 18 strobes and their bits in the text', () => {
    expect(facts.length).toBe(18);
    expect(facts.every((f) => Number.isInteger(f.bit))).toBe(true);
  });

  for (const f of facts) {
    it(`explains ${f.name} completely`, () => {
      const text = hover(demo, offsetOf(demoText, `strobe ${f.name} `, 7))!.markdown;
      expect(text).toContain(`**strobe \`${f.name}\`** — ${f.description}`);
      expect(text).toContain(`- **kind** \`${f.kind}\` — `);
      if (f.kind === 'enable' || f.kind === 'read') {
        const [source, bus] = f.wiring.split('->').map((s) => s.trim());
        expect(text).toContain(`- **part** \`${source.split('.')[0]}\``);
        expect(text).toContain(`- **bus** \`${bus}\``);
      } else if (f.kind === 'clock' && f.wiring.includes('->')) {
        const [bus, target] = f.wiring.split('->').map((s) => s.trim());
        expect(text).toContain(`- **part** \`${target.split('.')[0]}\``);
        expect(text).toContain(`- **bus** \`${bus}\``);
      } else if (f.kind === 'write') {
        const [bus, target] = f.wiring.split('->').map((s) => s.trim());
        expect(text).toContain(`- **part** \`${target}\``);
        expect(text).toContain(`- **bus** \`${bus}\``);
      } else if (f.kind === 'end' || f.kind === 'trap') {
        expect(text).toContain('- **part** none');
        expect(text).toContain('- **bus** none');
      } else {
        expect(text).toMatch(/- \*\*part\*\* `\w+`/);
        expect(text).toContain('- **bus** none');
      }
      expect(text).toContain(f.level === 'low' ? 'active low: the ROM bit is 0 when asserted and 1 when idle' : 'active high: the ROM bit is 1 when asserted and 0 when idle');
      // `word 32 as 4 x 8`: chip c holds bits 8c..8c+7 on its data pins D0..D7.
      expect(text).toContain(`- **bit** ${f.bit} of the word of store \`main\` → **chip ${Math.floor(f.bit / 8)}, D${f.bit % 8}** (28C64`);
      const used = usage.get(f.name)!;
      const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;
      expect(text).toContain(`asserted in ${plural(used.steps, 'step', 'steps')} of ${plural(used.classes.size, 'class', 'classes')}`);
      expect(text).toMatch(/- \*\*effect\*\* \S/);
    });
  }
});

describe('exact hover texts', () => {
  it('x.rs1.oe', () => {
    expect(hoverAt('strobe x.rs1.oe', 8)).toBe(
      [
        '**strobe `x.rs1.oe`** — Card selected by rs1 drives the left bus.',
        '',
        '- **kind** `enable` — output enable: the part drives the bus for the whole step',
        "- **part** `x`, kind `regfile` — register file: 32 registers selected by the instruction's rs1, rs2 and rd fields",
        '- **bus** `left` — 32 lines, with keepers (holds its last value when undriven)',
        '- **level** active low: the ROM bit is 0 when asserted and 1 when idle (typical for /OE and /WE inputs)',
        '- **bit** 0 of the word of store `main` → **chip 0, D0** (28C64, 8192 × 8)',
        '- **used** asserted in 6 steps of 6 classes: JALR, BRANCH, LOAD, STORE, OP-IMM, OP',
        // From the library definition's port `rs1` (parts/library/standard.ts).
        "- **effect** `x.rs1` (the register the instruction's rs1 field (bits 19..15) selects) drives bus `left` for the whole step; reading ir from the instruction register",
        '- **load** reaches 124 inputs: 0.12 mA; the outputs of store main are rated 0.4 mA, margin 0.28 mA — an estimate from the figures in the table',
      ].join('\n'),
    );
  });

  it('a field value in a step: code in decimal and binary', () => {
    // `alu.fn=sub` does not occur in the demo's steps; `add` does (AUIPC step 2).
    expect(hoverAt('alu.fn=add', 7)).toBe(['**value `add`** of field `alu.fn` — code **0** = 0b0000 (4 bits)', '', '`alu`: `y` = `a + b`'].join('\n'));
    expect(hoverAt('sra=13', 1)).toContain('**value `sra`** of field `alu.fn` — code **13** = 0b1101 (4 bits)');
  });

  it('the field mem.size with its values table', () => {
    expect(hoverAt('field mem.size', 7)).toBe(
      [
        '**field `mem.size`** — Memory access size; the codes follow funct3.',
        '',
        '- **width** 3 bits, controls part `mem`, kind `memory` — memory port: reads and writes bytes, halfwords and words (little-endian, spec 2.6)',
        '- **bits** 24..26 of the word of store `main` → **chip 3, D0..D2** (28C64, 8192 × 8)',
        '- **idle** `byte` (code 0): the value where no step sets the field',
        '- **used** set in 13 steps of 11 classes (11 through phases): LUI, AUIPC, JAL, JALR, BRANCH, LOAD, STORE, OP-IMM, OP, MISC-MEM, SYSTEM',
        '- **maps** `load_size`, `store_size`',
        '',
        '| value | code | binary | meaning |',
        '|---|---|---|---|',
        // Each value's meaning is the arm of the memory port's `data` it selects: little-endian
        // bytes, sign- or zero-extended (RISC-V Unprivileged ISA 20191213, 2.6: lb/lh/lw/lbu/lhu).
        '| `byte` | 0 | 000 | `data` = `sext(m[addr], 32)` |',
        '| `half` | 1 | 001 | `data` = `sext({m[addr + 1], m[addr]}, 32)` |',
        '| `word` | 2 | 010 | `data` = `{m[addr + 3], m[addr + 2], m[addr + 1], m[addr]}` |',
        '| `ubyte` | 4 | 100 | `data` = `zext(m[addr], 32)` |',
        '| `uhalf` | 5 | 101 | `data` = `zext({m[addr + 1], m[addr]}, 32)` |',
      ].join('\n'),
    );
  });

  it('a step that takes a field from a map: one word per map row', () => {
    const text = hoverAt('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn', 0)!;
    expect(text).toBe(
      [
        '**step 2 of class OP** — always applies',
        '',
        '- **asserts** `x.rs1.oe`, `x.rs2.oe`, `alu.oe`, `x.rd.ck`, `pc.inc`, `done`',
        '- **sets** `alu.fn` from map `op_fn`',
        '- **word** of store `main` depends on `funct3`, `f7b5` through map `op_fn`: one word per row, hex per chip',
        '',
        '| funct3 f7b5 | alu.fn | chip 0 | chip 1 | chip 2 | chip 3 |',
        '|---|---|---|---|---|---|',
        '| 000 0 | add | 0x2C | 0xCE | 0x80 | 0x00 |',
        '| 000 1 | sub | 0x2C | 0xCE | 0x88 | 0x00 |',
        '| 001 0 | sll | 0x2C | 0xCE | 0x81 | 0x00 |',
        '| 010 0 | slt | 0x2C | 0xCE | 0x82 | 0x00 |',
        '| 011 0 | sltu | 0x2C | 0xCE | 0x83 | 0x00 |',
        '| 100 0 | xor | 0x2C | 0xCE | 0x84 | 0x00 |',
        '| 101 0 | srl | 0x2C | 0xCE | 0x85 | 0x00 |',
        '| 101 1 | sra | 0x2C | 0xCE | 0x8D | 0x00 |',
        '| 110 0 | or | 0x2C | 0xCE | 0x86 | 0x00 |',
        '| 111 0 | and | 0x2C | 0xCE | 0x87 | 0x00 |',
      ].join('\n'),
    );
  });

  it('a guarded step: the guard and the word per chip', () => {
    expect(hoverAt('3 if taken')).toBe(
      [
        '**step 3 of class BRANCH** — applies when `taken=1`',
        '',
        '- **asserts** `pc.oe`, `imm.oe`, `alu.oe`, `pc.ck`, `done`',
        '- **sets** `imm.fmt`=`b` (2), `alu.fn`=`add` (0)',
        '- **word** of store `main`, hex per chip (chip 0 holds bits 0..7): chip 0 `0x13`, chip 1 `0xCA`, chip 2 `0xA0`, chip 3 `0x00`',
      ].join('\n'),
    );
    expect(hoverAt('3 else')).toContain('**step 3 of class BRANCH** — `else`: applies when no other line of this step does');
  });

  it('a class: the RV32I instructions its opcode selects', () => {
    expect(hoverAt('class OP ', 6)).toBe(
      [
        '**class `OP`** — rd = rs1 op rs2',
        '',
        '- **opcode** 0110011 — RV32I OP (R format)',
        '- **instructions** add, sub, sll, slt, sltu, xor, srl, sra, or, and (10)',
        '- **steps** 3 (0..2), 3 alternatives',
        '- **phases** `fetch` from step 0',
        '- **steps to end** min 3, max 3 (fetch included)',
        '  - add, sub, sll, slt, sltu, xor, srl, sra, or, and: min 3, max 3',
      ].join('\n'),
    );
    expect(hoverAt('class SYSTEM', 6)).toContain('- **instructions** ecall, ebreak (2)');
  });

  it('a bus: drivers and loads, step by step', () => {
    const text = hoverAt('bus left', 4)!;
    expect(text).toContain('- **keeper** yes: when nothing drives the bus its lines keep the last driven value');
    expect(text).toContain('- **driven by** `x.rs1.oe` (x.rs1), `pc.oe` (pc)');
    expect(text).toContain('- **loaded by** no strobe');
    expect(text).toContain('- **read by** `alu` (input `a`), `cmp` (input `a`)');
    expect(text).toContain('- step 0 of phase fetch: driven by `pc.oe`');
    expect(text).toContain('- step 2 of class BRANCH: driven by `x.rs1.oe`');
    const noKeeper = hoverAt('bus result', 4)!;
    expect(noKeeper).toContain('- **keeper** no: when nothing drives the bus its lines float');
    expect(noKeeper).toContain('- step 3 of class BRANCH (taken=1): driven by `alu.oe`; loaded by `pc.ck`');
  });

  it('a part: kind, settings, ports and strobes', () => {
    expect(hoverAt('part pc ', 5)).toBe(
      [
        '**part `pc`** — Program counter; bit 0 is always stored as 0.',
        '',
        '- **kind** `counter` — counter: a register that can also count up by its increment',
        '- **settings** width=32; inc=4 (what a count strobe adds); bit0=zero (zero: bit 0 is always stored as 0 (RV32I jump targets need it)); reset=0 (value after reset)',
        // The ports of the library's counter with this part's bit0=zero: its select picks `in & ~1`.
        "- **ports** `out`: output, drives a bus through an enable strobe: the value it holds (`q`); `load`: input, loads a bus at a clock strobe's closing edge: loads the bus (`q <= in & ~1`); `count`: acts at a count strobe's closing edge: adds its increment (`q <= q + inc & ~1`, inc=4)",
        '- **strobes** `pc.oe` enable pc.out → `left`; `pc.ck` clock `result` → pc.load; `pc.inc` count',
      ].join('\n'),
    );
  });

  it('jargon words: kinds, address inputs, keywords and ports', () => {
    // The kind's header, then its definition from the standard library (parts/library/standard.ts).
    const kind = hoverAt('regfile', 1)!;
    expect(kind.split('\n')[0]).toBe('**part kind `regfile`** — register file: 32 registers selected by the instruction\'s rs1, rs2 and rd fields');
    expect(kind).toContain('- **defined in** the standard library (read-only; go to definition opens it)');
    expect(kind).toContain('```phasewright\nkind regfile ');
    expect(hoverAt('funct3 5..7', 1)).toBe('**address input `funct3`** — instruction bits 14..12: selects the operation, branch condition or access size');
    expect(hoverAt('keeper', 1)).toContain('**`keeper`** — bus-hold keepers');
    // x0=hardwired: the library's rs1 reads 0 for register 0 (RISC-V Unprivileged ISA 20191213, 2.1).
    expect(hoverAt('enable x.rs1', 10)).toBe("**port `rs1` of `x`** — output, drives a bus through an enable strobe: the register the instruction's rs1 field (bits 19..15) selects (`ir[19:15] == 0 ? 0 : r[ir[19:15]]`)");
    expect(hoverAt('taken cond', 1)).toContain('**flag `taken`** — one bit of part `cmp`, kind `compare` — comparator: tests its two operand buses and latches a flag: `taken = f`, latched by `cmp.latch` at the closing edge (reading a from `left`, b from `right`, ir from the instruction register)');
  });

  it('says nothing over a comment or blank space', () => {
    expect(hover(demo, offsetOf(demoText, 'invented three-bus'))).toBeUndefined();
    expect(hover(demo, offsetOf(demoText, 'machine "Halyard-32"', -1))).toBeUndefined();
  });
});

describe('step words agree with the encoder', () => {
  it('an OP sub at step 2 is the image word at its address', () => {
    // Address lines of the demo: step 0..2, taken 3, f7b5 4, funct3 5..7, opcode 8..12.
    // sub: opcode 0110011 (bits 6..2 = 01100), funct3 000, f7b5 1 (RISC-V Unprivileged ISA, ch. 24).
    const encoded = encodeMachine(demo.machine);
    const store = encoded.stores[0];
    const address = 2 | (1 << 4) | (0b000 << 5) | (0b01100 << 8);
    expect(store.words[address]).toBe(0x0088ce2c);
    expect(hoverAt('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn')).toContain('| 000 1 | sub | 0x2C | 0xCE | 0x88 | 0x00 |');
  });
});

describe('hover shows the budget from the entered figures', () => {
  it('gives a strobe\'s load against the control store\'s rating, and each bus driver\'s margin', async () => {
    const { readFileSync } = await import('node:fs');
    const { analyse } = await import('../../server/src/core/analysis');
    const { hover } = await import('../../server/src/core/ide/hover');
    const text = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');
    const a = analyse(text);
    const at = (probe: string) => hover(a, text.indexOf(probe) + probe.indexOf(' ') + 2)!.markdown.split('\n');
    // x.rd.ck reaches 31 cards x 4 inputs x 1 uA = 0.124 mA against the 28C64's 0.4 mA.
    expect(at('strobe x.rd.ck')).toContain('- **load** reaches 124 inputs: 0.12 mA; the outputs of store main are rated 0.4 mA, margin 0.28 mA — an estimate from the figures in the table');
    expect(at('bus result').filter((l) => l.startsWith('- **load per line**'))).toEqual([
      '- **load per line** driven by `t`: reaches 148 inputs and an LED (0.97 mA): 1.12 mA; `t` is rated 6 mA, margin 4.88 mA — an estimate from the figures in the table',
      '- **load per line** driven by `alu`: reaches 144 inputs and an LED (0.97 mA): 1.11 mA; `alu` is rated 6 mA, margin 4.89 mA — an estimate from the figures in the table',
      '- **load per line** driven by `mem`: reaches 148 inputs and an LED (0.97 mA): 1.12 mA; `mem` is rated 4 mA, margin 2.88 mA — an estimate from the figures in the table',
    ]);
  });
});
