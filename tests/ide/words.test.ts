// The words shown in hovers and inlay hints are the encoder's words: checked for every covered
// address of the demo's image. Also the chip/pin arithmetic for uneven chip splits, the inlay
// hint labels, the class code lenses, and the severity table both the CLI and the server read.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { readSeverityTable } from '../../server/src/core/checks/severitySettings';
import { encodeMachine, wordForAlternative } from '../../server/src/core/encode/encoder';
import { pointInputs } from '../../server/src/core/encode/universe';
import { classLenses } from '../../server/src/core/ide/codeLens';
import { chipHex, chipOfBit, chipPinsText } from '../../server/src/core/ide/describe';
import { stepWordHints } from '../../server/src/core/ide/inlayHints';
import { mergedHex, stepWords } from '../../server/src/core/ide/words';
import type { WordLayout } from '../../server/src/core/model/types';
import { readSettings } from '../../server/src/lsp/settings';
import { demoText, faultFiles } from './support';

const demo = analyse(demoText);

describe('wordForAlternative lays words as the encoder does', () => {
  it('matches the image at every address the demo table covers', () => {
    const encoded = encodeMachine(demo.machine);
    const store = encoded.stores[0];
    let compared = 0;
    for (let address = 0; address < store.origin.length; address++) {
      const point = store.origin[address];
      if (point < 0) continue;
      const decoded = encoded.decoder.decode(pointInputs(encoded.universe, point));
      const mapCodes = new Map<string, number>();
      for (const action of decoded.alt!.actions) if (action.value?.kind === 'map') mapCodes.set(action.value.map, decoded.fieldCodes.get(action.signal)!);
      const word = wordForAlternative(demo.machine, store.store, decoded.alt!, mapCodes);
      expect([...word]).toEqual([...store.words.slice(address * store.lanes, (address + 1) * store.lanes)]);
      compared++;
    }
    // Every RV32I instruction's steps land somewhere: thousands of covered addresses.
    expect(compared).toBeGreaterThan(1000);
  });

  it('matches the image of a two-store table too', () => {
    const text = faultFiles.find((f) => f.name === 'store-ambiguous')!.text.replace('  0: a.oe\n', '  0: a.oe, b.ck\n');
    const analysis = analyse(text);
    const encoded = encodeMachine(analysis.machine);
    for (const store of encoded.stores) {
      for (let address = 0; address < store.origin.length; address++) {
        const point = store.origin[address];
        if (point < 0) continue;
        const decoded = encoded.decoder.decode(pointInputs(encoded.universe, point));
        expect(wordForAlternative(analysis.machine, store.store, decoded.alt!)[0]).toBe(store.words[address]);
      }
    }
  });
});

describe('chips and pins', () => {
  const layout = { width: 32, chipWidths: [8, 8, 16], unusedLevel: 0, placements: [], span: { start: 0, end: 0 }, figures: new Map() } as WordLayout;

  it('finds the chip and data pin of each bit for `8 + 8 + 16`', () => {
    expect(chipOfBit(layout, 0)).toEqual({ chip: 0, pin: 0 });
    expect(chipOfBit(layout, 15)).toEqual({ chip: 1, pin: 7 });
    expect(chipOfBit(layout, 16)).toEqual({ chip: 2, pin: 0 });
    expect(chipOfBit(layout, 31)).toEqual({ chip: 2, pin: 15 });
    expect(chipOfBit(layout, 32)).toBeUndefined();
  });

  it('names pin ranges, split where they cross chips', () => {
    expect(chipPinsText(layout, 5, 5)).toBe('chip 0, D5');
    expect(chipPinsText(layout, 6, 9)).toBe('chip 0, D6..D7 and chip 1, D0..D1');
    expect(chipPinsText(layout, 30, 33)).toBe('chip 2, D14..D15 and bits 32..33 on no chip (the chips hold fewer bits than the word)');
  });

  it('writes each chip in as many hex digits as its width needs', () => {
    expect(chipHex(layout, new Uint32Array([0x1234abcd]))).toEqual(['CD', 'AB', '1234']);
  });
});

describe('inlay hints and code lenses', () => {
  it('ends each step line with its word per chip, chip 0 first', () => {
    const hints = stepWordHints(demo, { start: 0, end: demoText.length });
    const lineEnd = (needle: string) => demoText.indexOf('\n', demoText.indexOf(needle));
    const at = (needle: string) => hints.find((h) => h.offset === lineEnd(needle))?.label;
    expect(at('0: pc.oe, alu.fn=passa')).toBe('⟶ c0:83 c1:CE c2:0E c3:00');
    expect(at('3 if taken')).toBe('⟶ c0:13 c1:CA c2:A0 c3:00');
    // OP's ALU function comes from a map: the digit that changes is shown as `?`.
    expect(at('alu.fn=op_fn')).toBe('⟶ c0:2C c1:CE c2:8? c3:00');
    expect(hints.find((h) => h.offset === lineEnd('alu.fn=op_fn'))!.tooltip).toContain('add → 2C CE 80 00; sub → 2C CE 88 00');
    // One hint per written step line: 2 phase lines and 23 class lines.
    expect(hints.length).toBe(2 + (demoText.match(/^ {2}\d+[^:\n]*:/gm)!.length - 2));
  });

  it('limits hints to the requested range', () => {
    const start = demoText.indexOf('class OP ');
    expect(stepWordHints(demo, { start, end: demoText.indexOf('\n', demoText.indexOf('alu.fn=op_fn')) }).length).toBe(1);
  });

  it('names each store when there are several', () => {
    const analysis = analyse(faultFiles.find((f) => f.name === 'store-ambiguous')!.text);
    expect(stepWordHints(analysis, { start: 0, end: analysis.text.length }).map((h) => h.label)).toEqual(['⟶ main c0:00 · decode c0:00', '⟶ main c0:04 · decode c0:01']);
  });

  it('merges words digit by digit', () => {
    const words = stepWords(demo.machine, demo.machine.classes.find((c) => c.name === 'OP')!.steps.get(2)![0]);
    expect(words[0].variants.length).toBe(10);
    expect(mergedHex(words[0].variants)).toEqual(['2C', 'CE', '8?', '00']);
  });

  it('puts a lens on each class with its steps and instructions', () => {
    expect(classLenses(demo).map((l) => `${l.className}: ${l.title}`)).toEqual([
      'LUI: 3 steps · instructions: lui',
      'AUIPC: 3 steps · instructions: auipc',
      'JAL: 4 steps · instructions: jal',
      'JALR: 5 steps · instructions: jalr',
      'BRANCH: 4 steps · instructions: beq, bne, blt, bge, bltu, bgeu',
      'LOAD: 4 steps · instructions: lb, lh, lw, lbu, lhu',
      'STORE: 4 steps · instructions: sb, sh, sw',
      'OP-IMM: 3 steps · instructions: addi, slti, sltiu, xori, ori, andi, slli, srli, srai',
      'OP: 3 steps · instructions: add, sub, sll, slt, sltu, xor, srl, sra, or, and',
      'MISC-MEM: 3 steps · instructions: fence',
      'SYSTEM: 3 steps · instructions: ecall, ebreak',
    ]);
    const custom = analyse('strobe done end\nclass X opcode=0001011\n  0: done\n');
    expect(classLenses(custom)[0].title).toBe('1 step · no RV32I instruction (custom opcode)');
    // Without an end strobe declared, no step ends the instruction (class-end reports it).
    expect(classLenses(analyse('class X opcode=0001011\n  0: done\n'))[0].title).toBe('does not end · no RV32I instruction (custom opcode)');
  });
});

describe('severity settings', () => {
  it('keeps valid entries and names the others', () => {
    expect(readSeverityTable({ 'unused-name': 'off', 'step-gap': 'error' })).toEqual({ severities: { 'unused-name': 'off', 'step-gap': 'error' }, problems: [] });
    const read = readSeverityTable({ 'unused-name': 'loud', 'no-such-code': 'off', 'bus-contention': 'warning' });
    expect(read.severities).toEqual({ 'bus-contention': 'warning' });
    expect(read.problems).toEqual([`'unused-name' must be "error", "warning", "info" or "off", not "loud"`, `unknown diagnostic code 'no-such-code' (run 'phasewright explain' for the list)`]);
    expect(readSeverityTable(['x']).problems).toEqual(['"severities" must be an object of code: level']);
    expect(readSeverityTable(undefined)).toEqual({ severities: {}, problems: [] });
  });

  it('reads the server settings section with defaults', () => {
    expect(readSettings(undefined)).toEqual({ settings: { severities: {}, maxFileSizeKB: 5120, proofs: true }, problems: [] });
    expect(readSettings({ severity: { 'step-gap': 'info' }, maxFileSizeKB: 64 })).toEqual({ settings: { severities: { 'step-gap': 'info' }, maxFileSizeKB: 64, proofs: true }, problems: [] });
    // `phasewright.proofs.enabled` arrives nested from VS Code, dotted from some other clients.
    expect(readSettings({ proofs: { enabled: false } }).settings.proofs).toBe(false);
    expect(readSettings({ 'proofs.enabled': false }).settings.proofs).toBe(false);
    expect(readSettings({ proofs: { enabled: 'no' } }).problems).toEqual(['phasewright.proofs.enabled must be true or false, not "no"; proofs stay on']);
    const bad = readSettings({ maxFileSizeKB: -3, severity: 7 });
    expect(bad.settings.maxFileSizeKB).toBe(5120);
    expect(bad.problems).toEqual(['phasewright.severity must be an object of code: level', 'phasewright.maxFileSizeKB must be a positive number of kilobytes, not -3; using 5120']);
  });
});
