// Checksums for the output report and manifest: the 16-bit byte sum a device programmer
// displays after loading an image (common practice, no source), and CRC-32 with the IEEE 802.3
// polynomial (reflected 0xEDB88320, initial and final value 0xFFFFFFFF) as a stronger extra.
// SHA-256 is deliberately not here: the Node adapter takes it from node:crypto.
import { bytesPerWord, type ChipImage } from './image';

/** Sum of all bytes modulo 65536. */
export function sum16(bytes: Uint8Array): number {
  // A double holds the exact sum for any array an engine can allocate (below 2^53), and the
  // final mask keeps the low 16 bits.
  let sum = 0;
  for (let index = 0; index < bytes.length; index++) sum += bytes[index]!;
  return sum & 0xffff;
}

/**
 * The 16-bit byte sum of an image's little-endian byte stream (the same bytes as the .bin
 * file), computed from the words without building that stream.
 */
export function imageSum16(image: ChipImage): number {
  const words = image.words;
  const nBytesPerWord = bytesPerWord(image.widthBits);
  let sum = 0;
  for (let address = 0; address < words.length; address++) {
    const word = words[address]!;
    if (nBytesPerWord === 1) sum += word & 0xff;
    else if (nBytesPerWord === 2) sum += (word & 0xff) + ((word >>> 8) & 0xff);
    else sum += (word & 0xff) + ((word >>> 8) & 0xff) + ((word >>> 16) & 0xff) + (word >>> 24);
  }
  return sum & 0xffff;
}

const crcTable: Uint32Array = (() => {
  const table = new Uint32Array(256);
  for (let value = 0; value < 256; value++) {
    let crc = value;
    for (let bit = 0; bit < 8; bit++) crc = crc & 1 ? (crc >>> 1) ^ 0xedb88320 : crc >>> 1;
    table[value] = crc >>> 0;
  }
  return table;
})();

/** CRC-32 (IEEE 802.3) of a byte array, as an unsigned number. */
export function crc32(bytes: Uint8Array, previous = 0): number {
  let crc = ~previous >>> 0;
  for (let index = 0; index < bytes.length; index++) {
    crc = crcTable[(crc ^ bytes[index]!) & 0xff]! ^ (crc >>> 8);
  }
  return ~crc >>> 0;
}

/** CRC-32 of an image's little-endian byte stream (the same bytes as the .bin file). */
export function imageCrc32(image: ChipImage): number {
  const words = image.words;
  const nBytesPerWord = bytesPerWord(image.widthBits);
  let crc = 0xffffffff;
  for (let address = 0; address < words.length; address++) {
    const word = words[address]!;
    for (let byteIndex = 0; byteIndex < nBytesPerWord; byteIndex++) {
      crc = crcTable[(crc ^ (word >>> (8 * byteIndex))) & 0xff]! ^ (crc >>> 8);
    }
  }
  return ~crc >>> 0;
}

/** A checksum as fixed-width uppercase hex, the way programmers display it ("1A2B"). */
export function checksumHex(value: number, nDigits: 4 | 8): string {
  return (value >>> 0).toString(16).toUpperCase().padStart(nDigits, '0');
}
