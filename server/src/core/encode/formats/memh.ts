// Verilog `$readmemh` text images (IEEE 1364-2005, 17.2.9): `//` header comments naming the
// source, then one word per line in lowercase hex with exactly the digits of the chip's width
// (2 for 8-bit, 4 for 16-bit, 8 for 32-bit), and `@hhhh` lines giving the word address of the
// word that follows. Addresses count words, not bytes, so no byte order is involved. The reader
// accepts the standard's syntax (whitespace, `//` and `/* */` comments, `@` addresses,
// underscores in numbers) but rejects x and z digits: a ROM image must hold 0s and 1s.
import {
  AsciiBuffer,
  CR,
  LF,
  asBytes,
  describeChar,
  hexDigitValue,
  lineEndingBytes,
  lowerHexPairs,
  printableAscii,
  type LineEnding,
} from './ascii';
import {
  ImageFormatError,
  allocateWords,
  assertValidImage,
  bytesPerWord,
  failure,
  hex,
  maxWordValue,
  success,
  type ChipImage,
  type ChipWidth,
  type FormatResult,
} from './image';

export interface MemhWriteOptions {
  /** Name of the source file, written in the header comment. */
  sourceName?: string;
  /** One more header line, e.g. which store and chip this is. */
  description?: string;
  /**
   * Write an `@address` line before word 0 and before every `addressEvery`-th word after it;
   * 0 writes no address lines at all (words then load from the memory's first address).
   * 256 by default, which keeps long files easy to navigate.
   */
  addressEvery?: number;
  lineEnding?: LineEnding;
}

const maxHeaderText = 200;

export function writeMemh(image: ChipImage, options: MemhWriteOptions = {}): Uint8Array {
  assertValidImage(image);
  const lineEnding = options.lineEnding ?? 'lf';
  const addressEvery = options.addressEvery ?? 256;
  if (!Number.isInteger(addressEvery) || addressEvery < 0) {
    throw new ImageFormatError(`address line interval must be a whole number of words (0 for none), not ${addressEvery}`);
  }
  const words = image.words;
  const nWords = words.length;
  const nBytesPerWord = bytesPerWord(image.widthBits);
  const headerLines = [
    `// Phasewright control-store image for $readmemh (IEEE 1364-2005, 17.2.9)`,
    `// source: ${printableAscii(options.sourceName ?? '(unnamed)', maxHeaderText)}`,
  ];
  if (options.description !== undefined) headerLines.push(`// ${printableAscii(options.description, maxHeaderText)}`);
  headerLines.push(
    `// ${nWords} ${nWords === 1 ? 'word' : 'words'} of ${image.widthBits} bits, one per line; @ lines give word addresses in hex`,
  );

  const nEolBytes = lineEndingBytes(lineEnding);
  const nAddressDigits = Math.max(4, hex(Math.max(0, nWords - 1)).length);
  const nAddressLines = addressEvery === 0 ? 0 : Math.ceil(nWords / addressEvery);
  let nOutputBytes = nWords * (2 * nBytesPerWord + nEolBytes) + nAddressLines * (1 + nAddressDigits + nEolBytes);
  for (const line of headerLines) nOutputBytes += line.length + nEolBytes;

  const out = new AsciiBuffer(nOutputBytes, lineEnding);
  for (const line of headerLines) {
    out.text(line);
    out.endLine();
  }
  const digits = lowerHexPairs;
  const bytes = out.bytes;
  const crlf = lineEnding === 'crlf';
  let offset = out.offset;
  for (let address = 0; address < nWords; address++) {
    if (addressEvery !== 0 && address % addressEvery === 0) {
      out.offset = offset;
      out.char(0x40);
      out.text(hex(address).toLowerCase().padStart(nAddressDigits, '0'));
      out.endLine();
      offset = out.offset;
    }
    const word = words[address]!;
    // Most significant byte first: a Verilog hex number reads left to right from the top bit.
    for (let shift = 8 * (nBytesPerWord - 1); shift >= 0; shift -= 8) {
      const pair = digits[(word >>> shift) & 0xff]!;
      bytes[offset++] = pair & 0xff;
      bytes[offset++] = pair >>> 8;
    }
    if (crlf) bytes[offset++] = CR;
    bytes[offset++] = LF;
  }
  out.offset = offset;
  return out.finish();
}

/** Words found in a `$readmemh` file, sorted by word address, with the line of each. */
export interface MemhContents {
  addresses: Uint32Array;
  values: Uint32Array;
  lines: Uint32Array;
}

const isSpace = (code: number): boolean => code === 0x20 || code === 0x09 || code === LF || code === CR || code === 0x0b || code === 0x0c;

/**
 * Parses `$readmemh` text for a memory of `widthBits`. A word with more significant bits than
 * the width is an error (a simulator would truncate it with at most a warning), as are x/z
 * digits and any address given twice.
 */
/** The first 40 characters of a token, for messages. */
function tokenText(bytes: Uint8Array, start: number, end: number): string {
  return String.fromCharCode(...bytes.subarray(start, Math.min(end, start + 40)));
}

export function parseMemh(input: Uint8Array | string, widthBits: ChipWidth): FormatResult<MemhContents> {
  const bytes = asBytes(input);
  const nBytes = bytes.length;
  const limit = maxWordValue(widthBits);
  let capacity = 1024;
  let addresses: Uint32Array = new Uint32Array(capacity);
  let values: Uint32Array = new Uint32Array(capacity);
  let lines: Uint32Array = new Uint32Array(capacity);
  let nWords = 0;
  let sorted = true;
  let address = 0;
  let lineNumber = 1;
  let offset = 0;

  while (offset < nBytes) {
    const code = bytes[offset]!;
    if (isSpace(code)) {
      if (code === LF) lineNumber++;
      offset++;
      continue;
    }
    if (code === 0x2f) {
      const next = bytes[offset + 1];
      if (next === 0x2f) {
        const end = bytes.indexOf(LF, offset);
        offset = end < 0 ? nBytes : end;
        continue;
      }
      if (next === 0x2a) {
        const startLine = lineNumber;
        offset += 2;
        while (offset < nBytes && !(bytes[offset] === 0x2a && bytes[offset + 1] === 0x2f)) {
          if (bytes[offset] === LF) lineNumber++;
          offset++;
        }
        if (offset >= nBytes) return failure('memh', 'the /* comment starting here is never closed', startLine);
        offset += 2;
        continue;
      }
      return failure('memh', "a lone '/' (comments start with // or /*)", lineNumber);
    }
    const isAddress = code === 0x40;
    const tokenStart = isAddress ? offset + 1 : offset;
    let tokenEnd = tokenStart;
    while (tokenEnd < nBytes && !isSpace(bytes[tokenEnd]!) && bytes[tokenEnd] !== 0x2f) tokenEnd++;
    // The token's text is only needed for messages: tokenText builds it there, so nothing is
    // allocated per word (this loop runs once per word of every image we verify).
    if (tokenEnd === tokenStart) return failure('memh', "'@' must be followed by a hex address", lineNumber);
    if (bytes[tokenStart] === 0x5f) {
      return failure('memh', `'${tokenText(bytes, tokenStart, tokenEnd)}' starts with '_', which a number may not`, lineNumber);
    }
    let value = 0;
    for (let index = tokenStart; index < tokenEnd; index++) {
      const digitCode = bytes[index]!;
      if (digitCode === 0x5f) continue;
      const digit = hexDigitValue[digitCode]!;
      if (digit < 0) {
        if (!isAddress && (digitCode === 0x78 || digitCode === 0x58 || digitCode === 0x7a || digitCode === 0x5a || digitCode === 0x3f)) {
          return failure('memh', `'${tokenText(bytes, tokenStart, tokenEnd)}' has undefined (x or z) bits; a ROM image must hold 0s and 1s`, lineNumber);
        }
        return failure('memh', `${describeChar(digitCode)} in '${isAddress ? '@' : ''}${tokenText(bytes, tokenStart, tokenEnd)}' is not a hex digit`, lineNumber);
      }
      value = value * 16 + digit;
      if (value > (isAddress ? 0xffffffff : limit)) {
        return failure(
          'memh',
          isAddress
            ? `address '@${tokenText(bytes, tokenStart, tokenEnd)}' is beyond 32 bits`
            : `'${tokenText(bytes, tokenStart, tokenEnd)}' does not fit in ${widthBits} bits (at most ${widthBits / 4} hex digits)`,
          lineNumber,
        );
      }
    }
    offset = tokenEnd;
    if (isAddress) {
      address = value;
      continue;
    }
    if (address > 0xffffffff) return failure('memh', 'the word address runs past 32 bits', lineNumber);
    if (nWords === capacity) {
      capacity *= 2;
      addresses = grow(addresses, capacity);
      values = grow(values, capacity);
      lines = grow(lines, capacity);
    }
    if (nWords > 0 && address <= addresses[nWords - 1]!) sorted = false;
    addresses[nWords] = address;
    values[nWords] = value;
    lines[nWords] = lineNumber;
    nWords++;
    address++;
  }

  addresses = addresses.subarray(0, nWords);
  values = values.subarray(0, nWords);
  lines = lines.subarray(0, nWords);
  if (!sorted) {
    const order = Array.from({ length: nWords }, (_, index) => index).sort(
      (a, b) => addresses[a]! - addresses[b]! || lines[a]! - lines[b]!,
    );
    addresses = Uint32Array.from(order, (index) => addresses[index]!);
    values = Uint32Array.from(order, (index) => values[index]!);
    lines = Uint32Array.from(order, (index) => lines[index]!);
  }
  for (let index = 1; index < nWords; index++) {
    if (addresses[index] === addresses[index - 1]) {
      return failure(
        'memh',
        `word address 0x${hex(addresses[index]!)} is given a value twice (first on line ${lines[index - 1]})`,
        lines[index]!,
      );
    }
  }
  return success({ addresses, values, lines });
}

function grow(array: Uint32Array, capacity: number): Uint32Array {
  const grown = new Uint32Array(capacity);
  grown.set(array);
  return grown;
}

/** Reads `$readmemh` text back into a dense image: every address from 0 must have a word. */
export function readMemh(input: Uint8Array | string, widthBits: ChipWidth): FormatResult<ChipImage> {
  const parsed = parseMemh(input, widthBits);
  if (!parsed.ok) return parsed;
  const { addresses, values, lines } = parsed.value;
  const nWords = addresses.length;
  for (let index = 0; index < nWords; index++) {
    if (addresses[index] !== index) {
      return failure(
        'memh',
        index === 0
          ? `words start at address 0x${hex(addresses[0]!)} instead of 0; a ROM image must start at 0`
          : `no word for addresses 0x${hex(index)} to 0x${hex(addresses[index]! - 1)}; a ROM image must have a value at every address`,
        lines[index]!,
      );
    }
  }
  const words = allocateWords(widthBits, nWords);
  words.set(values);
  return success({ widthBits, words });
}
