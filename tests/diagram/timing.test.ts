// The timing diagram: its structure (one row per strobe the class asserts, one column per
// step, labels), the line levels by polarity, bus ownership, and the word hex under every
// column, which must equal the listing the build writes for the same address (the listing
// comes from the encoder's full walk of the input universe; the diagram lays one alternative).
// The SVG is also parsed by an XML parser outside the project (Python's expat).
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { type GuardChoice, choiceInputsOf, emptyChoice, parseGuardChoice } from '../../server/src/core/diagram/guardChoice';
import { timingDiagram } from '../../server/src/core/diagram/timing';
import { findClass } from '../../server/src/core/diagram/timingModel';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { writeListing } from '../../server/src/core/encode/listing';
import type { Machine } from '../../server/src/core/model/types';
import { haveTools } from '../support/tools';

const root = join(__dirname, '../..');
const demo = analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8'));

function choice(machine: Machine, text: string): GuardChoice {
  const parsed = parseGuardChoice(machine, text);
  if (!parsed.ok) throw new Error(parsed.reason);
  return parsed.choice;
}

function draw(machine: Machine, className: string, guard = '', all = false) {
  const cls = findClass(machine, className);
  if (!cls) throw new Error(`no class ${className}`);
  return timingDiagram(machine, cls, choice(machine, guard), { all, theme: 'light' });
}

/** `data-name` of every row of a kind, in drawing order. */
function rowNames(svg: string, kind: 'strobe' | 'field' | 'bus'): string[] {
  return [...svg.matchAll(new RegExp(`data-row="${kind}" data-name="([^"]+)"`, 'g'))].map((m) => m[1]);
}

function rowAttr(svg: string, kind: string, name: string, attr: string): string | undefined {
  const tag = svg.match(new RegExp(`<g class="row" data-row="${kind}" data-name="${name.replace(/\./g, '\\.')}"[^>]*>`))?.[0];
  return tag?.match(new RegExp(`${attr}="([^"]*)"`))?.[1];
}

/** The hex texts under a column: address and chips, keyed as in the SVG. */
function wordUnder(svg: string, col: number): { address: number; chips: string[] } {
  const address = Number(svg.match(new RegExp(`data-store="main" data-address="(\\d+)" data-col="${col}">`))?.[1]);
  const chips: string[] = [];
  for (let chip = 0; ; chip++) {
    const m = svg.match(new RegExp(`data-store="main" data-chip="${chip}" data-col="${col}">([0-9A-F]+)<`));
    if (!m) break;
    chips.push(m[1]);
  }
  return { address, chips };
}

/** The listing's words by address (fill ranges expanded to the fill word). */
function listingWords(machine: Machine): Map<number, string[]> {
  const encoded = encodeMachine(machine);
  const text = writeListing(machine, encoded, encoded.stores[0], { source: 'halyard-32.pwt' });
  const fill = text.match(/hold the fill word \(every strobe inactive\): ([0-9A-F ]+)\n/)![1].trim().split(' ');
  const words = new Map<number, string[]>();
  for (const line of text.split('\n')) {
    const used = /^ {2}0x([0-9A-F]+) {2}.*? {2}\S+ +((?:[0-9A-F]{2} +){4})/.exec(line);
    if (used) {
      words.set(parseInt(used[1], 16), used[2].trim().split(/ +/));
      continue;
    }
    const range = /^ {2}0x([0-9A-F]+)(?:-0x([0-9A-F]+))? {2}fill/.exec(line);
    if (range) for (let a = parseInt(range[1], 16); a <= parseInt(range[2] ?? range[1], 16); a++) words.set(a, fill);
  }
  return words;
}

describe('timing diagram structure', () => {
  const { svg, model } = draw(demo.machine, 'BRANCH', 'taken=1');

  it('has one row per strobe the class asserts anywhere, in declaration order, and no others', () => {
    // BRANCH asserts these strobes in fetch (steps 0, 1) and in steps 2 and 3 (both alternatives).
    expect(rowNames(svg, 'strobe')).toEqual(['x.rs1.oe', 'x.rs2.oe', 'pc.oe', 'pc.ck', 'pc.inc', 'ir.ck', 'mar.ck', 'imm.oe', 'alu.oe', 'cmp.ck', 'mem.rd', 'done']);
    expect(rowNames(svg, 'strobe')).not.toContain('mem.wr');
    expect(rowNames(svg, 'field')).toEqual(['alu.fn', 'imm.fmt', 'mem.size']);
    expect(rowNames(svg, 'bus')).toEqual(['left', 'right', 'result']);
  });

  it('lists every strobe, field and bus with all', () => {
    const all = draw(demo.machine, 'BRANCH', 'taken=1', true).svg;
    expect(rowNames(all, 'strobe')).toHaveLength(18);
    expect(rowNames(all, 'strobe')).toContain('mem.wr');
    expect(rowNames(all, 'field')).toEqual(['alu.fn', 'imm.fmt', 'mem.size']);
  });

  it('has one column per step with its number, guard and phase', () => {
    expect([...svg.matchAll(/data-col="(\d+)" data-step="(\d+)"/g)].map((m) => `${m[1]}:${m[2]}`)).toEqual(['0:0', '1:1', '2:2', '3:3']);
    expect(svg).toContain('>step 3<');
    expect(svg).toContain('>if taken=1<');
    expect(svg).toContain('>from fetch<');
    expect(draw(demo.machine, 'BRANCH', 'taken=0').svg).toContain('>else<');
    expect(model.columns.map((c) => c.reached)).toEqual([true, true, true, true]);
  });

  it('titles the picture with the class, opcode, choice and the RV32I instruction it spells', () => {
    expect(svg).toContain('Halyard-32 · class BRANCH');
    // RISC-V Unprivileged ISA, RV32I base instruction listing: BRANCH opcode 1100011, BEQ funct3 000.
    expect(svg).toContain('opcode 1100011');
    expect(model.instruction).toBe('beq');
    // SRA: funct7 0100000, funct3 101, opcode 0110011 (same listing).
    expect(draw(demo.machine, 'OP', 'funct3=101,f7b5=1').model.instruction).toBe('sra');
    expect(draw(demo.machine, 'OP', 'funct3=101,f7b5=0').model.instruction).toBe('srl');
  });

  it('labels the level convention in the picture', () => {
    expect(svg).toContain('up = 1 (high), down = 0 (low)');
    expect(svg).toContain('an active-low strobe is asserted while its line is low');
    expect(svg).toContain('enable · active low · bit 12 chip 1');
  });
});

describe('line levels by polarity', () => {
  const { svg } = draw(demo.machine, 'BRANCH', 'taken=1');

  it('draws an active-low strobe low where it is asserted and high elsewhere', () => {
    // alu.oe (active low) is asserted in fetch step 0 and in the taken step 3.
    expect(rowAttr(svg, 'strobe', 'alu.oe', 'data-asserted')).toBe('1001');
    expect(rowAttr(svg, 'strobe', 'alu.oe', 'data-levels')).toBe('LHHL');
  });

  it('draws an active-high strobe high where it is asserted', () => {
    expect(rowAttr(svg, 'strobe', 'done', 'data-levels')).toBe('LLLH');
    expect(rowAttr(svg, 'strobe', 'ir.ck', 'data-levels')).toBe('LHLL');
    // Not taken: pc.inc (active high) counts in step 3 instead of pc.ck loading.
    const notTaken = draw(demo.machine, 'BRANCH', 'taken=0').svg;
    expect(rowAttr(notTaken, 'strobe', 'pc.inc', 'data-levels')).toBe('LLLH');
    expect(rowAttr(notTaken, 'strobe', 'pc.ck', 'data-levels')).toBe('LLLL');
  });

  it('puts the waveform at the high line where the level is high', () => {
    const row = svg.match(/<g class="row" data-row="strobe" data-name="alu\.oe"[^>]*>(.*?)<\/g>/)![1];
    const d = row.match(/<path class="wave" d="([^"]+)"/)![1];
    const ys = [...d.matchAll(/[MV](?:[\d.]+,)?([\d.]+)/g)].map((m) => Number(m[1]));
    // Four steps: low, high, (high, no vertical), low: three distinct moves, the first and last at the same y.
    expect(ys).toHaveLength(4);
    expect(ys[0]).toBeGreaterThan(ys[1]);
    expect(ys[3]).toBe(ys[0]);
  });
});

describe('fields and buses', () => {
  it('shows set field values and idle ones in parentheses', () => {
    const { svg } = draw(demo.machine, 'OP', 'funct3=000,f7b5=1');
    expect(rowAttr(svg, 'field', 'alu.fn', 'data-values')).toBe('passa (passa) sub');
  });

  it('shows who drives and who loads each bus per step', () => {
    const { svg } = draw(demo.machine, 'BRANCH', 'taken=1');
    expect(rowAttr(svg, 'bus', 'result', 'data-drivers')).toBe('alu.oe mem.rd - alu.oe');
    expect(svg).toContain('→ mar.ck');
    expect(svg).toContain('held by keeper');
    expect(svg).toContain('>floating<');
    expect(svg).not.toContain('seg bad');
  });

  it('marks a bus two strobes drive at once', () => {
    const fault = analyse(readFileSync(join(root, 'examples/faults/bus-contention.pwt'), 'utf8'));
    const { svg } = draw(fault.machine, 'OP');
    expect(rowAttr(svg, 'bus', 'result', 'data-drivers')).toBe('a.oe+b.oe');
    expect(svg).toContain('seg bad');
  });

  it('shades steps after the one that ends the instruction as not reached', () => {
    const text = [
      'bus b 8',
      'part r register 8',
      'part cmp compare b b -> taken cond=funct3',
      'strobe r.oe enable r -> b active low',
      'strobe r.ck clock b -> r',
      'strobe done end',
      'word 8 as 1 x 8',
      '  r.oe 0  r.ck 1  done 2',
      'address 4',
      '  step 0..1  taken 2',
      'class OP opcode=0110011',
      '  0: r.oe, r.ck',
      '  1 if taken: done',
      '  1 else: r.oe',
      '  2: done',
    ].join('\n');
    const m = analyse(text).machine;
    expect(draw(m, 'OP', 'taken=1').model.columns.map((c) => c.reached)).toEqual([true, true, false]);
    expect(draw(m, 'OP', 'taken=1').svg).toContain('not reached');
    expect(draw(m, 'OP', 'taken=0').model.columns.map((c) => c.reached)).toEqual([true, true, true]);
    expect(draw(m, 'OP', 'taken=0').svg).not.toContain('not reached');
  });
});

describe('word under each column', () => {
  const words = listingWords(demo.machine);

  it('equals the listing at the same address for every class and every choice of its inputs', () => {
    let compared = 0;
    for (const cls of demo.machine.classes) {
      const inputs = choiceInputsOf(demo.machine, cls, emptyChoice(), []);
      const totalBits = inputs.reduce((n, i) => n + i.width, 0);
      for (let value = 0; value < 2 ** totalBits; value++) {
        let shift = 0;
        const guard = inputs
          .map((i) => {
            const bits = ((value >>> shift) & (2 ** i.width - 1)).toString(2).padStart(i.width, '0');
            shift += i.width;
            return `${i.name}=${bits}`;
          })
          .join(',');
        const { svg, model } = draw(demo.machine, cls.name, guard);
        model.columns.forEach((_, col) => {
          const under = wordUnder(svg, col);
          expect(words.get(under.address), `${cls.name} ${guard} step ${col} at 0x${under.address.toString(16)}`).toEqual(under.chips);
          compared++;
        });
      }
    }
    // 11 classes; OP and OP-IMM have 16 choices of funct3 and f7b5, BRANCH 2 of taken, LOAD and STORE 8 of funct3.
    expect(compared).toBeGreaterThan(100);
  });

  it('matches the listing line written by hand for BRANCH taken, step 3', () => {
    // From the demo's listing: 0x180B step=3 taken=1 ... BRANCH 13 CA A0 00.
    expect(wordUnder(draw(demo.machine, 'BRANCH', 'taken=1').svg, 3)).toEqual({ address: 0x180b, chips: ['13', 'CA', 'A0', '00'] });
  });

  it('shows the fill word where a decode map has no row for the chosen bits', () => {
    // OP with funct3=001 and bit 30 set is no RV32I instruction: op_fn has no row, the ROM holds the fill word.
    const { svg, model } = draw(demo.machine, 'OP', 'funct3=001,f7b5=1');
    expect(wordUnder(svg, 2).chips).toEqual(['0B', 'DE', '0E', '00']);
    expect(model.columns[2].fillReason).toBe('no-map-row');
    expect(svg).toContain('fill word');
  });
});

describe('guard choices', () => {
  it('reads names, widths and numbers', () => {
    expect(parseGuardChoice(demo.machine, 'taken=1, funct3=101 & f7b5=1').ok).toBe(true);
    expect(parseGuardChoice(demo.machine, 'funct3=5').ok).toBe(true);
    expect(parseGuardChoice(demo.machine, 'ir[31:25]=0100000').ok).toBe(true);
  });

  it('refuses unknown inputs, wrong widths, the opcode and contradictions with a reason', () => {
    const reason = (text: string) => {
      const r = parseGuardChoice(demo.machine, text);
      return r.ok ? 'accepted' : r.reason;
    };
    expect(reason('carry=1')).toMatch(/'carry' is not an address input; use taken, funct3/);
    expect(reason('funct3=1011')).toMatch(/not a 3-bit value for funct3/);
    expect(reason('taken=2')).toMatch(/not a 1-bit value for taken/);
    expect(reason('opcode=01100')).toMatch(/fixed by the class/);
    expect(reason('funct7=0000000,f7b5=1')).toMatch(/disagrees/);
    expect(reason('taken')).toMatch(/name=value/);
  });
});

describe('inputs the stores cannot see', () => {
  const text = (address: string) =>
    [
      'bus b 8',
      'part r register 8',
      'part cmp compare b b -> taken cond=funct3',
      'strobe r.oe enable r -> b active low',
      'strobe done end',
      'word 8 as 1 x 8',
      '  r.oe 0  done 1',
      address,
      'class OP opcode=0110011',
      '  0 if taken: r.oe, done',
      '  0 else: done',
    ].join('\n');

  it('notes a guard input no address line carries', () => {
    const m = analyse(text('address 1\n  step 0')).machine;
    const { model, svg } = draw(m, 'OP', 'taken=1');
    expect(model.inputs).toMatchObject([{ name: 'taken', onAddress: false }]);
    expect(model.notes).toEqual(['taken is on no store\'s address lines: the stores cannot tell its values apart, so the steps do as for 0.']);
    expect(svg).toContain('taken is on no store');
  });

  it('says nothing when the address carries it', () => {
    const m = analyse(text('address 2\n  step 0  taken 1')).machine;
    const { model } = draw(m, 'OP', 'taken=1');
    expect(model.inputs).toMatchObject([{ name: 'taken', onAddress: true }]);
    expect(model.notes).toEqual([]);
  });
});

describe('SVG text', () => {
  it('escapes names and titles', () => {
    const m = analyse('machine "A<B & C>"\nbus b 8\npart r register 8\nstrobe r.oe enable r -> b\nstrobe done end\nword 8 as 1 x 8\n  r.oe 0 done 1\naddress 1\n  step 0\nclass OP opcode=0110011\n  0: r.oe, done\n').machine;
    const { svg } = draw(m, 'OP');
    expect(svg).toContain('A&lt;B &amp; C&gt; · class OP');
    expect(svg).not.toContain('A<B');
  });

  it('gives every label room by its character count (nothing runs past its column)', () => {
    const { svg, width } = draw(demo.machine, 'OP-IMM', 'funct3=101,f7b5=1', true);
    const gridXs = [...new Set([...svg.matchAll(/<line class="grid[^"]*" x1="([\d.]+)"/g)].map((m) => Number(m[1])))];
    const gridTop = Number(svg.match(/<line class="grid[^"]*" x1="[\d.]+" y1="([\d.]+)"/)![1]);
    const colWidth = gridXs[1] - gridXs[0];
    const advance = (px: number) => px * 0.6; // DejaVu Sans Mono advances 0.602 em (font metrics; from memory)
    let checked = 0;
    for (const [, xText, yText, attrs, raw] of svg.matchAll(/<text x="([\d.]+)" y="([\d.]+)"([^>]*)>([^<]*)<\/text>/g)) {
      const x = Number(xText);
      const y = Number(yText);
      const px = Number(attrs.match(/font-size:([\d.]+)px/)?.[1] ?? 12);
      const content = raw.replace(/&lt;|&gt;|&amp;|&quot;/g, '_');
      const w = content.length * advance(px);
      if (attrs.includes('text-anchor="middle"')) expect(w, content).toBeLessThanOrEqual(colWidth);
      else if (y < gridTop || attrs.includes('data-section')) expect(x + w, content).toBeLessThanOrEqual(width);
      else if (x < gridXs[0]) expect(x + w, content).toBeLessThanOrEqual(gridXs[0]);
      checked++;
    }
    expect(checked).toBeGreaterThan(100);
  });

  it('is well-formed XML with the expected elements (Python expat, outside the project)', () => {
    if (!haveTools(['python3'], 'python3')) return;
    const { svg } = draw(demo.machine, 'JALR');
    // XML 1.0 well-formedness as the expat parser checks it; counts rows by their attributes.
    const script = [
      'import sys, xml.dom.minidom as d',
      'doc = d.parseString(sys.stdin.read())',
      'g = [e for e in doc.getElementsByTagName("g") if e.getAttribute("class") == "row"]',
      'print(doc.documentElement.tagName, doc.documentElement.getAttribute("xmlns"))',
      'print(" ".join(e.getAttribute("data-row") + ":" + e.getAttribute("data-name") for e in g))',
    ].join('\n');
    const out = execFileSync('python3', ['-c', script], { input: svg, encoding: 'utf8' }).trim().split('\n');
    expect(out[0]).toBe('svg http://www.w3.org/2000/svg');
    expect(out[1].split(' ')).toEqual([
      'strobe:x.rs1.oe', 'strobe:x.rd.ck', 'strobe:pc.oe', 'strobe:pc.ck', 'strobe:ir.ck', 'strobe:mar.ck', 'strobe:t.ck', 'strobe:t.oe',
      'strobe:imm.oe', 'strobe:four.oe', 'strobe:alu.oe', 'strobe:mem.rd', 'strobe:done',
      'field:alu.fn', 'field:imm.fmt', 'field:mem.size',
      'bus:left', 'bus:right', 'bus:result',
    ]);
    // A broken document must not parse (the parser is really checking).
    expect(() => execFileSync('python3', ['-c', script], { input: svg.replace('</svg>', ''), encoding: 'utf8', stdio: 'pipe' })).toThrow();
  });

  it('uses theme variables only, with light, dark and editor palettes', () => {
    const cls = findClass(demo.machine, 'LUI')!;
    const light = timingDiagram(demo.machine, cls, emptyChoice(), { theme: 'light' }).svg;
    const auto = timingDiagram(demo.machine, cls, emptyChoice(), { theme: 'auto' }).svg;
    const host = timingDiagram(demo.machine, cls, emptyChoice(), { theme: 'host' }).svg;
    expect(light).toContain('--pw-bg:#fcfcfd');
    expect(auto).toContain('@media (prefers-color-scheme: dark)');
    expect(host).toContain('var(--vscode-editor-foreground');
    expect(host).not.toContain('class="bg"');
    // Outside the palette rule no colour is written literally.
    expect(light.replace(/<style>.*?<\/style>/s, '')).not.toMatch(/#[0-9a-f]{6}/i);
  });
});
