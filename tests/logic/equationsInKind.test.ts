// The demo's fitted equations as text a table can use: the whole file reads back equal to the
// covers at every one of the 8192 addresses, and one equation pasted with the input lines into a
// `kind` of a small table checks clean (analyse) and, evaluated by the expression evaluator (the
// definition of the expressions, docs/expressions.md), gives the cover's value at every input
// combination.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { storeTruthTable } from '../../server/src/core/encode/storeTable';
import { equationsText } from '../../server/src/core/logic/equations';
import { minimise, type Minimised } from '../../server/src/core/logic/minimise';
import { coverLevels, equationsTextLevels } from '../../server/src/core/logic/verifyFit';
import { evaluate, parseExpression } from '../../server/src/core/parts/expr';

let minimised: Minimised;
let outputBits: number[];
let text: string;

beforeAll(() => {
  const { machine } = analyse(readFileSync(join(__dirname, '../../examples/halyard-32.pwt'), 'utf8'));
  const encoded = encodeMachine(machine);
  const built = storeTruthTable(machine, encoded, encoded.stores[0]);
  minimised = minimise(built.table, { polarity: 'best' });
  outputBits = built.outputBits;
  text = equationsText(minimised, 'Halyard-32, store main', 'main_logic');
}, 60_000);

/** A small table with kind `fitted` (the given kind lines), a part of it on one bus per input, and a step that uses its output. */
function tableWith(inputLines: string[], driveLine: string): string {
  const inputs = inputLines.map((l) => /^ {2}input (\S+) (\d+)/.exec(l)!.slice(1));
  return [
    'kind fitted "one pasted equation"',
    ...inputLines,
    driveLine,
    '',
    'bus ready 1',
    ...inputs.map(([name, width]) => `bus ${name}_bus ${width}`),
    ...inputs.map(([name, width]) => `part ${name}_reg register ${width}`),
    `part g fitted ${inputs.map(([name]) => `${name}_bus`).join(' ')}`,
    'part r register 1',
    ...inputs.map(([name]) => `strobe ${name}_reg.oe enable ${name}_reg -> ${name}_bus`),
    'strobe g.oe enable g -> ready',
    'strobe r.ck clock ready -> r',
    'strobe done end',
    `word ${inputs.length + 3} as 1 x ${inputs.length + 3}`,
    `  ${[...inputs.map(([name], k) => `${name}_reg.oe ${k}`), `g.oe ${inputs.length}`, `r.ck ${inputs.length + 1}`, `done ${inputs.length + 2}`].join('  ')}`,
    'address 1',
    '  step 0',
    'class OP opcode=0110011',
    `  0: ${[...inputs.map(([name]) => `${name}_reg.oe`), 'g.oe', 'r.ck', 'done'].join(', ')}`,
    '',
  ].join('\n');
}

describe('the demo fit as equations text', () => {
  it('reads back equal to every cover at all 8192 addresses', () => {
    expect(minimised.nInputs).toBe(13);
    const read = equationsTextLevels(text, minimised, outputBits);
    if (!read.ok) throw new Error(read.message);
    expect(read.levels).toHaveLength(28);
    // A changed literal is caught: the check can fail.
    const changed = text.replace(/^( {2}drive done 1 = )~step\[0\]/m, '$1step[0]');
    expect(changed).not.toBe(text);
    expect(equationsTextLevels(changed, minimised, outputBits)).toMatchObject({ ok: false, message: expect.stringMatching(/^the equation of done read back gives [01] at address \d+, its cover [01]$/) });
  });

  it('one equation pasted into a kind checks clean and evaluates to its cover at every input combination', () => {
    const lines = text.split('\n');
    const done = minimised.outputs.findIndex((o) => o.name === 'done');
    const driveLine = lines.find((l) => l.startsWith('  drive done 1 = '))!;
    expect(minimised.outputs[done].terms.length).toBeGreaterThan(8);
    const table = tableWith(lines.filter((l) => l.startsWith('  input ')), driveLine);
    const analysis = analyse(table);
    expect(analysis.diagnostics.map((d) => `${d.code}: ${d.message}`)).toEqual([]);

    // The expression as the analysed table holds it, evaluated by the definition.
    const drive = analysis.machine.kinds.get('fitted')!.drives.find((d) => d.name === 'done')!;
    expect(table.slice(drive.expr.span.start, drive.expr.span.end)).toBe(drive.expr.text);
    const { expr } = parseExpression(drive.expr.text, drive.expr.span.start);
    const widths: Record<string, number> = { step: 3, taken: 1, f7b5: 1, funct3: 3, opcode: 5 };
    const cover = coverLevels(13, minimised.outputs[done].terms, minimised.outputs[done].inverted);
    let ones = 0;
    for (let address = 0; address < 8192; address++) {
      const values: Record<string, bigint> = {
        step: BigInt(address & 7),
        taken: BigInt((address >> 3) & 1),
        f7b5: BigInt((address >> 4) & 1),
        funct3: BigInt((address >> 5) & 7),
        opcode: BigInt((address >> 8) & 31),
      };
      const got = evaluate(expr!, (name) => values[name], (name) => widths[name], { expectedWidth: 1 });
      const want = (cover[address >>> 5] >>> (address & 31)) & 1;
      if (Number(got) !== want) throw new Error(`done at address ${address}: the pasted equation gives ${got}, the cover ${want}`);
      ones += want;
    }
    // Both levels occur, so the comparison was not against a constant.
    expect(ones).toBeGreaterThan(0);
    expect(ones).toBeLessThan(8192);
  });
});
