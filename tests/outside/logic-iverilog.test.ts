// Outside check of our Verilog equations with Icarus Verilog (Debian package iverilog): the
// module, simulated by iverilog/vvp for every input combination, must give exactly the truth
// table's care values (IEEE 1364 continuous assignments and $display semantics).
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { verilogModule } from '../../server/src/core/logic/equations';
import { type Minimised, minimise } from '../../server/src/core/logic/minimise';
import { type TruthTable, tableFromFunction } from '../../server/src/core/logic/truthTable';
import { randomTable } from '../logic/randomTables';
import { haveTools } from '../support/tools';

const available = haveTools(['iverilog', 'vvp'], 'iverilog');
const tmpRoot = join(__dirname, '..', '.tmp');
mkdirSync(tmpRoot, { recursive: true });
const workDir = mkdtempSync(join(tmpRoot, 'logic-iverilog-'));

/** Simulates `moduleText` for every input value and returns y (as a bit string, y[0] last) per address. */
function simulate(moduleText: string, moduleName: string, nInputs: number, nOutputs: number, label: string): string[] {
  const bench = [
    moduleText,
    'module bench;',
    `  reg [${nInputs - 1}:0] a;`,
    `  wire [${nOutputs - 1}:0] y;`,
    '  integer i;',
    `  ${moduleName} dut(.a(a), .y(y));`,
    '  initial begin',
    `    for (i = 0; i < ${2 ** nInputs}; i = i + 1) begin`,
    '      a = i;',
    '      #1 $display("%0d %b", i, y);',
    '    end',
    '    $finish;',
    '  end',
    'endmodule',
    '',
  ].join('\n');
  const source = join(workDir, `${label}.v`);
  const compiled = join(workDir, `${label}.vvp`);
  writeFileSync(source, bench);
  execFileSync('iverilog', ['-g2012', '-o', compiled, source]);
  const output = execFileSync('vvp', ['-n', compiled], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  const rows: string[] = [];
  for (const line of output.split('\n')) {
    const match = /^(\d+) ([01xz]+)$/.exec(line.trim());
    if (match) rows[Number(match[1])] = match[2];
  }
  expect(rows.length).toBe(2 ** nInputs);
  return rows;
}

/** Care minterms where the simulated outputs differ from the table, as readable strings. */
function mismatches(table: TruthTable, minimised: Minimised, rows: string[]): string[] {
  const found: string[] = [];
  const nOutputs = minimised.outputs.length;
  for (let address = 0; address < rows.length; address++) {
    minimised.outputs.forEach((output, k) => {
      const bits = table.outputs[output.outputIndex];
      const bit = 1 << (address & 31);
      if (bits.dc[address >>> 5] & bit) return;
      const expected = bits.on[address >>> 5] & bit ? '1' : '0';
      const actual = rows[address][nOutputs - 1 - k];
      if (actual !== expected) found.push(`${output.name} at ${address}: simulated ${actual}, table ${expected}`);
    });
  }
  return found;
}

describe.skipIf(!available)('iverilog simulates our Verilog equations', () => {
  for (const [seed, nInputs, nOutputs] of [
    [1, 9, 8],
    [2, 10, 6],
    [3, 6, 12],
  ] as const) {
    it(`table ${seed} (${nInputs} inputs, ${nOutputs} outputs): every care value matches`, () => {
      const table = randomTable(seed, { nInputs, nOutputs, structured: seed !== 3, onShare: 0.3, dcShare: 0.15 });
      const minimised = minimise(table, { polarity: 'best' });
      const moduleText = verilogModule(minimised, `ctl${seed}`);
      expect(mismatches(table, minimised, simulate(moduleText, `ctl${seed}`, nInputs, nOutputs, `table${seed}`))).toEqual([]);
    });
  }

  it('constant outputs and shared terms simulate correctly too', () => {
    const table = tableFromFunction(['s0', 's1', 'op'], ['zero', 'one', 'maj', 'inv'], (m, j) =>
      j === 0 ? 0 : j === 1 ? 1 : j === 2 ? ([3, 5, 6, 7].includes(m) ? 1 : 0) : m === 7 ? 0 : 1,
    );
    for (const shareTerms of [false, true]) {
      const minimised = minimise(table, { polarity: 'best', shareTerms });
      const rows = simulate(verilogModule(minimised, 'consts'), 'consts', 3, 4, `consts${shareTerms}`);
      expect(mismatches(table, minimised, rows)).toEqual([]);
    }
  });

  it('a wrong equation is caught by the same comparison', () => {
    const table = randomTable(4, { nInputs: 5, nOutputs: 2, structured: true });
    const minimised = minimise(table);
    // Drop the first product term of output 0: some ON minterm is then no longer covered.
    const broken: Minimised = { ...minimised, outputs: [{ ...minimised.outputs[0], terms: minimised.outputs[0].terms.slice(1) }, minimised.outputs[1]] };
    const rows = simulate(verilogModule(broken, 'broken'), 'broken', 5, 2, 'broken');
    expect(mismatches(table, minimised, rows).length).toBeGreaterThan(0);
  });
});
