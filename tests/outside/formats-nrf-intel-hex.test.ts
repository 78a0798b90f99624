// Our Intel HEX files, checked by two independent parsers from npm: nrf-intel-hex (strict: it
// rejects wrong checksums, duplicated data and records that wrap a 64 KiB segment) and
// intel-hex. Both must load exactly the bytes we meant, at exactly the addresses we meant.
import { createRequire } from 'node:module';
import MemoryMap from 'nrf-intel-hex';
import { describe, expect, it } from 'vitest';
import { imageBytes, writeIntelHex, type ChipImage, type ChipWidth, type IntelHexWriteOptions } from '../../server/src/core/encode/formats/index';

// intel-hex ships no type declarations; this is the part of its documented API we use.
const intelHex = createRequire(import.meta.url)('intel-hex') as {
  parse(data: string, bufferSize?: number): { data: Buffer; startLinearAddress: number | null };
};

function sampleImage(widthBits: ChipWidth, nWords: number, seed: number): ChipImage {
  const words = widthBits === 8 ? new Uint8Array(nWords) : widthBits === 16 ? new Uint16Array(nWords) : new Uint32Array(nWords);
  let state = seed >>> 0;
  for (let address = 0; address < nWords; address++) {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    words[address] = widthBits === 32 ? state : state >>> (32 - widthBits);
  }
  return { widthBits, words };
}

/** nrf-intel-hex's view of a file: one [address, bytes] pair per contiguous block. */
function nrfBlocks(hexText: string): [number, Buffer][] {
  return [...MemoryMap.fromHex(hexText)].map(([address, bytes]) => [address, Buffer.from(bytes)]);
}

const cases: { label: string; image: ChipImage; options: IntelHexWriteOptions }[] = [
  { label: '1 byte', image: sampleImage(8, 1, 1), options: {} },
  { label: '8 KiB 28C64-size 8-bit chip', image: sampleImage(8, 8192, 2), options: {} },
  { label: '64 KiB exactly, 32 bytes per line', image: sampleImage(8, 65536, 3), options: { bytesPerLine: 32 } },
  { label: '65537 bytes (one 04 record)', image: sampleImage(8, 65537, 4), options: {} },
  { label: '200000 bytes, CRLF', image: sampleImage(8, 200000, 5), options: { lineEnding: 'crlf' } },
  { label: '16-bit chip of 40000 words (80000 bytes)', image: sampleImage(16, 40000, 6), options: {} },
  { label: '32-bit store of 65536 words (256 KiB)', image: sampleImage(32, 65536, 7), options: { bytesPerLine: 32 } },
  { label: '255 bytes per line across a 64 KiB boundary', image: sampleImage(8, 70000, 8), options: { bytesPerLine: 255 } },
];

describe('nrf-intel-hex reads our Intel HEX files', () => {
  for (const { label, image, options } of cases) {
    it(label, () => {
      const hexText = Buffer.from(writeIntelHex(image, options)).toString('latin1');
      const blocks = nrfBlocks(hexText);
      expect(blocks.length).toBe(1);
      expect(blocks[0]![0]).toBe(0);
      expect(Buffer.compare(blocks[0]![1], Buffer.from(imageBytes(image)))).toBe(0);
      if (imageBytes(image).length > 0x10000) expect(hexText).toContain(':020000040001F9');
    });
  }

  it('and notices when a file is damaged or holds other data (the check can fail)', () => {
    const image = sampleImage(8, 300, 9);
    const hexText = Buffer.from(writeIntelHex(image)).toString('latin1');
    const damaged = hexText.replace(/^(:10002000)(.)/m, (_, head: string, digit: string) => head + (digit === '0' ? '1' : '0'));
    expect(damaged).not.toBe(hexText);
    expect(() => MemoryMap.fromHex(damaged)).toThrow(/Checksum failed/);
    const other = sampleImage(8, 300, 10);
    expect(Buffer.compare(nrfBlocks(hexText)[0]![1], Buffer.from(imageBytes(other)))).not.toBe(0);
  });
});

describe('intel-hex reads our Intel HEX files', () => {
  for (const { label, image, options } of cases) {
    it(label, () => {
      const hexText = Buffer.from(writeIntelHex(image, options)).toString('latin1');
      const parsed = intelHex.parse(hexText);
      expect(Buffer.compare(parsed.data, Buffer.from(imageBytes(image)))).toBe(0);
      expect(parsed.startLinearAddress).toBeNull();
    });
  }

  it('and rejects a damaged checksum (the check can fail)', () => {
    const hexText = Buffer.from(writeIntelHex(sampleImage(8, 64, 11))).toString('latin1');
    const lines = hexText.split('\n');
    lines[1] = lines[1]!.slice(0, -2) + (lines[1]!.endsWith('00') ? '01' : '00');
    expect(() => intelHex.parse(lines.join('\n'))).toThrow(/Invalid checksum on line 2/);
  });
});
