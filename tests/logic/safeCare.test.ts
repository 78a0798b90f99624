// Which control outputs may float where no step covers the address (logic/safeCare.ts), and
// the truth tables built from that classification (encode/storeTable.ts): on the demo, at the
// two kinds of address the issue names (a step past a class's end, an illegal opcode), and on
// a two-store machine where a field steers the other store and both stores drive one bus.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { storeTruthTable } from '../../server/src/core/encode/storeTable';
import { storeSafety } from '../../server/src/core/logic/safeCare';
import { getValue, outputIndexOf, type TruthTable } from '../../server/src/core/logic/truthTable';
import { dedent } from '../support/annotated';
import { sequencerDemo } from '../support/sequencer';

const demo = analyse(readFileSync(join(__dirname, '../../examples/halyard-32.pwt'), 'utf8')).machine;
const encoded = encodeMachine(demo);
const enc = encoded.stores[0];

/** A demo address from its lines: step 0..2, taken 3, f7b5 4, funct3 5..7, opcode[6:2] 8..12. */
const demoAddress = (step: number, opcode: number, funct3 = 0) => step | (funct3 << 5) | ((opcode >>> 2) << 8);
const valueOf = (table: TruthTable, name: string, address: number) => getValue(table, outputIndexOf(table, name), address);

describe('the safety classification of the demo store', () => {
  const safety = storeSafety(demo, enc);
  const role = (name: string) => safety.bits.find((b) => b.output === name)!;

  it('calls enables and memory reads drivers, every other strobe held, and fields free', () => {
    expect(role('t.oe')).toMatchObject({ role: 'driver', bus: 'result', activeLevel: 0, fillLevel: 1 });
    expect(role('mem.rd')).toMatchObject({ role: 'driver', bus: 'result' });
    for (const name of ['x.rd.ck', 'pc.ck', 'pc.inc', 'mem.wr', 'cmp.ck', 'done', 'sys.trap']) expect(role(name), name).toMatchObject({ role: 'held', mayFloat: false });
    // mem.wr is active low: its idle (fill) level is 1.
    expect(role('mem.wr').fillLevel).toBe(1);
    expect(role('done').fillLevel).toBe(0);
    for (const name of ['alu.fn[0]', 'alu.fn[3]', 'imm.fmt[2]', 'mem.size[1]']) expect(role(name), name).toMatchObject({ role: 'free', mayFloat: true });
  });

  it('lets exactly one driver per bus float, the one asserted at the most covered addresses', () => {
    for (const bus of ['left', 'right', 'result']) {
      const floating = safety.bits.filter((b) => b.role === 'driver' && b.bus === bus && b.mayFloat).map((b) => b.signal);
      expect(floating, bus).toHaveLength(1);
      expect(safety.freeDriver.get(bus)).toBe(floating[0]);
    }
    // alu.oe drives result in almost every step; t.oe in one.
    expect(safety.freeDriver.get('result')).toBe('alu.oe');
  });

  it('chooses the free driver among the outputs being fitted', () => {
    expect(storeSafety(demo, enc, new Set(['t.oe', 'mem.rd'])).freeDriver.get('result')).toBe('mem.rd');
    expect(storeSafety(demo, enc, new Set(['done'])).freeDriver.size).toBe(0);
  });
});

describe('the demo truth table at addresses no step covers', () => {
  const { table, unreachable } = storeTruthTable(demo, encoded, enc);

  it('holds every strobe but the free drivers at the fill level past the end of LOAD (step 4)', () => {
    const address = demoAddress(4, 0b0000011);
    expect(enc.origin[address]).toBe(-1);
    expect(valueOf(table, 't.oe', address)).toBe(1); // active low: idle
    expect(valueOf(table, 'mem.rd', address)).toBe(1);
    expect(valueOf(table, 'alu.oe', address)).toBe('-');
    expect(valueOf(table, 'mem.wr', address)).toBe(1);
    expect(valueOf(table, 'x.rd.ck', address)).toBe(0);
    expect(valueOf(table, 'done', address)).toBe(0);
    expect(valueOf(table, 'alu.fn[2]', address)).toBe('-');
  });

  it('does the same at an illegal opcode (0000111, step 2)', () => {
    const address = demoAddress(2, 0b0000111);
    expect(enc.origin[address]).toBe(-1);
    expect(valueOf(table, 'pc.oe', address)).toBe('-');
    expect(valueOf(table, 'x.rs1.oe', address)).toBe(1);
    expect(valueOf(table, 'pc.inc', address)).toBe(0);
  });

  it('keeps the table as it was at covered addresses, and --keep-fill holds everything', () => {
    const covered = demoAddress(2, 0b0000011);
    expect(valueOf(table, 'alu.oe', covered)).toBe(0);
    expect(valueOf(table, 'x.rs1.oe', covered)).toBe(0);
    expect(unreachable).toBeGreaterThan(6000);
    const kept = storeTruthTable(demo, encoded, enc, { keepFill: true });
    expect(kept.unreachable).toBe(0);
    expect(valueOf(kept.table, 'alu.oe', demoAddress(4, 0b0000011))).toBe(1);
  });
});

describe('two stores', () => {
  const text = dedent(`
      bus result 8
      part a register 8
      part b register 8
      part c register 8
      strobe a.oe enable a -> result active low
      strobe c.oe enable c -> result active low
      strobe b.ck clock result -> b
      strobe done end
      field entry 2 { none=0 op=1 sub=2 }
      field spare 2 { z=0 o=1 }
      store decode
        word 8 as 1 x 8
          entry 0..1  c.oe 2  spare 3..4
        address 5
          opcode 0..4
      store main
        word 8 as 1 x 8
          a.oe 0  b.ck 1  done 2
        address 4
          step 0..1  entry 2..3
      class OP opcode=0110011
        0: entry=op, a.oe, b.ck, done
  `);
  const machine = analyse(text).machine;
  const stores = encodeMachine(machine).stores;
  const decode = storeSafety(machine, stores.find((s) => s.store.name === 'decode')!);
  const main = storeSafety(machine, stores.find((s) => s.store.name === 'main')!);

  it('holds a field that forms another store\'s address, and frees a plain field', () => {
    expect(decode.bits.filter((b) => b.signal === 'entry').map((b) => b.role)).toEqual(['held', 'held']);
    expect(decode.bits.filter((b) => b.signal === 'spare').map((b) => b.mayFloat)).toEqual([true, true]);
  });

  it('frees no driver on a bus the other store drives too', () => {
    expect(decode.sharedBuses.has('result')).toBe(true);
    expect(main.sharedBuses.has('result')).toBe(true);
    expect(decode.freeDriver.size).toBe(0);
    expect(main.freeDriver.size).toBe(0);
  });
});

describe('a sequencer part acts at every closing edge', () => {
  it('holds the fields that drive it (its op and its jump target) where no step covers, and leaves other fields free', () => {
    const machine = analyse(sequencerDemo()).machine;
    const safety = storeSafety(machine, encodeMachine(machine).stores[0]);
    const role = (name: string) => safety.bits.find((b) => b.output === name)!;
    // Floating, they could jump or hold the sequencer at an illegal instruction where the ROM's fill word counts on.
    for (const name of ['seqop[0]', 'seqop[1]', 'next[0]', 'next[2]']) expect(role(name), name).toMatchObject({ role: 'held', mayFloat: false });
    expect(role('alu.fn[0]')).toMatchObject({ role: 'free', mayFloat: true });
  });
});
