// The exhaustive safety check of fitted logic (logic/verifyFit.ts): the demo's safe fit passes
// at every address; covers made unsafe on purpose fail with the right address and drivers; the
// old unconstrained don't-cares fail as the issue describes; its cached per-word verdicts agree
// with judging every address directly, also for words of more than 31 ruled bits; and fuse maps
// evaluated from their fuses give the levels of their covers.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generateTable } from '../../bench/generate';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine, type EncodedStore } from '../../server/src/core/encode/encoder';
import { storeTruthTable } from '../../server/src/core/encode/storeTable';
import { buildGalImage } from '../../server/src/core/logic/galImage';
import { fitDevices } from '../../server/src/core/logic/fit';
import { minimise, type Minimised } from '../../server/src/core/logic/minimise';
import { ruledBits, storeSafety, wordHazards } from '../../server/src/core/logic/safeCare';
import { type TruthTable, wordsFor } from '../../server/src/core/logic/truthTable';
import { type FittedLevels, coverLevels, fuseMapsLevels, minimisedLevels, verifyFitSafety } from '../../server/src/core/logic/verifyFit';
import type { Machine } from '../../server/src/core/model/types';
import { randomMachine, seededRandom } from '../support/randomMachines';
import { unconstrainedTable } from '../support/unconstrained';

const demo = analyse(readFileSync(join(__dirname, '../../examples/halyard-32.pwt'), 'utf8')).machine;
const encoded = encodeMachine(demo);
const enc = encoded.stores[0];
const built = storeTruthTable(demo, encoded, enc);
const minimised = minimise(built.table, { polarity: 'best' });

/** The minimised outputs with one output replaced by a constant line level. */
function withConstant(m: Minimised, name: string, level: 0 | 1): Minimised {
  return { ...m, outputs: m.outputs.map((o) => (o.name === name ? { ...o, terms: [], inverted: level === 1 } : o)) };
}

describe('the demo fit', () => {
  it('is safe at every one of the 8192 addresses', () => {
    const report = verifyFitSafety(demo, enc, built.safety, minimisedLevels(minimised, built.outputBits));
    expect(report).toEqual({ checked: 8192, unsafe: 0, contended: 0, first: undefined });
  });

  it('fails when a driver is asserted everywhere, naming the first address and both drivers', () => {
    // t.oe is active low: line level 0 asserts it at every address.
    const report = verifyFitSafety(demo, enc, built.safety, minimisedLevels(withConstant(minimised, 't.oe', 0), built.outputBits));
    expect(report.unsafe).toBeGreaterThan(1000);
    expect(report.contended).toBe(report.unsafe);
    // Address 0 is step 0 of opcode 0000011: the fetch step, where alu.oe drives result.
    expect(report.first?.address).toBe(0);
    expect(report.first?.contention).toEqual([{ bus: 'result', strobes: ['t.oe', 'alu.oe'], lines: { hi: 31, lo: 0 } }]);
  });

  it('fails when a write is asserted where no step covers, though it fights nobody', () => {
    const report = verifyFitSafety(demo, enc, built.safety, minimisedLevels(withConstant(minimised, 'mem.wr', 0), built.outputBits));
    expect(report.contended).toBe(0);
    // Every address holding the fill word in the ROM (no step covers it) is unsafe, and only those.
    expect(report.unsafe).toBe([...enc.origin].filter((o) => o < 0).length);
    expect(report.first?.offIdle).toEqual(['mem.wr']);
    expect(enc.origin[report.first!.address]).toBe(-1);
  });

  it('fails for the old unconstrained don\'t-cares, with two drivers on a bus at thousands of addresses', () => {
    const loose = unconstrainedTable(built.table, built.unreachableBits);
    const report = verifyFitSafety(demo, enc, built.safety, minimisedLevels(minimise(loose, { polarity: 'best' }), built.outputBits));
    expect(report.contended).toBeGreaterThan(1000);
    expect(report.unsafe).toBeGreaterThan(report.contended - 1);
  });

  it('reads the same levels from the fuse maps as from their covers', () => {
    const fit = fitDevices(minimised, { device: 'GAL22V10' });
    const maps = fit.devices.map((d) => ({ fitted: d, jedec: buildGalImage(built.table, d, fit.devices.length, { designName: 'demo', maxVectors: 0 }).jedec }));
    const read = fuseMapsLevels(maps, built.outputBits, built.table.nInputs);
    if (!read.ok) throw new Error(read.message);
    expect(read.levels).toHaveLength(built.table.outputs.length);
    for (const d of fit.devices) {
      for (const o of d.outputs) {
        const fromMap = read.levels.find((l) => l.bit === built.outputBits[o.outputIndex])!.levels;
        expect(fromMap, o.name).toEqual(coverLevels(built.table.nInputs, o.terms, o.inverted));
      }
    }
    expect(verifyFitSafety(demo, enc, built.safety, read.levels).unsafe).toBe(0);
  });
});

/** Random levels for every output of a store, then the verdict at every address judged directly. */
function directCount(machine: Machine, store: EncodedStore, table: TruthTable, outputBits: number[], seed: number): { levels: FittedLevels[]; unsafe: number; firstAddress: number } {
  const rnd = seededRandom(seed);
  const safety = storeSafety(machine, store);
  // Mostly the ROM's own level, sometimes flipped, so both safe and unsafe words occur.
  const levels = outputBits.map((bit) => {
    const bits = new Uint32Array(wordsFor(table.nInputs));
    for (let a = 0; a < 2 ** table.nInputs; a++) {
      const rom = (store.words[a * store.lanes + (bit >>> 5)] >>> (bit & 31)) & 1;
      if (rom ^ (rnd() < 0.02 ? 1 : 0)) bits[a >>> 5] |= 1 << (a & 31);
    }
    return { bit, levels: bits };
  });
  let unsafe = 0;
  let firstAddress = -1;
  for (let a = 0; a < 2 ** table.nInputs; a++) {
    const levelOf = (bit: number): 0 | 1 => {
      const own = levels.find((l) => l.bit === bit);
      return (own ? (own.levels[a >>> 5] >>> (a & 31)) & 1 : (store.words[a * store.lanes + (bit >>> 5)] >>> (bit & 31)) & 1) as 0 | 1;
    };
    const h = wordHazards(machine, safety, levelOf, store.origin[a] < 0);
    if (h.contention.length > 0 || h.offIdle.length > 0) {
      unsafe++;
      if (firstAddress < 0) firstAddress = a;
    }
  }
  return { levels, unsafe, firstAddress };
}

describe('the cached verdicts against judging every address directly', () => {
  it('agree on random machines with random flips', () => {
    for (const seed of [3, 7, 11]) {
      const { machine } = randomMachine(seed);
      const e = encodeMachine(machine);
      const { table, outputBits } = storeTruthTable(machine, e, e.stores[0]);
      const direct = directCount(machine, e.stores[0], table, outputBits, seed);
      const report = verifyFitSafety(machine, e.stores[0], storeSafety(machine, e.stores[0]), direct.levels);
      expect(direct.unsafe, `seed ${seed}`).toBeGreaterThan(0);
      expect(report.unsafe, `seed ${seed}`).toBe(direct.unsafe);
      expect(report.first?.address).toBe(direct.firstAddress);
    }
  });

  it('agree on a store with more than 31 ruled bits (a key of several lanes)', () => {
    const { machine } = analyse(generateTable({ lines: 400 }));
    const e = encodeMachine(machine);
    const store = e.stores[0];
    const { table, outputBits } = storeTruthTable(machine, e, store);
    expect(ruledBits(storeSafety(machine, store)).length).toBeGreaterThan(31);
    const direct = directCount(machine, store, table, outputBits, 5);
    const report = verifyFitSafety(machine, store, storeSafety(machine, store), direct.levels);
    expect(direct.unsafe).toBeGreaterThan(0);
    expect(report.unsafe).toBe(direct.unsafe);
    expect(report.first?.address).toBe(direct.firstAddress);
  }, 60_000);
});
