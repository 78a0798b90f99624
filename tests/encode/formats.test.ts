// Control-store file formats: the published worked examples reproduce character for character,
// every format reads back what it wrote for awkward sizes and all chip widths, and the readers
// reject damaged files with the line and the reason.
import { crc32 as zlibCrc32 } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import {
  ImageFormatError,
  checksumHex,
  crc32,
  imageBytes,
  imageCrc32,
  imageFormatNames,
  imageFormats,
  imageSum16,
  isImageFormatName,
  parseIntelHex,
  parseMemh,
  parseSRecord,
  readBinary,
  readIntelHex,
  readMemh,
  readSRecord,
  splitWordsIntoChips,
  sum16,
  verifyReadBack,
  writeIntelHex,
  writeIntelHexBytes,
  writeMemh,
  writeSRecord,
  writeSRecordBytes,
  type ChipImage,
  type ChipWidth,
  type FormatResult,
} from '../../server/src/core/encode/formats/index';

const text = (bytes: Uint8Array): string => Buffer.from(bytes).toString('latin1');
const lines = (bytes: Uint8Array): string[] => text(bytes).split('\n').filter((line) => line !== '');

/** A reproducible image with every bit position exercised (a small linear congruential generator). */
function sampleImage(widthBits: ChipWidth, nWords: number, seed = 1): ChipImage {
  const words = widthBits === 8 ? new Uint8Array(nWords) : widthBits === 16 ? new Uint16Array(nWords) : new Uint32Array(nWords);
  let state = seed >>> 0;
  for (let address = 0; address < nWords; address++) {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    words[address] = widthBits === 32 ? state : state >>> (32 - widthBits);
  }
  return { widthBits, words };
}

function expectError<T>(result: FormatResult<T>, line: number | undefined, pattern: RegExp): void {
  expect(result.ok).toBe(false);
  if (result.ok) return;
  expect(result.error.line).toBe(line);
  expect(result.error.message).toMatch(pattern);
}

function expectOk<T>(result: FormatResult<T>): T {
  if (!result.ok) throw new Error(`expected success, got: ${result.error.message}`);
  return result.value;
}

describe('Intel HEX worked examples', () => {
  // Intel Hexadecimal Object File Format Specification Rev A: the data record example
  // ":040100003C58E01B6C" holds 3C 58 E0 1B at load offset 0100.
  it('writes the data record example exactly', () => {
    const written = writeIntelHexBytes(new Uint8Array([0x3c, 0x58, 0xe0, 0x1b]), { baseAddress: 0x0100 });
    expect(text(written)).toBe(':040100003C58E01B6C\n:00000001FF\n');
  });

  // Same specification: ":020000040800F2" sets the upper linear address to 0800, and
  // ":03012300010203D3" is a data record of 01 02 03 at offset 0123. Data at 0x08000123 needs both;
  // the end-of-file record ":00000001FF" is the specification's own.
  it('writes the extended linear address and end-of-file examples exactly', () => {
    const written = writeIntelHexBytes(new Uint8Array([1, 2, 3]), { baseAddress: 0x08000123 });
    expect(lines(written)).toEqual([':020000040800F2', ':03012300010203D3', ':00000001FF']);
  });

  it('reads the examples back to the same bytes at the same addresses', () => {
    const one = expectOk(parseIntelHex(':040100003C58E01B6C\n:00000001FF\n'));
    expect(one.blocks.map((block) => [block.address, Array.from(block.bytes)])).toEqual([[0x100, [0x3c, 0x58, 0xe0, 0x1b]]]);
    const two = expectOk(parseIntelHex(':020000040800F2\r\n:03012300010203D3\r\n:00000001FF\r\n'));
    expect(two.blocks.map((block) => [block.address, Array.from(block.bytes)])).toEqual([[0x08000123, [1, 2, 3]]]);
  });

  it('rejects a wrong checksum in an example and names the line', () => {
    expectError(parseIntelHex(':040100003C58E01B6D\n:00000001FF\n'), 1, /line 1: checksum is 6D but the record's bytes need 6C/);
    expectError(parseIntelHex(':020000040800F2\n:03012300010203D4\n:00000001FF\n'), 2, /line 2: checksum is D4 .* need D3/);
  });
});

describe('Motorola S-record worked examples', () => {
  // Assembler manuals describing the S-record format give "S00C000054455354312E4845586F" (an S0
  // header whose data is the text TEST1.HEX), "S1090100010203040506E0" (bytes 01..06 at 0100)
  // and "S9030000FC" (S9 termination, start address 0). The S5 line between them is computed
  // from the format's definition (count 03, record count 0001, ones' complement checksum FB).
  it('writes the header, data and termination examples exactly', () => {
    const written = writeSRecordBytes(new Uint8Array([1, 2, 3, 4, 5, 6]), { baseAddress: 0x0100, moduleName: 'TEST1.HEX' });
    expect(lines(written)).toEqual(['S00C000054455354312E4845586F', 'S1090100010203040506E0', 'S5030001FB', 'S9030000FC']);
  });

  it('reads the examples back, header included', () => {
    const parsed = expectOk(parseSRecord('S00C000054455354312E4845586F\nS1090100010203040506E0\nS9030000FC\n'));
    expect(parsed.header).toBe('TEST1.HEX');
    expect(parsed.blocks.map((block) => [block.address, Array.from(block.bytes)])).toEqual([[0x100, [1, 2, 3, 4, 5, 6]]]);
    expect(parsed.terminationType).toBe(9);
    expect(parsed.startAddress).toBe(0);
    expect(parsed.recordCount).toBeNull();
  });

  it('rejects a wrong checksum in an example and names the line', () => {
    expectError(parseSRecord('S00C000054455354312E4845586F\nS1090100010203040506E1\nS9030000FC\n'), 2, /line 2: checksum is E1 but the record's bytes need E0/);
    expectError(parseSRecord('S9030000FD\n'), 1, /checksum is FD .* need FC/);
  });
});

describe('S-record type selection (computed from the format definition)', () => {
  it('uses S1/S9 up to address FFFF, S2/S8 up to FFFFFF and S3/S7 above', () => {
    const recordTypes = (written: Uint8Array): string[] => [...new Set(lines(written).map((line) => line.slice(0, 2)))];
    expect(recordTypes(writeSRecord(sampleImage(8, 0x10000)))).toEqual(['S0', 'S1', 'S5', 'S9']);
    expect(recordTypes(writeSRecord(sampleImage(8, 0x10001)))).toEqual(['S0', 'S2', 'S5', 'S8']);
    expect(recordTypes(writeSRecordBytes(new Uint8Array([0xaa]), { baseAddress: 0xffffff }))).toEqual(['S0', 'S2', 'S5', 'S8']);
    expect(recordTypes(writeSRecordBytes(new Uint8Array([0xaa, 0xbb]), { baseAddress: 0xffffff }))).toEqual(['S0', 'S3', 'S5', 'S7']);
    // A 16-bit chip with 0x8000 words reaches byte address FFFF: still S1. One more word needs S2.
    expect(recordTypes(writeSRecord(sampleImage(16, 0x8000)))).toContain('S9');
    expect(recordTypes(writeSRecord(sampleImage(16, 0x8001)))).toContain('S8');
  });

  it('writes the terminations with start address 0 and the count in S5, or S6 past 65535 records', () => {
    expect(lines(writeSRecordBytes(new Uint8Array([1]), { baseAddress: 0x10000 })).slice(-2)).toEqual(['S5030001FB', 'S804000000FB']);
    expect(lines(writeSRecordBytes(new Uint8Array([1]), { baseAddress: 0x1000000 })).slice(-1)).toEqual(['S70500000000FA']);
    const image = sampleImage(8, 65535);
    expect(lines(writeSRecord(image, { bytesPerLine: 1 })).at(-2)).toBe('S503FFFFFE');
    const more = sampleImage(8, 65536);
    const written = writeSRecord(more, { bytesPerLine: 1 });
    // 65536 records = 0x010000 in a 24-bit count field: S6 04 010000, checksum ~(04+01) = FA.
    expect(lines(written).at(-2)).toBe('S604010000FA');
    expect(expectOk(parseSRecord(written)).recordCount).toBe(65536);
  });
});

describe('byte order of wide chips', () => {
  // Chosen and documented here: byte-oriented files carry words least significant byte first.
  const image: ChipImage = { widthBits: 16, words: new Uint16Array([0x1234, 0xabcd]) };
  // Checksums computed from the format definitions: 04+34+12+CD+AB = 1C2, two's complement of C2
  // is 3E; 07+34+12+CD+AB = 1C5, ones' complement of C5 is 3A.
  it('puts the low byte first in binary, Intel HEX and S-records', () => {
    expect(Array.from(imageFormats.bin.write(image))).toEqual([0x34, 0x12, 0xcd, 0xab]);
    expect(lines(writeIntelHex(image))[0]).toBe(':040000003412CDAB3E');
    expect(lines(writeSRecord(image))[1]).toBe('S10700003412CDAB3A');
  });
  it('writes $readmemh words most significant digit first, one per line', () => {
    const words = lines(writeMemh(image, { addressEvery: 0 })).filter((line) => !line.startsWith('//'));
    expect(words).toEqual(['1234', 'abcd']);
    const wide = lines(writeMemh({ widthBits: 32, words: new Uint32Array([0x89abcdef, 5]) }, { addressEvery: 0 }));
    expect(wide.filter((line) => !line.startsWith('//'))).toEqual(['89abcdef', '00000005']);
  });
});

describe('round trips', () => {
  const sizes = [1, 255, 65536, 65537, 200000];
  const widths: ChipWidth[] = [8, 16, 32];
  for (const widthBits of widths) {
    for (const nWords of sizes) {
      it(`${nWords} words of ${widthBits} bits read back identically in every format`, () => {
        const image = sampleImage(widthBits, nWords, nWords + widthBits);
        for (const name of imageFormatNames) {
          const format = imageFormats[name];
          const written = format.write(image, { sourceName: 'demo.pw' });
          const read = expectOk(format.read(written, widthBits));
          expect(read.widthBits).toBe(widthBits);
          expect(read.words.length).toBe(nWords);
          expect(Buffer.compare(Buffer.from(imageBytes(read)), Buffer.from(imageBytes(image)))).toBe(0);
          expect(verifyReadBack(name, written, image)).toEqual({ ok: true, value: undefined });
        }
      });
    }
  }

  it('round-trips with 32 bytes per line, CRLF endings and sparse address lines', () => {
    const image = sampleImage(8, 70000, 7);
    for (const name of imageFormatNames) {
      const written = imageFormats[name].write(image, { bytesPerLine: 32, lineEnding: 'crlf', addressEvery: 1000 });
      if (name !== 'bin') expect(text(written)).toMatch(/\r\n$/);
      expect(Buffer.compare(Buffer.from(imageBytes(expectOk(imageFormats[name].read(written, 8)))), Buffer.from(image.words))).toBe(0);
    }
    const hexLines = lines(writeIntelHex(image, { bytesPerLine: 32 }));
    expect(hexLines[0]!.slice(0, 3)).toBe(':20');
  });

  it('splits Intel HEX at 64 KiB with one 04 record per further segment', () => {
    const written = lines(writeIntelHex(sampleImage(8, 200000)));
    expect(written.filter((line) => line.slice(7, 9) === '04')).toEqual([':020000040001F9', ':020000040002F8', ':020000040003F7']);
    expect(lines(writeIntelHex(sampleImage(8, 65536))).some((line) => line.slice(7, 9) === '04')).toBe(false);
    // With 255 bytes per line no record may cross the boundary, so the last one before it is short.
    const odd = lines(writeIntelHex(sampleImage(8, 65537), { bytesPerLine: 255 }));
    const before = odd[odd.indexOf(':020000040001F9') - 1]!;
    // 257 full lines cover 257 * 255 = 65535 bytes, so one byte at offset FFFF remains.
    expect(before.slice(1, 9)).toBe('01FFFF00');
  });

  it('writes an empty image as a file that reads back empty', () => {
    for (const name of imageFormatNames) {
      const empty: ChipImage = { widthBits: 8, words: new Uint8Array(0) };
      expect(expectOk(imageFormats[name].read(imageFormats[name].write(empty), 8)).words.length).toBe(0);
    }
  });

  it('notices when a file reads back different from the image', () => {
    const image = sampleImage(8, 40);
    const written = writeIntelHex(image);
    const other = { widthBits: 8 as const, words: image.words.slice() };
    other.words[33] = other.words[33]! ^ 1;
    const check = verifyReadBack('ihex', written, other);
    expect(check.ok).toBe(false);
    if (!check.ok) expect(check.error.message).toMatch(/at address 0x21/);
  });
});

describe('reader errors', () => {
  const good = text(writeIntelHex(sampleImage(8, 64)));
  const goodLines = good.split('\n');

  it('Intel HEX: damaged checksum on line 3 is reported on line 3', () => {
    const damaged = [...goodLines];
    const line = damaged[2]!;
    damaged[2] = line.slice(0, -1) + (line.at(-1) === '0' ? '1' : '0');
    expectError(parseIntelHex(damaged.join('\n')), 3, /^line 3: checksum is/);
    expect(parseIntelHex(good).ok).toBe(true);
  });

  it('Intel HEX: every other kind of damage is named', () => {
    expectError(parseIntelHex(goodLines.slice(0, -2).join('\n')), undefined, /no end-of-file record/);
    expectError(parseIntelHex(`${good}:00000001FF\n`), 6, /after the end-of-file record on line 5/);
    expectError(parseIntelHex(good.replace(':10001000', ' :10001000')), 2, /must start with ':' but this line starts with a space/);
    expectError(parseIntelHex(good.replace(':10001000', ':1000100G')), 2, /column 9: 'G' is not a hex digit/);
    expectError(parseIntelHex(':0401000003C58E01B6C\n:00000001FF\n'), 1, /odd number of hex digits/);
    expectError(parseIntelHex(':050100003C58E01B6B\n:00000001FF\n'), 1, /length byte says 5 data bytes but the record holds 4/);
    expectError(parseIntelHex(':0100000601F8\n:00000001FF\n'), 1, /unknown record type 06/);
    expectError(parseIntelHex(':02000000AABB99\n:020001001122CA\n:00000001FF\n'), 2, /address 0x1 overlaps data already given from line 1/);
    expectError(readIntelHex(':020000001122CB\n:02000400334483\n:00000001FF\n', 8), 2, /no data for addresses 0x2 to 0x3/);
    expectError(readIntelHex(':040100003C58E01B6C\n:00000001FF\n', 8), 1, /starts at address 0x100 instead of 0/);
    expectError(readIntelHex(':03000000010203F7\n:00000001FF\n', 16), undefined, /3 data bytes is not a whole number of 16-bit words/);
    expectError(parseIntelHex('\u00e9'), 1, /a non-ASCII character/);
  });

  it('S-records: damaged checksum, count and termination are named with their lines', () => {
    const sGood = text(writeSRecord(sampleImage(8, 64), { moduleName: 'x' })).split('\n');
    const damaged = [...sGood];
    damaged[3] = damaged[3]!.slice(0, -2) + ((parseInt(damaged[3]!.slice(-2), 16) + 1) & 0xff).toString(16).toUpperCase().padStart(2, '0');
    expectError(parseSRecord(damaged.join('\n')), 4, /^line 4: checksum is/);
    expect(parseSRecord(sGood.join('\n')).ok).toBe(true);
    expectError(parseSRecord([...sGood.slice(0, 2), ...sGood.slice(3)].join('\n')), 5, /count record says 4 data records but 3 precede it/);
    expectError(parseSRecord('S1090100010203040506E0\nS804000000FB\n'), 2, /S8 does not terminate S1 data records/);
    expectError(parseSRecord('S1090100010203040506E0\n'), undefined, /no termination record/);
    expectError(parseSRecord('S9030000FC\nS1090100010203040506E0\n'), 2, /after the termination record on line 1/);
    expectError(parseSRecord('S4030000FC\n'), 1, /S4 is a reserved record type/);
    expectError(parseSRecord('S10A0100010203040506E0\nS9030000FC\n'), 1, /count byte says 10 bytes follow but the record holds 9/);
    expectError(parseSRecord('X1090100010203040506E0\n'), 1, /must start with 'S'/);
    expectError(readSRecord('S1090100010203040506E0\nS9030000FC\n', 8), 1, /starts at address 0x100 instead of 0/);
    expect(expectOk(readSRecord('S1090000010203040506E1\nS9030000FC\n', 16)).words).toEqual(new Uint16Array([0x0201, 0x0403, 0x0605]));
  });

  it('$readmemh: standard syntax is accepted, undefined bits and bad words are not', () => {
    const accepted = '// header\n/* block\n comment */ @0 1_2 34\n@2 // two more\n56\n7 \t\r\n';
    expect(Array.from(expectOk(readMemh(accepted, 8)).words)).toEqual([0x12, 0x34, 0x56, 0x07]);
    expect(Array.from(expectOk(parseMemh('@3 aa @1 bb cc', 8)).addresses)).toEqual([1, 2, 3]);
    expectError(readMemh('00\n1x\n', 8), 2, /'1x' has undefined \(x or z\) bits/);
    expectError(readMemh('00\nzz\n', 8), 2, /undefined/);
    expectError(readMemh('00\n123\n', 8), 2, /'123' does not fit in 8 bits \(at most 2 hex digits\)/);
    expect(expectOk(readMemh('00\n0ff\n', 8)).words[1]).toBe(0xff);
    expectError(readMemh('00\n/* open\n\n', 8), 2, /comment starting here is never closed/);
    expectError(readMemh('00 @0 11\n', 8), 1, /word address 0x0 is given a value twice/);
    expectError(readMemh('00\n@5\n11\n', 8), 3, /no word for addresses 0x1 to 0x4/);
    expectError(readMemh('@2 11\n', 8), 1, /start at address 0x2 instead of 0/);
    expectError(readMemh('00 / 11\n', 8), 1, /lone '\/'/);
    expectError(readMemh('00 g1\n', 8), 1, /'g' in 'g1' is not a hex digit/);
    expectError(readMemh('@ 00\n', 8), 1, /'@' must be followed by a hex address/);
    expectError(readMemh('_1\n', 8), 1, /starts with '_'/);
  });

  it('raw binary: a length that is not whole words is refused', () => {
    expectError(readBinary(new Uint8Array(6), 32), undefined, /6 bytes, which is not a whole number of 32-bit words/);
    expect(readBinary(new Uint8Array(8), 32).ok).toBe(true);
  });
});

describe('writer argument checks', () => {
  it('refuses values wider than the chip and out-of-range options', () => {
    expect(() => writeIntelHex({ widthBits: 8, words: new Uint16Array([0x100]) })).toThrow(ImageFormatError);
    expect(() => writeIntelHex({ widthBits: 8, words: new Uint16Array([0x100]) })).toThrow(/word at address 0x0 is 0x100, which does not fit in 8 bits/);
    expect(() => writeIntelHex({ widthBits: 8, words: new Uint16Array([0xff]) })).not.toThrow();
    expect(() => writeIntelHex({ widthBits: 12 as ChipWidth, words: new Uint16Array(1) })).toThrow(/12 bits is not supported/);
    expect(() => writeIntelHex(sampleImage(8, 4), { bytesPerLine: 256 })).toThrow(/1 to 255/);
    expect(() => writeIntelHex(sampleImage(8, 4), { bytesPerLine: 255 })).not.toThrow();
    expect(() => writeSRecord(sampleImage(8, 4), { bytesPerLine: 253 })).toThrow(/S1 records carry 1 to 252/);
    expect(() => writeSRecord(sampleImage(8, 4), { bytesPerLine: 252 })).not.toThrow();
    expect(() => writeMemh(sampleImage(8, 4), { addressEvery: -1 })).toThrow(/address line interval/);
  });

  it('keeps headers printable ASCII', () => {
    const header = lines(writeSRecord(sampleImage(8, 1), { moduleName: 'naïve\nname' }))[0]!;
    expect(expectOk(parseSRecord(`${header}\nS9030000FC\n`)).header).toBe('na?ve?name');
    const memh = text(writeMemh(sampleImage(8, 1), { sourceName: 'a\nb.pw', description: 'store main, chip 0' }));
    expect(memh.split('\n').slice(0, 4)).toEqual([
      '// Phasewright control-store image for $readmemh (IEEE 1364-2005, 17.2.9)',
      '// source: a?b.pw',
      '// store main, chip 0',
      '// 1 word of 8 bits, one per line; @ lines give word addresses in hex',
    ]);
  });
});

describe('format table', () => {
  it('maps the four names to their extensions', () => {
    expect(imageFormatNames.map((name) => [name, imageFormats[name].extension])).toEqual([
      ['ihex', '.hex'],
      ['srec', '.srec'],
      ['bin', '.bin'],
      ['memh', '.memh'],
    ]);
    expect(isImageFormatName('srec')).toBe(true);
    expect(isImageFormatName('s19')).toBe(false);
  });
});

describe('checksums', () => {
  it('sums bytes modulo 65536 (common practice, no source)', () => {
    expect(checksumHex(sum16(new Uint8Array(257).fill(0xff)), 4)).toBe('FFFF'); // 257 * 255 = 65535
    expect(checksumHex(sum16(new Uint8Array(258).fill(0xff)), 4)).toBe('00FE'); // 65790 mod 65536 = 254
    expect(sum16(new Uint8Array(0))).toBe(0);
  });

  it('CRC-32 matches the standard check value and Node zlib', () => {
    // The check value of CRC-32/IEEE over the ASCII text "123456789" is CBF43926 (published
    // CRC catalogues; also confirmed against zlib below).
    expect(checksumHex(crc32(new Uint8Array(Buffer.from('123456789'))), 8)).toBe('CBF43926');
    const bytes = imageBytes(sampleImage(8, 100000, 3));
    expect(crc32(bytes)).toBe(zlibCrc32(bytes));
    expect(crc32(bytes)).not.toBe(zlibCrc32(bytes.subarray(1)));
  });

  it('image checksums equal the checksums of the image bytes for every width', () => {
    for (const widthBits of [8, 16, 32] as const) {
      const image = sampleImage(widthBits, 5000, widthBits);
      expect(imageSum16(image)).toBe(sum16(imageBytes(image)));
      expect(imageCrc32(image)).toBe(zlibCrc32(imageBytes(image)));
    }
    // A 16-bit word 0xFFFF counts as two bytes of FF.
    expect(imageSum16({ widthBits: 16, words: new Uint16Array([0xffff]) })).toBe(0x1fe);
  });
});

describe('splitting control words into chips', () => {
  const values = (images: ChipImage[]): string[][] =>
    images.map((image) => Array.from(image.words, (word) => word.toString(16).toUpperCase()));

  it('gives chip 0 the least significant bits, then upwards', () => {
    const words = new Uint32Array([0x89abcdef, 0x01234567]);
    expect(values(splitWordsIntoChips(words, 1, [8, 8, 8, 8]))).toEqual([['EF', '67'], ['CD', '45'], ['AB', '23'], ['89', '1']]);
    expect(values(splitWordsIntoChips(words, 1, [16, 16]))).toEqual([['CDEF', '4567'], ['89AB', '123']]);
    expect(values(splitWordsIntoChips(words, 1, [8, 16, 8]))).toEqual([['EF', '67'], ['ABCD', '2345'], ['89', '1']]);
    expect(splitWordsIntoChips(words, 1, [8, 8, 8, 8]).map((image) => image.widthBits)).toEqual([8, 8, 8, 8]);
    expect(splitWordsIntoChips(words, 1, [16])[0]!.words).toBeInstanceOf(Uint16Array);
  });

  it('takes chips across the 32-bit lanes of wide words', () => {
    // One 40-bit word 0x12_89ABCDEF stored as two lanes, low lane first.
    const words = new Uint32Array([0x89abcdef, 0x12]);
    expect(values(splitWordsIntoChips(words, 2, [8, 16, 16]))).toEqual([['EF'], ['ABCD'], ['1289']]);
    expect(values(splitWordsIntoChips(words, 2, [32, 8]))).toEqual([['89ABCDEF'], ['12']]);
    expect(values(splitWordsIntoChips(words, 2, [16, 16, 16, 8]))).toEqual([['CDEF'], ['89AB'], ['12'], ['0']]);
  });

  it('refuses widths and layouts it cannot represent', () => {
    expect(() => splitWordsIntoChips(new Uint32Array(2), 1, [8, 12])).toThrow(/chip width 12 bits is not supported/);
    expect(() => splitWordsIntoChips(new Uint32Array(3), 2, [8])).toThrow(/3 lane values is not a whole number of 2-lane words/);
    expect(() => splitWordsIntoChips(new Uint32Array(2), 0, [8])).toThrow(/at least one 32-bit lane/);
  });
});
