import { describe, expect, it } from 'vitest';
import { fitDevices, normaliseOutput } from '../../server/src/core/logic/fit';
import type { Minimised, MinimisedOutput } from '../../server/src/core/logic/minimise';
import type { ProductTerm } from '../../server/src/core/logic/truthTable';

/** A minimised table made to order: output k has `counts[k]` distinct terms over the inputs in `supports[k]`. */
function madeToOrder(counts: number[], supports?: number[], nInputs = 12): Minimised {
  const outputs: MinimisedOutput[] = counts.map((count, k) => {
    const support = supports?.[k] ?? 0b1111;
    const terms: ProductTerm[] = [];
    for (let t = 0; terms.length < count; t++) {
      // Distinct minterm-like terms over the support (enough of them for these tests).
      let value = 0;
      let bitIndex = 0;
      for (let i = 0; i < 32; i++) if ((support >>> i) & 1) value |= ((t >> bitIndex++) & 1) << i;
      terms.push({ care: support, value });
    }
    return { name: `out${k}`, outputIndex: k, inverted: false, terms, method: 'exact', provedMinimal: true };
  });
  return { inputNames: Array.from({ length: nInputs }, (_, i) => `in${i}`), nInputs, outputs };
}

describe('fitting outputs onto GAL devices', () => {
  it('gives the biggest term counts the biggest GAL22V10 cells', () => {
    const fit = fitDevices(madeToOrder([3, 16, 9, 15]), { device: 'GAL22V10' });
    expect(fit.ok).toBe(true);
    expect(fit.devices).toHaveLength(1);
    // Listed by pin: the two 16-term cells (18, 19) take the two biggest outputs, the 14-term cells (17, 20) the rest.
    expect(fit.devices[0].outputs.map((o) => `${o.name}@${o.pin}:${o.terms.length}/${o.capacity}`)).toEqual([
      'out2@17:9/14',
      'out1@18:16/16',
      'out3@19:15/16',
      'out0@20:3/14',
    ]);
    expect(fit.devices[0].inputs.map((i) => `${i.name}@${i.pin}`)).toEqual(['in0@1', 'in1@2', 'in2@3', 'in3@4']);
  });

  it('spreads outputs over more devices when cells run out', () => {
    const fit = fitDevices(madeToOrder(Array(12).fill(2)), { device: 'GAL22V10' });
    expect(fit.devices.map((d) => d.outputs.length)).toEqual([10, 2]);
    expect(fit.ok).toBe(true);
  });

  it('keeps every input an output needs on the same device', () => {
    // out0 and out2 use inputs 0-11, out1 uses 12-23: 24 inputs do not fit one GAL22V10 with outputs.
    const fit = fitDevices(madeToOrder([4, 4, 4], [0x000fff, 0xfff000, 0x000fff], 24), { device: 'GAL22V10' });
    expect(fit.ok).toBe(true);
    expect(fit.devices.map((d) => d.outputs.map((o) => o.name))).toEqual([['out0', 'out2'], ['out1']]);
    expect(fit.devices[1].inputs.map((i) => i.name)).toEqual(Array.from({ length: 12 }, (_, i) => `in${12 + i}`));
    for (const device of fit.devices) {
      const pins = [...device.inputs.map((i) => i.pin), ...device.outputs.map((o) => o.pin)];
      expect(new Set(pins).size).toBe(pins.length);
    }
  });

  it('uses I/O pins as inputs when the dedicated inputs are not enough, smallest cells first', () => {
    const fit = fitDevices(madeToOrder([5], [0x3fff], 14), { device: 'GAL22V10' });
    expect(fit.devices[0].inputs.map((i) => i.pin)).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 13, 14, 23]);
    expect(fit.devices[0].outputs[0].pin).toBe(18);
  });

  it('explains an output too big for any cell, with the ways out', () => {
    const fit = fitDevices(madeToOrder([17, 16]), { device: 'GAL22V10' });
    expect(fit.ok).toBe(false);
    expect(fit.devices.map((d) => d.outputs.map((o) => o.name))).toEqual([['out1']]);
    expect(fit.problems).toHaveLength(1);
    expect(fit.problems[0].kind).toBe('terms');
    expect(fit.problems[0].message).toBe('output "out0" needs 17 product terms after minimisation, but the largest GAL22V10 cell (pins 18 and 19) holds 16');
    expect(fit.problems[0].options.join('\n')).toMatch(/split the control store[\s\S]*address-decode stage[\s\S]*ROM/);
  });

  it('explains an output with too many inputs', () => {
    const fit = fitDevices(madeToOrder([2], [0x3fffff], 22), { device: 'GAL22V10' });
    expect(fit.problems.map((p) => [p.kind, p.message])).toEqual([
      ['inputs', 'output "out0" depends on 22 address inputs, but a GAL22V10 takes at most 21 inputs beside one output'],
    ]);
    expect(fitDevices(madeToOrder([2], [0x1fffff], 22), { device: 'GAL22V10' }).ok).toBe(true);
  });

  it('chooses the GAL16V8 mode: simple for 8 terms, complex only when asked, and cautions about pins 15/16', () => {
    const eight = fitDevices(madeToOrder([8]), { device: 'GAL16V8' });
    expect(eight.devices[0].mode).toBe('simple');
    expect(eight.devices[0].outputs[0].pin).toBe(15);
    expect(eight.devices[0].cautions[0]).toMatch(/unused pin 16 drives a constant low level/);
    const forced = fitDevices(madeToOrder([8]), { device: 'GAL16V8', mode: 'complex' });
    expect(forced.problems[0].message).toBe('output "out0" needs 8 product terms after minimisation, but the largest GAL16V8 cell (pins 12, 13, 14, 15, 16, 17, 18 and 19) holds 7');
    const seven = fitDevices(madeToOrder([7, 7]), { device: 'GAL16V8', mode: 'complex' });
    expect(seven.devices[0].outputs.map((o) => o.pin)).toEqual([12, 19]);
    expect(seven.devices[0].cautions.join(' ')).not.toMatch(/constant low/);
  });

  it('honours a pin map and keeps mapped pins free on devices that do not use them', () => {
    const fit = fitDevices(madeToOrder([2, 3]), { device: 'GAL22V10', pins: { out0: 14, in0: 13, in3: 2 } });
    expect(fit.ok).toBe(true);
    const device = fit.devices[0];
    expect(device.outputs.find((o) => o.name === 'out0')?.pin).toBe(14);
    expect(device.inputs.map((i) => `${i.name}@${i.pin}`)).toEqual(['in1@1', 'in3@2', 'in2@3', 'in0@13']);
  });

  it('reports pin-map mistakes instead of throwing', () => {
    const fit = fitDevices(madeToOrder([2]), { device: 'GAL22V10', pins: { out0: 12, in0: 3, in1: 3, ghost: 5 } });
    expect(fit.ok).toBe(false);
    expect(fit.problems.map((p) => p.message)).toEqual([
      'pin 12 given for "out0" is not a signal pin of the GAL22V10 (pins 1-24, VCC 24, GND 12)',
      'pin 3 is given to both "in0" and "in1"',
      'the pin map names "ghost", which is neither an input nor a minimised output',
    ]);
    const notOutput = fitDevices(madeToOrder([2]), { device: 'GAL22V10', pins: { out0: 5 } });
    expect(notOutput.problems[0]).toMatchObject({ kind: 'pin-map', message: 'pin 5 given for output "out0" is not an output pin of the GAL22V10 in combinational mode' });
  });

  it('stops at the allowed number of devices', () => {
    const fit = fitDevices(madeToOrder(Array(11).fill(1)), { device: 'GAL22V10', maxDevices: 1 });
    expect(fit.devices).toHaveLength(1);
    expect(fit.problems.map((p) => p.kind)).toEqual(['device-count']);
  });

  it('programs constant outputs without product terms', () => {
    expect(normaliseOutput([{ care: 0, value: 0 }], false)).toEqual({ terms: [], inverted: true });
    expect(normaliseOutput([{ care: 0, value: 0 }], true)).toEqual({ terms: [], inverted: false });
    const terms = [{ care: 1, value: 1 }];
    expect(normaliseOutput(terms, false)).toEqual({ terms, inverted: false });
  });

  it('rejects an unknown mode with the list of modes', () => {
    expect(() => fitDevices(madeToOrder([1]), { device: 'GAL16V8', mode: 'registered' })).toThrow(/use auto, simple, complex/);
  });
});
