// The outline (document symbols by section), workspace symbol matching, folding ranges and
// semantic tokens, on the demo and small fixtures.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { foldingRanges } from '../../server/src/core/ide/folding';
import { semanticTokens } from '../../server/src/core/ide/semanticTokens';
import { documentSymbols, flatSymbols, matchesQuery } from '../../server/src/core/ide/symbols';
import { dedent } from '../support/annotated';
import { demoText, faultFiles } from './support';

const demo = analyse(demoText);
const lineOf = (text: string, needle: string) => text.slice(0, text.indexOf(needle)).split('\n').length;

describe('document symbols', () => {
  const outline = documentSymbols(demo);

  it('groups the demo by section, in the order of the notation', () => {
    expect(outline.map((s) => `${s.kind} ${s.name}`)).toEqual([
      'machine Halyard-32',
      'section buses',
      'section parts',
      'section strobes',
      'section fields',
      'section stores',
      'section maps',
      'section phases',
      'section classes',
    ]);
    const names = (title: string) => outline.find((s) => s.name === title)!.children.map((c) => c.name);
    expect(names('buses')).toEqual(['left', 'right', 'result']);
    expect(names('strobes').length).toBe(18);
    expect(names('maps')).toEqual(['op_fn', 'imm_fn', 'load_size', 'store_size']);
    expect(names('classes')).toEqual(['LUI', 'AUIPC', 'JAL', 'JALR', 'BRANCH', 'LOAD', 'STORE', 'OP-IMM', 'OP', 'MISC-MEM', 'SYSTEM']);
  });

  it('lists the steps of a class as its children, guards included', () => {
    const branch = outline.find((s) => s.name === 'classes')!.children.find((c) => c.name === 'BRANCH')!;
    expect(branch.children.map((c) => `${c.kind} ${c.name}`)).toEqual(['use use fetch', 'step 2', 'step 3 if taken', 'step 3 else']);
    expect(branch.children[1].detail).toBe('x.rs1.oe, x.rs2.oe, cmp.ck');
    const alu = outline.find((s) => s.name === 'fields')!.children[0];
    expect(alu.children.map((c) => c.name)).toContain('passb');
  });

  it('keeps each selection inside its range, and children inside their parent', () => {
    const walk = (symbols: typeof outline, parent?: (typeof outline)[number]) => {
      for (const s of symbols) {
        expect(s.selection.start).toBeGreaterThanOrEqual(s.span.start);
        expect(s.selection.end).toBeLessThanOrEqual(s.span.end);
        if (parent) {
          expect(s.span.start).toBeGreaterThanOrEqual(parent.span.start);
          expect(s.span.end).toBeLessThanOrEqual(parent.span.end);
        }
        walk(s.children, s);
      }
    };
    walk(outline);
    for (const fault of faultFiles) walk(documentSymbols(analyse(fault.text)));
  });

  it('puts layouts under their store when the file names stores', () => {
    const text = faultFiles.find((f) => f.name === 'store-ambiguous')!.text;
    const stores = documentSymbols(analyse(text)).find((s) => s.name === 'stores')!;
    expect(stores.children.map((s) => `${s.name}: ${s.children.map((c) => c.name).join(', ')}`)).toEqual(['main: word, address', 'decode: word, address']);
  });

  it('offers declared names to workspace symbol search, matched as editors do', () => {
    const flat = flatSymbols(demo);
    expect(flat.filter((s) => matchesQuery(s.name, 'xrs')).map((s) => s.name)).toEqual(['x.rs1.oe', 'x.rs2.oe']);
    expect(flat.find((s) => s.name === 'passa')?.container).toBe('alu.fn');
    expect(matchesQuery('OP-IMM', 'opim')).toBe(true);
    expect(matchesQuery('OP', 'opim')).toBe(false);
  });
});

describe('folding ranges', () => {
  it('folds the opening comment block, the layouts, maps, phases and classes of the demo', () => {
    const ranges = foldingRanges(demo).map((f) => `${f.kind} ${demo.lines.position(f.span.start).line + 1}-${demo.lines.position(f.span.end).line + 1}`);
    expect(ranges[0]).toBe(`comment 1-${lineOf(demoText, '\n\nmachine')}`);
    expect(ranges).toContain(`region ${lineOf(demoText, 'word 32')}-${lineOf(demoText, 'mem.size 24..26')}`);
    expect(ranges).toContain(`region ${lineOf(demoText, 'class BRANCH')}-${lineOf(demoText, '3 else')}`);
    expect(ranges).toContain(`region ${lineOf(demoText, 'phase fetch')}-${lineOf(demoText, '1: mem.size=word')}`);
    expect(ranges.filter((r) => r.startsWith('region')).length).toBe(2 + 4 + 1 + 11);
  });

  it('folds a step continued over lines and a field whose braces span lines, not single lines', () => {
    const text = dedent(`
      field f 4 {
        a=0 b=1
      }
      # one comment line
      class OP opcode=0110011
        0: a.oe,
           b.oe
    `);
    const ranges = foldingRanges(analyse(text)).map((f) => `${f.kind} ${text.slice(0, f.span.start).split('\n').length}-${text.slice(0, f.span.end).split('\n').length}`);
    expect(ranges).toEqual(['region 1-3', 'region 5-7', 'region 6-7']);
  });
});

describe('semantic tokens', () => {
  const tokens = semanticTokens(demo);
  const on = (needle: string) => {
    const start = demoText.indexOf(needle);
    const end = demoText.indexOf('\n', start);
    return tokens.filter((t) => t.start >= start && t.start < end).map((t) => `${demoText.slice(t.start, t.start + t.length)}:${t.type}${t.modifiers.length ? '+' + t.modifiers.join('+') : ''}`);
  };

  it('classifies a strobe declaration', () => {
    expect(on('strobe x.rs1.oe')).toEqual([
      'strobe:keyword',
      'x.rs1.oe:variable+declaration',
      'enable:type+defaultLibrary',
      'x:class',
      'rs1:property',
      '->:operator',
      'left:struct',
      'active:keyword',
      'low:keyword',
      '"Card selected by rs1 drives the left bus.":string',
    ]);
  });

  it('classifies a guarded step: flag, strobes, fields and values', () => {
    expect(on('3 if taken')).toEqual([
      '3:number',
      'if:keyword',
      'taken:parameter',
      'pc.oe:variable',
      'imm.fmt:property',
      '=:operator',
      'b:enumMember',
      'imm.oe:variable',
      'alu.fn:property',
      '=:operator',
      'add:enumMember',
      'alu.oe:variable',
      'pc.ck:variable',
      'done:variable',
    ]);
    expect(on('alu.fn=op_fn')).toContain('op_fn:function');
    expect(on('  use fetch')).toEqual(['use:keyword', 'fetch:namespace']);
  });

  it('never overlaps, never crosses a line, and comes in file order', () => {
    for (const text of [demoText, ...faultFiles.map((f) => f.text)]) {
      const list = semanticTokens(analyse(text));
      for (let i = 0; i < list.length; i++) {
        expect(text.slice(list[i].start, list[i].start + list[i].length)).not.toMatch(/[\r\n]/);
        if (i > 0) expect(list[i].start).toBeGreaterThanOrEqual(list[i - 1].start + list[i - 1].length);
      }
    }
  });
});
