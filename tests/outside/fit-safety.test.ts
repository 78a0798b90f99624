// Outside checks that fitted logic never puts two drivers on one bus, nor acts where no step
// covers the address, at EVERY address the store's lines can form:
//   - jedutil (Debian mame-tools) reads our JEDEC fuse maps and prints their equations
//     (`i<pin>`, `o<pin>`, `/` NOT, `&`, `+`; reference facts); evaluated at every address they
//     must agree with the truth table where it cares and pass the independent word monitor of
//     tests/support/wordMonitor.ts;
//   - iverilog (Debian iverilog; IEEE 1364 continuous assignments, $readmemh, $display) runs
//     our Verilog equations over every address with a contention monitor written in Verilog.
// For the demo (through the CLI's files) and seeded random machines; and, so the checks can
// fail, for equations minimised with the old unconstrained don't-cares, which must be caught.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine, type EncodedStore } from '../../server/src/core/encode/encoder';
import { storeTruthTable, type StoreTable } from '../../server/src/core/encode/storeTable';
import { buildGalImage, fitDevices, minimise, verilogModule, type Minimised } from '../../server/src/core/logic';
import type { TruthTable } from '../../server/src/core/logic/truthTable';
import type { Machine } from '../../server/src/core/model/types';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { evaluatePrinted, parseJedutilEquations } from '../support/jedutil';
import { randomMachine } from '../support/randomMachines';
import { haveTools } from '../support/tools';
import { unconstrainedTable } from '../support/unconstrained';
import { monitorWords, monitoredStrobes } from '../support/wordMonitor';

const root = join(__dirname, '../..');
const haveJedutil = haveTools(['jedutil'], 'mame-tools');
const haveIverilog = haveTools(['iverilog', 'vvp'], 'iverilog');
const tmpRoot = join(root, 'tests/.tmp');
mkdirSync(tmpRoot, { recursive: true });
const workDir = mkdtempSync(join(tmpRoot, 'fit-safety-'));
const SEEDS = [1, 2, 4, 9, 17, 23];

interface Subject {
  label: string;
  machine: Machine;
  enc: EncodedStore;
  built: StoreTable;
}

function subject(label: string, text: string): Subject {
  const { machine } = analyse(text);
  const encoded = encodeMachine(machine);
  const enc = encoded.stores[0];
  return { label, machine, enc, built: storeTruthTable(machine, encoded, enc) };
}

const demoText = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
const subjects = (): Subject[] => [subject('demo', demoText), ...SEEDS.map((seed) => subject(`random ${seed}`, randomMachine(seed).text))];

/** Fits `table` into GAL22V10s, writes the fuse maps, and returns each output's level at every address as jedutil prints the logic. */
function levelsFromJedutil(s: Subject, table: TruthTable, tag: string): Map<number, Uint8Array> {
  const fit = fitDevices(minimise(table, { polarity: 'best' }), { device: 'GAL22V10' });
  expect(fit.problems).toEqual([]);
  const levels = new Map<number, Uint8Array>();
  const nAddresses = 2 ** table.nInputs;
  for (const d of fit.devices) {
    const file = join(workDir, `${s.label.replace(/ /g, '-')}-${tag}-${d.index + 1}.jed`);
    writeFileSync(file, buildGalImage(table, d, fit.devices.length, { designName: s.label }).jedec, 'latin1');
    const r = spawnSync('jedutil', ['-view', file, 'GAL22V10'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const printed = parseJedutilEquations(r.stdout);
    for (const o of d.outputs) {
      const bits = new Uint8Array(nAddresses);
      for (let address = 0; address < nAddresses; address++) {
        const pins = new Map<number, 0 | 1>(d.inputs.map((input) => [input.pin, ((address >>> input.inputIndex) & 1) as 0 | 1]));
        bits[address] = evaluatePrinted(printed.get(o.pin)!, pins);
      }
      levels.set(s.built.outputBits[o.outputIndex], bits);
    }
  }
  return levels;
}

/** Care values of the table the levels disagree with (there must be none). */
function disagreements(s: Subject, levels: Map<number, Uint8Array>): number {
  let wrong = 0;
  s.built.table.outputs.forEach((o, k) => {
    const got = levels.get(s.built.outputBits[k])!;
    for (let a = 0; a < got.length; a++) {
      const bit = 1 << (a & 31);
      if (o.dc[a >>> 5] & bit) continue;
      if (got[a] !== (o.on[a >>> 5] & bit ? 1 : 0)) wrong++;
    }
  });
  return wrong;
}

describe.skipIf(!haveJedutil)('jedutil reads our fuse maps: safe at every address', () => {
  it('the demo, from the files `phasewright fit` wrote', async () => {
    const io = memoryIo(root);
    const out = join(workDir, 'cli');
    expect(await runCommand(['fit', 'examples/halyard-32.pwt', '--device', 'gal22v10', '--out', out], io), io.stderr).toBe(0);
    expect(io.stdout).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe');
    const s = subject('demo', demoText);
    // The same fit in process gives the pins; the logic comes from jedutil's reading of the CLI's files.
    const fit = fitDevices(minimise(s.built.table, { polarity: 'best' }), { device: 'GAL22V10' });
    const levels = new Map<number, Uint8Array>();
    for (const d of fit.devices) {
      const r = spawnSync('jedutil', ['-view', join(out, `halyard-32.main.gal22v10-${d.index + 1}.jed`), 'GAL22V10'], { encoding: 'utf8' });
      expect(r.status, r.stderr).toBe(0);
      const printed = parseJedutilEquations(r.stdout);
      for (const o of d.outputs) {
        const bits = new Uint8Array(8192);
        for (let a = 0; a < 8192; a++) bits[a] = evaluatePrinted(printed.get(o.pin)!, new Map(d.inputs.map((i) => [i.pin, ((a >>> i.inputIndex) & 1) as 0 | 1])));
        levels.set(s.built.outputBits[o.outputIndex], bits);
      }
    }
    expect(disagreements(s, levels)).toBe(0);
    const verdict = monitorWords(s.machine, s.enc, (a, bit) => levels.get(bit)?.[a] as 0 | 1 | undefined);
    expect(verdict.checked).toBe(8192);
    expect(verdict.findings).toEqual([]);
  }, 120_000);

  it.each(SEEDS)('random machine %i, and its unconstrained control is caught', (seed) => {
    const s = subject(`random ${seed}`, randomMachine(seed).text);
    const safe = levelsFromJedutil(s, s.built.table, 'safe');
    expect(disagreements(s, safe)).toBe(0);
    const verdict = monitorWords(s.machine, s.enc, (a, bit) => safe.get(bit)?.[a] as 0 | 1 | undefined);
    expect(verdict.checked).toBe(2048);
    expect(verdict.findings).toEqual([]);
    const loose = levelsFromJedutil(s, unconstrainedTable(s.built.table, s.built.unreachableBits), 'loose');
    expect(monitorWords(s.machine, s.enc, (a, bit) => loose.get(bit)?.[a] as 0 | 1 | undefined).unsafe).toBeGreaterThan(0);
  }, 60_000);
});

/** A test bench running `module` over every address, printing CONTENTION / ACTIVE lines from a monitor written in Verilog. */
function monitorBench(s: Subject, minimised: Minimised, moduleName: string): string {
  const strobes = monitoredStrobes(s.machine, s.enc);
  const yIndex = (bit: number) => s.built.outputBits.indexOf(bit);
  const nInputs = s.built.table.nInputs;
  const nOutputs = minimised.outputs.length;
  const asserted = (st: (typeof strobes)[number]) => `(y[${yIndex(st.bit)}] == 1'b${st.active})`;
  const buses = [...new Set(strobes.filter((st) => st.bus).map((st) => st.bus!))];
  const lines = [
    verilogModule(minimised, moduleName),
    'module bench;',
    `  reg [${nInputs - 1}:0] a;`,
    `  wire [${nOutputs - 1}:0] y;`,
    `  reg uncovered [0:${2 ** nInputs - 1}];`,
    '  integer i, n;',
    `  ${moduleName} dut(.a(a), .y(y));`,
    '  initial begin',
    `    $readmemh("${moduleName}.uncovered.hex", uncovered);`,
    `    for (i = 0; i < ${2 ** nInputs}; i = i + 1) begin`,
    '      a = i;',
    '      #1;',
    ...buses.map((bus) => `      n = ${strobes.filter((st) => st.bus === bus).map((st) => `${asserted(st)}`).join(' + ')}; if (n > 1) $display("CONTENTION %0d ${bus} %0d", i, n);`),
    ...strobes.filter((st) => !st.bus).map((st) => `      if (uncovered[i] && ${asserted(st)}) $display("ACTIVE %0d ${st.name}", i);`),
    '    end',
    '    $display("DONE %0d", i);',
    '    $finish;',
    '  end',
    'endmodule',
    '',
  ];
  return lines.join('\n');
}

function runBench(s: Subject, minimised: Minimised, tag: string): string[] {
  const name = `${s.label.replace(/ /g, '_')}_${tag}`;
  const hex = Array.from({ length: s.enc.origin.length }, (_, a) => (s.enc.origin[a] < 0 ? '1' : '0')).join('\n');
  writeFileSync(join(workDir, `${name}.uncovered.hex`), hex + '\n');
  const source = join(workDir, `${name}.v`);
  writeFileSync(source, monitorBench(s, minimised, name));
  execFileSync('iverilog', ['-g2012', '-o', join(workDir, `${name}.vvp`), source]);
  const output = execFileSync('vvp', ['-n', join(workDir, `${name}.vvp`)], { cwd: workDir, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  expect(output).toContain(`DONE ${2 ** s.built.table.nInputs}`);
  return output.split('\n').filter((l) => /^(CONTENTION|ACTIVE)/.test(l));
}

describe.skipIf(!haveIverilog)('iverilog runs our Verilog equations over every address with a contention monitor', () => {
  it('finds nothing for the demo and the random machines', () => {
    for (const s of subjects()) {
      // Every strobe of these stores is fitted, so the monitor sees the whole word.
      expect(monitoredStrobes(s.machine, s.enc).every((st) => s.built.outputBits.includes(st.bit))).toBe(true);
      expect(runBench(s, minimise(s.built.table, { polarity: 'best' }), 'safe'), s.label).toEqual([]);
    }
  }, 120_000);

  it('finds the fights of the old unconstrained equations on the demo', () => {
    const s = subject('demo', demoText);
    const found = runBench(s, minimise(unconstrainedTable(s.built.table, s.built.unreachableBits), { polarity: 'best' }), 'loose');
    expect(found.filter((l) => l.startsWith('CONTENTION')).length).toBeGreaterThan(1000);
  }, 120_000);
});
