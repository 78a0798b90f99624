import { describe, expect, it } from 'vitest';
import {
  GAL16V8_AC0_FUSE,
  GAL16V8_PTD_FIRST_FUSE,
  GAL16V8_SYN_FUSE,
  gal16v8,
  gal16v8Ac1Fuse,
  gal16v8Column,
  gal16v8FirstRow,
  gal16v8XorFuse,
} from '../../server/src/core/logic/devices/gal16v8';
import { gal22v10, gal22v10Column, gal22v10OutputEnableRow, gal22v10S0Fuse } from '../../server/src/core/logic/devices/gal22v10';
import { fitDevices } from '../../server/src/core/logic/fit';
import { buildGalImage, checkGalImage } from '../../server/src/core/logic/galImage';
import { writeJedec } from '../../server/src/core/logic/jedec';
import { minimise } from '../../server/src/core/logic/minimise';
import { randomTable } from './randomTables';

const row = (fuses: Uint8Array, first: number, width: number) => Array.from(fuses.subarray(first, first + width)).join('');

describe('GAL22V10 fuse layout (Lattice GAL22V10 data sheet logic diagram, as in the reference facts)', () => {
  it('places S0/S1 at 5808 + 2*(23 - pin)', () => {
    expect([23, 22, 14].map(gal22v10S0Fuse)).toEqual([5808, 5810, 5826]);
    expect(() => gal22v10S0Fuse(13)).toThrow(/not an output pin/);
  });

  it('gives each output an enable row followed by 8,10,12,14,16,16,14,12,10,8 term rows', () => {
    expect([23, 22, 21, 20, 19, 18, 17, 16, 15, 14].map(gal22v10OutputEnableRow)).toEqual([1, 10, 21, 34, 49, 66, 83, 98, 111, 122]);
    // Pin 14's eight terms end at row 130, just before the synchronous preset row 131.
    expect(gal22v10OutputEnableRow(14) + 8).toBe(130);
  });

  it('uses the column of each pin (true signal, complement next)', () => {
    expect([1, 23, 2, 13, 11, 14].map(gal22v10Column)).toEqual([0, 2, 4, 42, 40, 38]);
    expect(() => gal22v10Column(12)).toThrow(/does not feed/);
  });

  it('programs a term, the enable row, polarity and combinational mode', () => {
    // Output pin 23 = NOT(a0 & !a1), a0 on pin 2 (column 4), a1 on pin 3 (column 8, complement 9).
    const fuses = gal22v10.buildFuses({
      mode: 'combinational',
      inputPins: new Map([
        [0, 2],
        [1, 3],
      ]),
      outputs: [{ pin: 23, terms: [{ care: 3, value: 1 }], inverted: true }],
    });
    expect(fuses).toHaveLength(5892);
    expect(row(fuses, 0, 44)).toBe('0'.repeat(44)); // reset term false
    expect(row(fuses, 44, 44)).toBe('1'.repeat(44)); // enable: constant true
    expect(row(fuses, 88, 44)).toBe('1111011110' + '1'.repeat(34));
    expect(row(fuses, 132, 44)).toBe('0'.repeat(44)); // unused term: false
    expect([fuses[5808], fuses[5809]]).toEqual([0, 1]); // active low, combinational
    // An unused cell is combinational with its output disabled.
    expect(row(fuses, 10 * 44, 44)).toBe('0'.repeat(44));
    expect([fuses[5810], fuses[5811]]).toEqual([0, 1]);
  });

  it('evaluates its own fuse map', () => {
    const fuses = gal22v10.buildFuses({
      mode: 'combinational',
      inputPins: new Map([[0, 2], [1, 3]]),
      outputs: [{ pin: 23, terms: [{ care: 3, value: 1 }], inverted: true }],
    });
    const at = (a0: 0 | 1, a1: 0 | 1) => gal22v10.evaluate(fuses, new Map([[2, a0], [3, a1]]));
    expect([at(0, 0).get(23), at(1, 0).get(23), at(1, 1).get(23), at(1, 0).get(22)]).toEqual([1, 0, 1, 'Z']);
  });

  it('refuses plans that break the device rules', () => {
    const base = { mode: 'combinational', inputPins: new Map([[0, 2]]) };
    expect(() => gal22v10.buildFuses({ ...base, outputs: [{ pin: 23, terms: Array(9).fill({ care: 1, value: 1 }), inverted: false }] })).toThrow(/holds 8 product terms/);
    expect(() => gal22v10.buildFuses({ ...base, outputs: [{ pin: 2, terms: [], inverted: false }] })).toThrow(/not an output pin/);
    expect(() => gal22v10.buildFuses({ mode: 'combinational', inputPins: new Map([[0, 24]]), outputs: [] })).toThrow(/cannot be used as an input/);
  });
});

describe('GAL16V8 fuse layout (Lattice GAL16V8 data sheet fuse map, as in the reference facts)', () => {
  it('places XOR, AC1, PTD, SYN and AC0', () => {
    expect([19, 18, 12].map(gal16v8XorFuse)).toEqual([2048, 2049, 2055]);
    // AC1 order (pin 19 first) is also what jedutil reads, see tests/outside/logic-jedutil.test.ts.
    expect([19, 12].map(gal16v8Ac1Fuse)).toEqual([2120, 2127]);
    expect([GAL16V8_PTD_FIRST_FUSE, GAL16V8_SYN_FUSE, GAL16V8_AC0_FUSE]).toEqual([2128, 2192, 2193]);
    expect([19, 18, 12].map(gal16v8FirstRow)).toEqual([0, 8, 56]);
  });

  it('uses the mode-dependent column tables', () => {
    expect([2, 1, 19, 14, 12, 11].map((pin) => gal16v8Column('simple', pin))).toEqual([0, 2, 6, 18, 26, 30]);
    expect([2, 1, 18, 15, 13, 11].map((pin) => gal16v8Column('complex', pin))).toEqual([0, 2, 6, 18, 26, 30]);
    expect(() => gal16v8Column('simple', 15)).toThrow(/does not feed/);
    expect(() => gal16v8Column('complex', 19)).toThrow(/does not feed/);
  });

  it('programs simple mode: 8 terms, AC1 = 0 on outputs, 1 on inputs, unused 15/16 driven low', () => {
    const fuses = gal16v8.buildFuses({
      mode: 'simple',
      inputPins: new Map([[0, 2], [1, 19]]),
      outputs: [{ pin: 18, terms: [{ care: 3, value: 2 }], inverted: false }],
    });
    expect([fuses[GAL16V8_SYN_FUSE], fuses[GAL16V8_AC0_FUSE]]).toEqual([1, 0]);
    // Row 8 (first row of pin 18): !a0 (pin 2, complement column 1) & a1 (pin 19, column 6).
    expect(row(fuses, 8 * 32, 32)).toBe('10111101' + '1'.repeat(24));
    expect([fuses[gal16v8Ac1Fuse(18)], fuses[gal16v8XorFuse(18)], fuses[gal16v8Ac1Fuse(19)]]).toEqual([0, 1, 1]);
    expect([fuses[gal16v8Ac1Fuse(15)], fuses[gal16v8XorFuse(15)]]).toEqual([0, 1]);
    expect(row(fuses, GAL16V8_PTD_FIRST_FUSE, 64)).toBe('1'.repeat(64));
  });

  it('programs complex mode: enable row first, then 7 terms; pins 12 and 19 cannot be inputs', () => {
    const fuses = gal16v8.buildFuses({
      mode: 'complex',
      inputPins: new Map([[0, 2]]),
      outputs: [{ pin: 19, terms: [{ care: 1, value: 1 }], inverted: true }],
    });
    expect([fuses[GAL16V8_SYN_FUSE], fuses[GAL16V8_AC0_FUSE], fuses[gal16v8Ac1Fuse(19)], fuses[gal16v8XorFuse(19)]]).toEqual([1, 1, 1, 0]);
    expect(row(fuses, 0, 32)).toBe('1'.repeat(32));
    expect(row(fuses, 32, 32)).toBe('01' + '1'.repeat(30));
    expect(row(fuses, 8 * 32, 32)).toBe('0'.repeat(32)); // pin 18 unused: enable false
    expect(() => gal16v8.buildFuses({ mode: 'complex', inputPins: new Map([[0, 12]]), outputs: [] })).toThrow(/cannot be used as an input/);
    expect(() =>
      gal16v8.buildFuses({ mode: 'complex', inputPins: new Map([[0, 2]]), outputs: [{ pin: 19, terms: Array(8).fill({ care: 1, value: 1 }), inverted: false }] }),
    ).toThrow(/holds 7 product terms/);
  });
});

describe('read-back of whole images', () => {
  for (const [device, mode] of [
    ['GAL22V10', 'auto'],
    ['GAL16V8', 'simple'],
    ['GAL16V8', 'complex'],
  ] as const) {
    it(`${device} ${mode}: every fitted device reads back equal to the table, and a wrong fuse is caught`, () => {
      const table = randomTable(11, { nInputs: 7, nOutputs: 6, structured: true, dcShare: 0.2 });
      const minimised = minimise(table, { polarity: 'best' });
      const fit = fitDevices(minimised, { device, mode });
      expect(fit.problems).toEqual([]);
      for (const fitted of fit.devices) {
        const image = buildGalImage(table, fitted, fit.devices.length, { designName: 'random', signature: 'TEST' });
        expect(checkGalImage(table, fitted, image.jedec)).toEqual({ ok: true, vectorsChecked: image.vectors.length });
        expect(image.vectors.length).toBeGreaterThan(0);
        // Flip the polarity of the first output and write a consistent file: the logic check must fire.
        const broken = image.fuses.slice();
        const pin = fitted.outputs[0].pin;
        const polarityFuse = device === 'GAL22V10' ? gal22v10S0Fuse(pin) : gal16v8XorFuse(pin);
        broken[polarityFuse] ^= 1;
        const brokenText = writeJedec({ designText: 'broken', pinCount: device === 'GAL22V10' ? 24 : 20, fuses: broken, vectors: image.vectors });
        const check = checkGalImage(table, fitted, brokenText);
        expect(check.ok).toBe(false);
        if (!check.ok) expect(check.message).toMatch(new RegExp(`read back, pin ${pin} \\(${fitted.outputs[0].name}\\) gives`));
      }
    });
  }

  it('reports a file that does not read back', () => {
    const table = randomTable(2, { nInputs: 4, structured: true });
    const fit = fitDevices(minimise(table), { device: 'GAL22V10' });
    const image = buildGalImage(table, fit.devices[0], 1, { designName: 'x' });
    const check = checkGalImage(table, fit.devices[0], image.jedec.replace(/\x03[0-9A-F]{4}/, '\x030001'));
    expect(check).toEqual({ ok: false, message: expect.stringMatching(/does not read back: transmission checksum/) });
  });
});
