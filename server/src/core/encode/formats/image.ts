// The contents of one control-store chip as the file writers and readers see it: a dense run
// of words from address 0 in the chip's data width, plus the conversions between words and the
// little-endian byte stream that byte-oriented files (Intel HEX, S-record, raw binary) carry.
// It is deliberately not the encoder: which strobe lands in which bit is decided elsewhere.

/** Data widths of the chips we write images for (bits per address). */
export type ChipWidth = 8 | 16 | 32;

export const chipWidths: readonly ChipWidth[] = [8, 16, 32];

/**
 * One chip's contents: `words[address]` is the word stored at that address, for addresses
 * 0..words.length-1. Any of the three typed arrays may carry any width as long as every value
 * fits in `widthBits`; readers return the natural array (Uint8Array for 8 bits and so on).
 */
export interface ChipImage {
  widthBits: ChipWidth;
  words: Uint8Array | Uint16Array | Uint32Array;
}

/** Names of the file formats, used in messages and in the output manifest. */
export type ImageFormatName = 'ihex' | 'srec' | 'bin' | 'memh';

/**
 * A problem found while reading an image file. `line` is 1-based when the format has lines;
 * `message` is a plain sentence that already includes the line, ready for the CLI.
 */
export interface FormatError {
  format: ImageFormatName;
  line?: number;
  reason: string;
  message: string;
}

export type FormatResult<T> = { ok: true; value: T } | { ok: false; error: FormatError };

/**
 * Thrown by the writers when they are handed something no file can represent (a value wider
 * than the chip, an option out of range). That is a bug in the caller, not bad user input, so
 * it is an exception rather than a result; the message is still plain enough to show as is.
 */
export class ImageFormatError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ImageFormatError';
  }
}

export function formatError(format: ImageFormatName, reason: string, line?: number): FormatError {
  const message = line === undefined ? reason : `line ${line}: ${reason}`;
  return line === undefined ? { format, reason, message } : { format, line, reason, message };
}

export function failure<T>(format: ImageFormatName, reason: string, line?: number): FormatResult<T> {
  return { ok: false, error: formatError(format, reason, line) };
}

export function success<T>(value: T): FormatResult<T> {
  return { ok: true, value };
}

export function bytesPerWord(widthBits: ChipWidth): 1 | 2 | 4 {
  return (widthBits >>> 3) as 1 | 2 | 4;
}

export function isChipWidth(value: number): value is ChipWidth {
  return value === 8 || value === 16 || value === 32;
}

/** The largest value a word of `widthBits` holds, as an unsigned number. */
export function maxWordValue(widthBits: ChipWidth): number {
  return widthBits === 32 ? 0xffffffff : (1 << widthBits) - 1;
}

/** Throws ImageFormatError unless `image` has a known width and every word fits in it. */
export function assertValidImage(image: ChipImage): void {
  if (!isChipWidth(image.widthBits)) {
    throw new ImageFormatError(`chip width ${String(image.widthBits)} bits is not supported (use 8, 16 or 32)`);
  }
  const words = image.words;
  if (!(words instanceof Uint8Array || words instanceof Uint16Array || words instanceof Uint32Array)) {
    throw new ImageFormatError('image words must be a Uint8Array, Uint16Array or Uint32Array');
  }
  const limit = maxWordValue(image.widthBits);
  if ((words instanceof Uint8Array && limit >= 0xff) || (words instanceof Uint16Array && limit >= 0xffff)) return;
  if (words instanceof Uint32Array && limit === 0xffffffff) return;
  for (let address = 0; address < words.length; address++) {
    if (words[address]! > limit) {
      throw new ImageFormatError(
        `word at address 0x${address.toString(16).toUpperCase()} is 0x${words[address]!.toString(16).toUpperCase()}, ` +
          `which does not fit in ${image.widthBits} bits`,
      );
    }
  }
}

/**
 * The image as the byte stream of a byte-oriented file: word k occupies bytes
 * k*B .. k*B+B-1 (B = bytes per word), least significant byte first (little-endian). For an
 * 8-bit image held in a Uint8Array this returns that same array, so callers must not modify it.
 */
export function imageBytes(image: ChipImage): Uint8Array {
  const words = image.words;
  const nBytesPerWord = bytesPerWord(image.widthBits);
  if (nBytesPerWord === 1 && words instanceof Uint8Array) return words;
  const out = new Uint8Array(words.length * nBytesPerWord);
  let offset = 0;
  if (nBytesPerWord === 1) {
    for (let address = 0; address < words.length; address++) out[offset++] = words[address]!;
  } else if (nBytesPerWord === 2) {
    for (let address = 0; address < words.length; address++) {
      const word = words[address]!;
      out[offset++] = word & 0xff;
      out[offset++] = (word >>> 8) & 0xff;
    }
  } else {
    for (let address = 0; address < words.length; address++) {
      const word = words[address]!;
      out[offset++] = word & 0xff;
      out[offset++] = (word >>> 8) & 0xff;
      out[offset++] = (word >>> 16) & 0xff;
      out[offset++] = word >>> 24;
    }
  }
  return out;
}

/** The natural typed array for `nWords` words of `widthBits`. */
export function allocateWords(widthBits: ChipWidth, nWords: number): Uint8Array | Uint16Array | Uint32Array {
  if (widthBits === 8) return new Uint8Array(nWords);
  if (widthBits === 16) return new Uint16Array(nWords);
  return new Uint32Array(nWords);
}

/**
 * Rebuilds an image from a little-endian byte stream; the inverse of imageBytes. Returns null
 * when the byte count is not a whole number of words, which callers turn into their own error.
 */
export function imageFromBytes(bytes: Uint8Array, widthBits: ChipWidth): ChipImage | null {
  const nBytesPerWord = bytesPerWord(widthBits);
  if (bytes.length % nBytesPerWord !== 0) return null;
  const nWords = bytes.length / nBytesPerWord;
  const words = allocateWords(widthBits, nWords);
  if (nBytesPerWord === 1) {
    words.set(bytes);
  } else if (nBytesPerWord === 2) {
    for (let address = 0, offset = 0; address < nWords; address++, offset += 2) {
      words[address] = bytes[offset]! | (bytes[offset + 1]! << 8);
    }
  } else {
    for (let address = 0, offset = 0; address < nWords; address++, offset += 4) {
      words[address] =
        (bytes[offset]! | (bytes[offset + 1]! << 8) | (bytes[offset + 2]! << 16) | (bytes[offset + 3]! << 24)) >>> 0;
    }
  }
  return { widthBits, words };
}

/**
 * The first address where two images differ, or -1 when they hold the same words in the same
 * width. A length difference counts as a difference at the shorter image's end.
 */
export function firstDifference(a: ChipImage, b: ChipImage): number {
  if (a.widthBits !== b.widthBits) return 0;
  const nCommon = Math.min(a.words.length, b.words.length);
  for (let address = 0; address < nCommon; address++) {
    if (a.words[address] !== b.words[address]) return address;
  }
  return a.words.length === b.words.length ? -1 : nCommon;
}

/** One contiguous run of bytes found in a file, with the line it started on (for messages). */
export interface MemoryBlock {
  address: number;
  bytes: Uint8Array;
  firstLine: number;
}

/**
 * Turns the blocks a reader found into a dense image from address 0. A ROM image has a value
 * at every address, so a gap, an offset start or a partial word is an error, not something to
 * fill silently.
 */
export function imageFromBlocks(
  format: ImageFormatName,
  blocks: readonly MemoryBlock[],
  widthBits: ChipWidth,
): FormatResult<ChipImage> {
  if (blocks.length === 0) return success({ widthBits, words: allocateWords(widthBits, 0) });
  const first = blocks[0]!;
  if (first.address !== 0) {
    return failure(format, `data starts at address 0x${hex(first.address)} instead of 0; a ROM image must start at 0`, first.firstLine);
  }
  if (blocks.length > 1) {
    const second = blocks[1]!;
    const gapStart = first.address + first.bytes.length;
    return failure(
      format,
      `no data for addresses 0x${hex(gapStart)} to 0x${hex(second.address - 1)}; a ROM image must have a value at every address`,
      second.firstLine,
    );
  }
  const image = imageFromBytes(first.bytes, widthBits);
  if (image === null) {
    return failure(
      format,
      `${first.bytes.length} data bytes is not a whole number of ${widthBits}-bit words`,
    );
  }
  return success(image);
}

/** Uppercase hexadecimal without prefix, for messages. */
export function hex(value: number): string {
  return value.toString(16).toUpperCase();
}
