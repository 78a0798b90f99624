// The equations text: a part kind of the notation whose drive lines are expressions of
// docs/expressions.md (built as trees, printed by formatExpression), read back by the notation's
// parser, the expression checker and the expression compiler, equal to the covers at every
// address; wrong text is an error with its line.
import { describe, expect, it } from 'vitest';
import { coverExpr, equationNames, equationsText, verilogModule } from '../../server/src/core/logic/equations';
import { LogicInputError } from '../../server/src/core/logic/errors';
import { minimise, type Minimised } from '../../server/src/core/logic/minimise';
import { equationsLevels, readEquations } from '../../server/src/core/logic/readEquations';
import { tableFromFunction } from '../../server/src/core/logic/truthTable';
import { coverLevels, equationsTextLevels } from '../../server/src/core/logic/verifyFit';
import { formatExpression } from '../../server/src/core/parts/expr';
import { randomTable } from './randomTables';

const names = ['step[0]', 'step[1]', 'opcode[3]', 'flag'];
/** A minimised set over `names` with the given outputs, for the writer alone. */
const outputsOver = (inputNames: string[], outputs: Minimised['outputs']): Minimised => ({ inputNames, nInputs: inputNames.length, outputs });

describe('equation text', () => {
  it('writes each output as an expression: ~ for a complemented line, & and |, bits of vectors as slices', () => {
    const set = outputsOver(names, []);
    const n = equationNames(set);
    expect(n.inputs).toEqual([
      { name: 'step', width: 2, vector: true, lines: [0, 1] },
      { name: 'opcode', width: 4, vector: true, lines: [-1, -1, -1, 2] },
      { name: 'flag', width: 1, vector: false, lines: [3] },
    ]);
    const terms = [
      { care: 0b0101, value: 0b0100 },
      { care: 0b1010, value: 0b0010 },
    ];
    const text = (t: typeof terms, inverted: boolean) => formatExpression(coverExpr(t, inverted, n));
    expect(text(terms, false)).toBe('~step[0] & opcode[3] | step[1] & ~flag');
    expect(text(terms.slice(0, 1), true)).toBe('~(~step[0] & opcode[3])');
    expect(text(terms, true)).toBe('~(~step[0] & opcode[3] | step[1] & ~flag)');
    expect(text([], false)).toBe('0');
    expect(text([], true)).toBe('1');
    expect(text([{ care: 0, value: 0 }], false)).toBe('1');
  });

  it('writes a kind: the inputs with their widths, one drive line per output under a comment', () => {
    const set = outputsOver(names, [
      { name: 'alu.fn[2]', outputIndex: 0, inverted: true, terms: [{ care: 0b0101, value: 0b0100 }], method: 'exact', provedMinimal: true },
      { name: 'x.rd.ck', outputIndex: 1, inverted: false, terms: [], method: 'exact', provedMinimal: true },
    ]);
    const text = equationsText(set, 'Demo "A", store main', 'main_logic');
    expect(text.split('\n').filter((l) => !l.startsWith('#'))).toEqual([
      '',
      'kind main_logic "Demo  A , store main: 2 fitted outputs"',
      '  input step 2 "address lines 0 and 1"',
      '  input opcode 4 "address lines none, none, none, 2 (bit 0 first)"',
      '  input flag 1 "address line 3"',
      '',
      '  # alu.fn[2]: 1 product term, built as the complement (exact)',
      '  drive alu_fn_2 1 = ~(~step[0] & opcode[3]) "alu.fn[2]"',
      '',
      '  # x.rd.ck: 0 product terms (exact)',
      '  drive x_rd_ck 1 = 0 "x.rd.ck"',
      '',
    ]);
    expect(text).toMatch(/^# Demo  A , store main: the fitted outputs as a part kind/);
    expect(text).toContain('step[1] being bit 1 of the 2-bit input step');
  });

  it('gives every output a port name of its own, apart from the inputs', () => {
    const outputs = ['a.b', 'a_b', 'flag', '3x', 'in'].map((name, outputIndex) => ({ name, outputIndex, inverted: false, terms: [], method: 'exact' as const, provedMinimal: true }));
    expect(equationNames(outputsOver(names, outputs)).ports).toEqual(['a_b', 'a_b_2', 'flag_2', 'out_3x', 'out_in']);
  });

  it('refuses input names the expressions cannot write', () => {
    for (const bad of [['a b'], ['select'], ['x', 'x[0]'], ['x[0]', 'x[0]'], ['in'], ['v[40]']]) {
      expect(() => equationNames(outputsOver(bad, [])), bad.join(',')).toThrow(LogicInputError);
    }
  });

  it('reads back what it writes, equal to the covers at every address, for whole minimised tables', () => {
    for (let seed = 1; seed <= 20; seed++) {
      const table = randomTable(seed, { nInputs: 6, nOutputs: 3, structured: seed % 2 === 0, dcShare: 0.2 });
      const minimised = minimise(table, { polarity: 'best' });
      const read = readEquations(equationsText(minimised, `seed ${seed}`, 'random_logic'), minimised);
      if (!read.ok) throw new Error(read.message);
      expect(read.equations.map((e) => e.output)).toEqual([0, 1, 2]);
      const levels = equationsLevels(read, table.nInputs);
      minimised.outputs.forEach((o, k) => {
        const cover = coverLevels(table.nInputs, o.terms, o.inverted);
        expect(levels[k][0] & 0xffffffff, `seed ${seed} ${o.name}`).toBe(cover[0] & 0xffffffff);
        expect(levels[k][1] & 0xffffffff, `seed ${seed} ${o.name}`).toBe(cover[1] & 0xffffffff);
      });
    }
  });

  it('explains text it cannot read, with the line', () => {
    const table = tableFromFunction(['step[0]', 'step[1]', 'flag'], ['y', 'z'], (m, j) => ((j === 0 ? m & 1 : (m >> 2) & 1) as 0 | 1));
    const minimised = minimise(table, { polarity: 'best' });
    const good = equationsText(minimised, 'small', 'small_logic');
    const y = /^ {2}drive y 1 = .*$/m.exec(good)![0];
    const lineOf = (text: string, part: string) => text.slice(0, text.indexOf(part)).split('\n').length;
    const cases: [string, string, RegExp][] = [
      [good.replace(y, '  drive y 1 = step[0] &'), '  drive y', /expected/],
      [good.replace(y, '  drive y 1 = step[0] & bogus'), '  drive y', /bogus/],
      [good.replace(y, '  drive y 1 = step'), '  drive y', /2 bits wide, but 1 bits are needed/],
      [good.replace(y, '  drive y 1 = step[2]'), '  drive y', /bit 2 is outside `step`, which has 2 bits/],
      [good.replace(y, '  drive y 1 = !step[0]'), '  drive y', /use `~` for the complement/],
      [good.replace(y, '  drive y 2 = step'), '  drive y', /must be one bit/],
      [good.replace(y, ''), '\u0000', /no drive line for `y`/],
      [good.replace(y, `${y}\n  drive w 1 = flag`), '  drive w', /`w` is not a fitted output/],
      [good.replace('input step 2', 'input step 3'), '  input step', /must read `input step 2`/],
      [good.replace('  input flag 1', '  input flog 1'), 'input flog', /`flog` is not an address input/],
      [good.replace('  input flag 1', '  state flag 1'), 'state flag', /only inputs and one-bit drive lines/],
      [`${good}\nbus left 8\n`, 'bus left', /only one `kind` declaration/],
      ['# nothing but a comment\n', '\u0000', /expected one `kind` declaration/],
    ];
    for (const [text, where, message] of cases) {
      const read = readEquations(text, minimised);
      expect(read.ok, text).toBe(false);
      if (read.ok) continue;
      expect(read.message, text).toMatch(message);
      if (where !== '\u0000') expect(read.message, text).toContain(`equations, line ${lineOf(text, where)}:`);
    }
  });

  it('catches equations that read but differ from the covers, naming the output and the address', () => {
    const table = tableFromFunction(['step[0]', 'step[1]', 'flag'], ['y'], (m) => (m & 1) as 0 | 1);
    const minimised = minimise(table, { polarity: 'best' });
    const good = equationsText(minimised, 'small', 'small_logic');
    expect(equationsTextLevels(good, minimised, [5])).toMatchObject({ ok: true, levels: [{ bit: 5 }] });
    const wrong = good.replace(/drive y 1 = .*$/m, 'drive y 1 = step[0] | flag "y"');
    expect(equationsTextLevels(wrong, minimised, [5])).toEqual({ ok: false, message: 'the equation of y read back gives 1 at address 4, its cover 0' });
  });
});

describe('Verilog module', () => {
  it('writes one continuous assignment per output', () => {
    const table = tableFromFunction(['a', 'b', 'c'], ['maj', 'none', 'all'], (m, j) =>
      j === 0 ? ([3, 5, 6, 7].includes(m) ? 1 : 0) : j === 1 ? (m === 0 ? 1 : 0) : 1,
    );
    const text = verilogModule(minimise(table, { polarity: 'best' }), 'vote');
    expect(text).toBe(
      [
        '// Sum-of-products equations generated by Phasewright for module vote.',
        '//   a[0] = a',
        '//   a[1] = b',
        '//   a[2] = c',
        '//   y[0] = maj',
        '//   y[1] = none',
        '//   y[2] = all',
        'module vote(input [2:0] a, output [2:0] y);',
        '  assign y[0] = (a[0] & a[1]) | (a[0] & a[2]) | (a[1] & a[2]);  // maj',
        '  assign y[1] = (~a[0] & ~a[1] & ~a[2]);  // none',
        "  assign y[2] = 1'b1;  // all",
        'endmodule',
        '',
      ].join('\n'),
    );
  });

  it('refuses names Verilog cannot take', () => {
    const minimised = minimise(tableFromFunction(['a'], ['y'], (m) => (m ? 1 : 0)));
    expect(() => verilogModule(minimised, 'module')).toThrow(/cannot be a Verilog module name/);
    expect(() => verilogModule(minimised, '2fast')).toThrow(/cannot be a Verilog module name/);
    expect(() => verilogModule(minimised, 'control_logic')).not.toThrow();
  });
});
