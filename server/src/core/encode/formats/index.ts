// The table of control-store file formats: name -> extension, writer and reader, plus the
// read-back check a build runs on every file before it is written to disk. Writers return
// ASCII or binary bytes (never strings), ready for the file system. This module chooses
// nothing about which chips exist or what they hold; the encoder decides that.
import { readBinary, writeBinary } from './bin';
import { readIntelHex, writeIntelHex } from './ihex';
import { readMemh, writeMemh } from './memh';
import { readSRecord, writeSRecord } from './srec';
import {
  failure,
  firstDifference,
  hex,
  success,
  type ChipImage,
  type ChipWidth,
  type FormatResult,
  type ImageFormatName,
} from './image';
import type { LineEnding } from './ascii';

export * from './image';
export { crc32, imageCrc32, imageSum16, sum16, checksumHex } from './checksums';
export { parseIntelHex, readIntelHex, writeIntelHex, writeIntelHexBytes, type IntelHexContents, type IntelHexWriteOptions } from './ihex';
export { parseSRecord, readSRecord, writeSRecord, writeSRecordBytes, type SRecordContents, type SRecordWriteOptions } from './srec';
export { parseMemh, readMemh, writeMemh, type MemhContents, type MemhWriteOptions } from './memh';
export { readBinary, writeBinary } from './bin';
export { splitWordsIntoChips } from './chips';
export type { LineEnding } from './ascii';

/** Options every writer accepts; each format uses the ones that mean something to it. */
export interface ImageWriteOptions {
  /** Data bytes per record for Intel HEX and S-records (16 by default). */
  bytesPerLine?: number;
  /** Line ending of the text formats ('lf' by default). */
  lineEnding?: LineEnding;
  /** The source file name: S0 header text and the `$readmemh` header comment. */
  sourceName?: string;
  /** One more header line for `$readmemh` files (e.g. the store and chip). */
  description?: string;
  /** `$readmemh` address line interval in words (256 by default, 0 for none). */
  addressEvery?: number;
}

export interface ImageFormat {
  name: ImageFormatName;
  /** File name extension including the dot. */
  extension: string;
  /** A few words for help texts and reports. */
  title: string;
  /** Encodes an image; throws ImageFormatError only for an invalid image or option. */
  write(image: ChipImage, options?: ImageWriteOptions): Uint8Array;
  /** Decodes a file back into a dense image of the given width, or says what is wrong. */
  read(data: Uint8Array | string, widthBits: ChipWidth): FormatResult<ChipImage>;
}

/**
 * S-record files all get `.srec` whatever record type they use: one extension per format keeps
 * file names predictable, and programmers that care look at the records, not the name.
 */
export const imageFormats: Readonly<Record<ImageFormatName, ImageFormat>> = {
  ihex: {
    name: 'ihex',
    extension: '.hex',
    title: 'Intel HEX',
    write: (image, options = {}) =>
      writeIntelHex(image, { bytesPerLine: options.bytesPerLine, lineEnding: options.lineEnding }),
    read: readIntelHex,
  },
  srec: {
    name: 'srec',
    extension: '.srec',
    title: 'Motorola S-record',
    write: (image, options = {}) =>
      writeSRecord(image, { bytesPerLine: options.bytesPerLine, lineEnding: options.lineEnding, moduleName: options.sourceName }),
    read: readSRecord,
  },
  bin: {
    name: 'bin',
    extension: '.bin',
    title: 'raw binary',
    write: (image) => writeBinary(image),
    read: (data, widthBits) => readBinary(typeof data === 'string' ? binaryFromString(data) : data, widthBits),
  },
  memh: {
    name: 'memh',
    extension: '.memh',
    title: 'Verilog $readmemh text',
    write: (image, options = {}) =>
      writeMemh(image, {
        sourceName: options.sourceName,
        description: options.description,
        addressEvery: options.addressEvery,
        lineEnding: options.lineEnding,
      }),
    read: readMemh,
  },
};

export const imageFormatNames: readonly ImageFormatName[] = ['ihex', 'srec', 'bin', 'memh'];

export function isImageFormatName(value: string): value is ImageFormatName {
  return (imageFormatNames as readonly string[]).includes(value);
}

/**
 * Reads `written` back with the format's own reader and compares it word for word with
 * `image`. A build runs this on every file before writing it, so a writer bug can never reach
 * a ROM programmer unnoticed.
 */
export function verifyReadBack(format: ImageFormatName, written: Uint8Array, image: ChipImage): FormatResult<void> {
  const read = imageFormats[format].read(written, image.widthBits);
  if (!read.ok) {
    return failure(format, `the ${imageFormats[format].title} file we produced does not read back: ${read.error.message}`);
  }
  const address = firstDifference(read.value, image);
  if (address >= 0) {
    const nRead = read.value.words.length;
    const nMeant = image.words.length;
    return failure(
      format,
      nRead !== nMeant && address === Math.min(nRead, nMeant)
        ? `the file reads back as ${nRead} words but the image has ${nMeant}`
        : `the file reads back 0x${hex(read.value.words[address]!)} at address 0x${hex(address)} where the image has 0x${hex(image.words[address]!)}`,
    );
  }
  return success(undefined);
}

function binaryFromString(text: string): Uint8Array {
  const out = new Uint8Array(text.length);
  for (let index = 0; index < text.length; index++) out[index] = text.charCodeAt(index) & 0xff;
  return out;
}
