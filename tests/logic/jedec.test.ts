import { describe, expect, it } from 'vitest';
import { fuseChecksum, readJedec, transmissionChecksum, writeJedec } from '../../server/src/core/logic/jedec';

function fusesFromLists(fuseCount: number, lists: [number, string][]): Uint8Array {
  const fuses = new Uint8Array(fuseCount);
  for (const [first, bits] of lists) for (let k = 0; k < bits.length; k++) fuses[first + k] = bits[k] === '1' ? 1 : 0;
  return fuses;
}

describe('JEDEC checksums', () => {
  it('fuse checksum: published JESD3 worked example F0* L0 01010101* L0008 01010111* L1000 0101* gives C019E', () => {
    // Worked example from device-programmer manuals describing JESD3 (see reference facts);
    // QF must reach fuse 1003, so 1004 fuses.
    const fuses = fusesFromLists(1004, [
      [0, '01010101'],
      [8, '01010111'],
      [1000, '0101'],
    ]);
    expect(fuseChecksum(fuses).toString(16).toUpperCase().padStart(4, '0')).toBe('019E');
    // A single fuse changed must change the checksum.
    fuses[1002] = 1;
    expect(fuseChecksum(fuses)).not.toBe(0x019e);
  });

  it('transmission checksum: the computed example in the reference facts gives 0C9B', () => {
    // Computed from the JESD3 definition (sum of 7-bit codes from STX through ETX, CR/LF included).
    const text = '\x02Example*\nQF20*\nF0*\nL0 10000000*\nL8 11110000*\nL16 0101*\nC001A*\n\x03';
    expect(transmissionChecksum(text).toString(16).toUpperCase().padStart(4, '0')).toBe('0C9B');
    expect(transmissionChecksum(text.replace('Example', 'Examplf'))).toBe(0x0c9c);
    // The example's own C001A agrees with the fuse checksum of its fuse list.
    expect(fuseChecksum(fusesFromLists(20, [[0, '10000000'], [8, '11110000'], [16, '0101']]))).toBe(0x001a);
  });
});

describe('JEDEC writer and reader', () => {
  const fuses = fusesFromLists(100, [
    [0, '1111000011'],
    [64, '1'],
    [99, '1'],
  ]);
  const text = writeJedec({
    designText: 'demo * with a star',
    notes: ['DEVICE TEST', 'PIN 2 step0'],
    pinCount: 4,
    fuses,
    rowWidth: 32,
    vectors: ['N01H', 'N10L'],
  });

  it('writes the fields in JESD3 form, leaving default rows out', () => {
    const lines = text.split('\n');
    expect(lines.slice(0, 10)).toEqual([
      '\x02demo + with a star*',
      'N DEVICE TEST*',
      'N PIN 2 step0*',
      'QP4*',
      'QF100*',
      'QV2*',
      'F0*',
      'G0*',
      'L00 11110000110000000000000000000000*',
      'L64 10000000000000000000000000000000*',
    ]);
    expect(lines.slice(10)).toEqual(['L96 0001*', `C${fuseChecksum(fuses).toString(16).toUpperCase().padStart(4, '0')}*`, 'V1 N01H*', 'V2 N10L*', expect.stringMatching(/^\x03[0-9A-F]{4}$/), '']);
  });

  it('reads back the same fuses, notes and vectors, with both checksums checked', () => {
    const read = readJedec(text);
    expect(read.ok).toBe(true);
    if (!read.ok) return;
    expect(Array.from(read.file.fuses)).toEqual(Array.from(fuses));
    expect(read.file.notes).toEqual(['DEVICE TEST', 'PIN 2 step0']);
    expect(read.file.vectors).toEqual([
      { index: 1, pins: 'N01H' },
      { index: 2, pins: 'N10L' },
    ]);
    expect([read.file.fuseCount, read.file.pinCount, read.file.vectorCount, read.file.securityFuse]).toEqual([100, 4, 2, 0]);
    expect(read.file.transmissionChecksum).toBe(transmissionChecksum(text.slice(0, text.indexOf('\x03') + 1)));
  });

  it('rejects a wrong fuse checksum', () => {
    const bad = text.replace(/C([0-9A-F]{4})\*/, (_, hex) => `C${((parseInt(hex, 16) + 1) & 0xffff).toString(16).toUpperCase().padStart(4, '0')}*`);
    const withoutTransmission = bad.replace(/\x03[0-9A-F]{4}/, '\x030000');
    const read = readJedec(withoutTransmission);
    expect(read.ok).toBe(false);
    if (!read.ok) expect(read.message).toMatch(/fuse checksum is [0-9A-F]{4} in the file but [0-9A-F]{4} computed/);
  });

  it('rejects a wrong transmission checksum and accepts 0000 (not computed)', () => {
    const bad = text.replace(/\x03([0-9A-F]{4})/, '\x031234');
    const read = readJedec(bad);
    expect(read.ok).toBe(false);
    if (!read.ok) expect(read.message).toMatch(/transmission checksum is 1234/);
    expect(readJedec(text.replace(/\x03([0-9A-F]{4})/, '\x030000')).ok).toBe(true);
  });

  it('explains malformed files', () => {
    const cases: [string, RegExp][] = [
      ['no framing at all', /no STX/],
      ['\x02design*QF10*F0*L0 11*', /no ETX/],
      ['\x02design*F0*L0 11*\x03', /no QF field/],
      ['\x02design*QF10*F0*L8 111*\x03', /runs past the last fuse/],
      ['\x02design*QF10*L0 11111*\x03', /fuse 5 is not in any L field/],
      ['\x02design*QF10*F0*L0 12*\x03', /bad fuse-list field/],
      ['\x02design*QF10*F0*V1 0Q*\x03', /bad test-vector field/],
    ];
    for (const [input, message] of cases) {
      const read = readJedec(input);
      expect(read.ok, input).toBe(false);
      if (!read.ok) expect(read.message).toMatch(message);
    }
    // Fields this reader does not use are skipped, and a file without C or transmission checksum is accepted.
    const minimal = readJedec('\x02design*QF10*F1*P 1 2 3*L0 00*\x03');
    expect(minimal.ok && Array.from(minimal.file.fuses).join('')).toBe('0011111111');
  });

  it('refuses to write vectors of the wrong width', () => {
    expect(() => writeJedec({ designText: 'x', pinCount: 4, fuses: new Uint8Array(8), vectors: ['01H'] })).toThrow(/4 characters/);
  });
});
