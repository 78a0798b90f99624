// The encoder: every address of every store, the fill word by polarity, and the property that
// decoding the encoded words gives back, for every address, the step and strobes the table says.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { analyse } from '../../server/src/core/analysis';
import { addressOf, decodeWord, encodeMachine, fillWordOf } from '../../server/src/core/encode/encoder';
import { pointInputs } from '../../server/src/core/encode/universe';
import { chipImagesOf } from '../../server/src/core/encode/plan';
import { decoderStoreTable } from '../support/fixtures';

const demoText = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');

describe('encoder', () => {
  it('decode(encode(model)) gives back the step and strobes of the table at every address of the demo', () => {
    const { machine } = analyse(demoText);
    const encoded = encodeMachine(machine);
    const enc = encoded.stores[0];
    expect(enc.addressBits).toBe(13);
    let checked = 0;
    for (let point = 0; point < 2 ** encoded.universe.bits; point++) {
      const inputs = pointInputs(encoded.universe, point);
      const decoded = encoded.decoder.decode(inputs);
      const address = addressOf(enc.store, encoded.universe, inputs, decoded, machine);
      const word = decodeWord(machine, enc, address);
      if (!decoded.alt) {
        expect(enc.origin[address], `address ${address}`).toBe(-1);
        expect(word.asserted, `address ${address}`).toEqual([]);
        continue;
      }
      const expected = decoded.alt.actions.filter((a) => !a.value).map((a) => a.signal).sort();
      expect(word.asserted.sort(), `address ${address}`).toEqual(expected);
      for (const [field, code] of decoded.fieldCodes) expect(word.fields.get(field), `${field} at ${address}`).toBe(code);
      checked++;
    }
    expect(checked).toBe(enc.usedCount);
    expect(enc.usedCount).toBe(1202);
  });

  it('gives the OP class the ALU code of each instruction from the decode map (RV32I: sub is funct3=000 with funct7 bit 5 set)', () => {
    const { machine } = analyse(demoText);
    const enc = encodeMachine(machine).stores[0];
    // step 2, taken 0, f7b5 1, funct3 000, opcode 01100 (OP)
    const address = 2 | (0 << 3) | (1 << 4) | (0b000 << 5) | (0b01100 << 8);
    const word = decodeWord(machine, enc, address);
    expect(word.fields.get('alu.fn')).toBe(8);
    expect(word.asserted.sort()).toEqual(['alu.oe', 'done', 'pc.inc', 'x.rd.ck', 'x.rs1.oe', 'x.rs2.oe']);
  });

  it('idles every strobe at its inactive level in the fill word: active-low enables at 1', () => {
    const { machine } = analyse(demoText);
    const store = machine.stores[0];
    const fill = fillWordOf(machine, store);
    // Active low: x.rs1.oe 0, x.rs2.oe 1, pc.oe 3, t.oe 9, imm.oe 10, four.oe 11, alu.oe 12, mem.rd 14, mem.wr 15;
    // alu.fn idles at passa = 14 in bits 16..19; every other bit is 0.
    expect(fill[0].toString(2).padStart(32, '0')).toBe('00000000000011101101111000001011');
    const chips = chipImagesOf(encodeMachine(machine).stores[0]);
    expect(chips.map((c) => c.words[0x1fff].toString(16))).toEqual(['b', 'de', 'e', '0']);
  });

  it('encodes each store of a file on its own, merging what a step leaves open', () => {
    const text = decoderStoreTable;
    const { machine, diagnostics } = analyse(text);
    expect(diagnostics).toEqual([]);
    const encoded = encodeMachine(machine);
    expect(encoded.ambiguities).toEqual([]);
    const decode = encoded.stores.find((s) => s.store.name === 'decode')!;
    expect(decode.words[0b01100]).toBe(0); // OP: add
    expect(decode.words[0b00010]).toBe(8); // custom-0: sub
    expect(decode.words[0b11111]).toBe(14); // no class: idle
    const main = encoded.stores.find((s) => s.store.name === 'main')!;
    expect(main.words[1 | (0b01100 << 2)].toString(2)).toBe('1101'); // done, b.ck, alu.oe asserted (low), a.oe idle (high)
  });
});
