// Outside check of our JEDEC fuse maps with jedutil (Debian package mame-tools): it must accept
// every file we write (framing, QF, fuse checksum, transmission checksum), reject a corrupted
// checksum, and print equations that, evaluated on every input combination, equal our table.
// jedutil prints `o<pin> = ...` with `i<pin>` inputs, `/` for NOT, `&` and `+`, one
// `o<pin>.oe = ...` line per output, and hides an always-true product term (reference facts).
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { fitDevices } from '../../server/src/core/logic/fit';
import { buildGalImage } from '../../server/src/core/logic/galImage';
import { minimise } from '../../server/src/core/logic/minimise';
import { type TruthTable, tableFromFunction } from '../../server/src/core/logic/truthTable';
import { randomTable } from '../logic/randomTables';
import { haveTools } from '../support/tools';

import { evaluatePrinted, parseJedutilEquations } from '../support/jedutil';

const available = haveTools(['jedutil'], 'mame-tools');
const tmpRoot = join(__dirname, '..', '.tmp');
mkdirSync(tmpRoot, { recursive: true });
const workDir = mkdtempSync(join(tmpRoot, 'logic-jedutil-'));

function runJedutil(file: string, device: string): { status: number | null; output: string } {
  const result = spawnSync('jedutil', ['-view', file, device], { encoding: 'utf8' });
  return { status: result.status, output: `${result.stdout}${result.stderr}` };
}

/** Writes every device of a fit, runs jedutil on it and compares the printed logic with the table on every address. */
function checkAgainstJedutil(
  table: TruthTable,
  device: 'GAL22V10' | 'GAL16V8',
  mode: string,
  label: string,
  polarity: 'best' | 'positive' = 'best',
): number {
  const minimised = minimise(table, { polarity });
  const fit = fitDevices(minimised, { device, mode });
  expect(fit.problems).toEqual([]);
  let comparisons = 0;
  for (const fitted of fit.devices) {
    const image = buildGalImage(table, fitted, fit.devices.length, { designName: label });
    const file = join(workDir, `${label}-${fitted.index}.jed`);
    writeFileSync(file, image.jedec);
    const { status, output } = runJedutil(file, device);
    expect(status, output).toBe(0);
    const printed = parseJedutilEquations(output);
    for (const output of fitted.outputs) {
      expect(printed.get(output.pin)?.enable, `${label} pin ${output.pin}`).toBe('vcc');
    }
    for (let address = 0; address < 2 ** table.nInputs; address++) {
      const levels = new Map<number, 0 | 1>(fitted.inputs.map((input) => [input.pin, ((address >>> input.inputIndex) & 1) as 0 | 1]));
      for (const output of fitted.outputs) {
        const bits = table.outputs[output.outputIndex];
        const bit = 1 << (address & 31);
        if (bits.dc[address >>> 5] & bit) continue;
        const expected = bits.on[address >>> 5] & bit ? 1 : 0;
        const equation = printed.get(output.pin);
        if (!equation) throw new Error(`${label}: jedutil printed no equation for pin ${output.pin} (${output.name})`);
        expect(evaluatePrinted(equation, levels), `${label} ${output.name} on pin ${output.pin} at address ${address}`).toBe(expected);
        comparisons++;
      }
    }
  }
  return comparisons;
}

describe.skipIf(!available)('jedutil reads our JEDEC files (mame-tools)', () => {
  it('lists both devices', () => {
    const list = execFileSync('jedutil', ['-viewlist'], { encoding: 'utf8' });
    expect(list).toMatch(/^GAL16V8$/m);
    expect(list).toMatch(/^GAL22V10$/m);
  });

  // Structured tables (ORs of a few random cubes) on odd seeds, small irregular ones on even seeds,
  // sized so that every output fits a cell of the device.
  const cases = [
    { device: 'GAL22V10', mode: 'auto', nInputs: 9, nOutputs: 12, maxCubes: 12 },
    { device: 'GAL16V8', mode: 'simple', nInputs: 8, nOutputs: 6, maxCubes: 6 },
    { device: 'GAL16V8', mode: 'complex', nInputs: 8, nOutputs: 6, maxCubes: 5 },
  ] as const;
  for (const { device, mode, nInputs, nOutputs, maxCubes } of cases) {
    it(`${device} ${mode}: printed equations equal the truth table on every address`, () => {
      let comparisons = 0;
      for (let seed = 1; seed <= 6; seed++) {
        const structured = seed % 2 === 1;
        const table = structured
          ? randomTable(seed * 13 + nInputs, { nInputs, nOutputs, structured, maxCubes, dcShare: 0.2 })
          : randomTable(seed * 13 + nInputs, { nInputs: 5, nOutputs, onShare: 0.15, dcShare: 0.2 });
        comparisons += checkAgainstJedutil(table, device, mode, `${device}-${mode}-${seed}`);
      }
      expect(comparisons).toBeGreaterThan(1000);
    });
  }

  it('handles constant outputs and inputs on I/O pins', () => {
    // 14 inputs force two GAL22V10 I/O pins into input use; outputs include constant 0 and 1.
    // Positive polarity makes the minimiser return constant 1 as one always-true term, which
    // jedutil would hide: the fitter must program it as an empty active-low sum instead.
    const table = tableFromFunction(
      Array.from({ length: 14 }, (_, i) => `a${i}`),
      ['zero', 'one', 'wide', 'narrow'],
      (m, j) => (j === 0 ? 0 : j === 1 ? 1 : j === 2 ? (((m >> 12) & 3) === 3 || (m & 0x101) === 0x100 ? 1 : 0) : (m & 7) === 5 ? 1 : '-'),
    );
    expect(checkAgainstJedutil(table, 'GAL22V10', 'auto', 'constants', 'positive')).toBeGreaterThan(16384 * 3);
    const small = tableFromFunction(['a', 'b'], ['one', 'zero'], (_, j) => (j === 0 ? 1 : 0));
    expect(checkAgainstJedutil(small, 'GAL16V8', 'simple', 'constants16', 'positive')).toBe(8);
  });

  it('rejects a corrupted fuse checksum or transmission checksum, and accepts the untouched file', () => {
    const table = randomTable(5, { nInputs: 5, nOutputs: 2, structured: true });
    const fit = fitDevices(minimise(table), { device: 'GAL22V10' });
    const good = buildGalImage(table, fit.devices[0], 1, { designName: 'checksums', maxVectors: 0 }).jedec;
    const goodFile = join(workDir, 'good.jed');
    writeFileSync(goodFile, good);
    expect(runJedutil(goodFile, 'GAL22V10').status).toBe(0);

    // Wrong C value, with a transmission checksum recomputed so that only C is wrong.
    const badFuse = good.replace(/\nC([0-9A-F]{4})\*/, (_, hex) => `\nC${((parseInt(hex, 16) + 1) & 0xffff).toString(16).toUpperCase().padStart(4, '0')}*`);
    const etx = badFuse.indexOf('\x03');
    let sum = 0;
    for (let i = 0; i <= etx; i++) sum = (sum + (badFuse.charCodeAt(i) & 0x7f)) & 0xffff;
    const badFuseFile = join(workDir, 'bad-fuse-checksum.jed');
    writeFileSync(badFuseFile, badFuse.slice(0, etx + 1) + sum.toString(16).toUpperCase().padStart(4, '0') + '\n');
    const fuseRun = runJedutil(badFuseFile, 'GAL22V10');
    expect(fuseRun.status).not.toBe(0);
    expect(fuseRun.output).toMatch(/checksum/i);

    const badTransmission = good.replace(/\x03([0-9A-F]{4})/, (_, hex) => `\x03${((parseInt(hex, 16) + 1) & 0xffff).toString(16).toUpperCase().padStart(4, '0')}`);
    const badTransmissionFile = join(workDir, 'bad-transmission-checksum.jed');
    writeFileSync(badTransmissionFile, badTransmission);
    const transmissionRun = runJedutil(badTransmissionFile, 'GAL22V10');
    expect(transmissionRun.status).not.toBe(0);
    expect(transmissionRun.output).toMatch(/checksum/i);
  });
});
