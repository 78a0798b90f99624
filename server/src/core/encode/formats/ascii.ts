// ASCII plumbing shared by the text formats: hex digit tables, a preallocated output buffer,
// and the helpers that walk an input file line by line as bytes. The writers build ASCII bytes
// from character codes (the pure core has no TextEncoder), which also keeps them fast: no
// string concatenation in the per-byte loops. This module knows nothing about any one format.

const upperDigits = '0123456789ABCDEF';
const lowerDigits = '0123456789abcdef';

function pairTable(digits: string): Uint16Array {
  // Entry b packs the two character codes of byte b: high digit in the low half so that a
  // writer can store table & 0xff then table >>> 8 in address order.
  const table = new Uint16Array(256);
  for (let value = 0; value < 256; value++) {
    table[value] = digits.charCodeAt(value >>> 4) | (digits.charCodeAt(value & 15) << 8);
  }
  return table;
}

export const upperHexPairs = pairTable(upperDigits);
export const lowerHexPairs = pairTable(lowerDigits);

/** Value of a hex digit character code, or -1 when the code is not a hex digit. */
export const hexDigitValue: Int8Array = (() => {
  const table = new Int8Array(256).fill(-1);
  for (let digit = 0; digit < 16; digit++) {
    table[upperDigits.charCodeAt(digit)] = digit;
    table[lowerDigits.charCodeAt(digit)] = digit;
  }
  return table;
})();

export type LineEnding = 'lf' | 'crlf';

export const CR = 13;
export const LF = 10;

/**
 * A fixed-size output buffer the writers fill left to right. Writers compute their exact output
 * size first, so the buffer never grows; `finish` checks that the estimate was right.
 */
export class AsciiBuffer {
  readonly bytes: Uint8Array;
  offset = 0;
  private readonly crlf: boolean;

  constructor(nBytes: number, lineEnding: LineEnding) {
    this.bytes = new Uint8Array(nBytes);
    this.crlf = lineEnding === 'crlf';
  }

  char(code: number): void {
    this.bytes[this.offset++] = code;
  }

  /** Two hex digits for one byte, using a table from this module. */
  hexByte(value: number, table: Uint16Array): void {
    const pair = table[value & 0xff]!;
    this.bytes[this.offset++] = pair & 0xff;
    this.bytes[this.offset++] = pair >>> 8;
  }

  /** Writes a string known to be printable ASCII. */
  text(value: string): void {
    for (let index = 0; index < value.length; index++) this.bytes[this.offset++] = value.charCodeAt(index);
  }

  endLine(): void {
    if (this.crlf) this.bytes[this.offset++] = CR;
    this.bytes[this.offset++] = LF;
  }

  /** The filled bytes; throws if the size computed up front was wrong (a writer bug). */
  finish(): Uint8Array {
    if (this.offset !== this.bytes.length) {
      throw new Error(`internal error: output size estimate ${this.bytes.length} but wrote ${this.offset} bytes`);
    }
    return this.bytes;
  }
}

export function lineEndingBytes(lineEnding: LineEnding): number {
  return lineEnding === 'crlf' ? 2 : 1;
}

/**
 * File contents as bytes. A string is taken one UTF-16 unit per byte; any unit above 0x7F
 * becomes 0x80, which no format accepts, so readers report it instead of misreading it.
 */
export function asBytes(input: Uint8Array | string): Uint8Array {
  if (typeof input !== 'string') return input;
  const out = new Uint8Array(input.length);
  for (let index = 0; index < input.length; index++) {
    const code = input.charCodeAt(index);
    out[index] = code < 0x80 ? code : 0x80;
  }
  return out;
}

/** Replaces anything outside printable ASCII (space to tilde) with '?', for headers. */
export function printableAscii(value: string, maxLength: number): string {
  let out = '';
  for (let index = 0; index < value.length && out.length < maxLength; index++) {
    const code = value.charCodeAt(index);
    out += code >= 0x20 && code <= 0x7e ? value[index] : '?';
  }
  return out;
}

/** How a character appears in a message: itself when printable, otherwise its code. */
export function describeChar(code: number): string {
  if (code >= 0x21 && code <= 0x7e) return `'${String.fromCharCode(code)}'`;
  if (code === 0x20) return 'a space';
  if (code === 0x09) return 'a tab';
  if (code === 0x80) return 'a non-ASCII character';
  return `the control character 0x${code.toString(16).toUpperCase().padStart(2, '0')}`;
}

/** One physical line of a file: bytes [start, end) without the line ending. */
export interface LineSpan {
  start: number;
  end: number;
  lineNumber: number;
}

/**
 * Calls `visit` for each line (LF or CRLF endings; a lone CR is left in the line so the format
 * reports it). Trailing spaces and tabs are trimmed: editors add them and they carry nothing.
 * Returning a value other than undefined from `visit` stops the walk and returns that value.
 */
export function forEachLine<T>(bytes: Uint8Array, visit: (line: LineSpan) => T | undefined): T | undefined {
  let start = 0;
  let lineNumber = 1;
  const nBytes = bytes.length;
  while (start < nBytes) {
    let end = bytes.indexOf(LF, start);
    const next = end < 0 ? nBytes : end + 1;
    if (end < 0) end = nBytes;
    if (end > start && bytes[end - 1] === CR) end--;
    while (end > start && (bytes[end - 1] === 0x20 || bytes[end - 1] === 0x09)) end--;
    const result = visit({ start, end, lineNumber });
    if (result !== undefined) return result;
    start = next;
    lineNumber++;
  }
  return undefined;
}

/**
 * Decodes the hex digit pairs in bytes [start, end) into `out`; returns the count decoded, or
 * the negated 1-based column of the first bad character relative to `start` (as -column).
 */
export function decodeHexPairs(bytes: Uint8Array, start: number, end: number, out: Uint8Array): number {
  let count = 0;
  for (let offset = start; offset + 1 < end; offset += 2) {
    const high = hexDigitValue[bytes[offset]!]!;
    if (high < 0) return -(offset - start + 1);
    const low = hexDigitValue[bytes[offset + 1]!]!;
    if (low < 0) return -(offset - start + 2);
    out[count++] = (high << 4) | low;
  }
  return count;
}

/**
 * Collects data records into contiguous blocks. Records usually arrive in address order, so a
 * record that continues the previous one extends it in place; the rest start a new block.
 * `finish` sorts the blocks and reports the first overlap (a file that gives an address twice
 * is ambiguous for a ROM, so it is an error rather than last-one-wins).
 */
export class BlockCollector {
  private arena = new Uint8Array(4096);
  private used = 0;
  private readonly starts: { address: number; arenaOffset: number; length: number; firstLine: number }[] = [];

  add(address: number, data: Uint8Array, nBytes: number, lineNumber: number): void {
    if (this.used + nBytes > this.arena.length) {
      let size = this.arena.length * 2;
      while (size < this.used + nBytes) size *= 2;
      const grown = new Uint8Array(size);
      grown.set(this.arena.subarray(0, this.used));
      this.arena = grown;
    }
    this.arena.set(data.subarray(0, nBytes), this.used);
    const last = this.starts[this.starts.length - 1];
    if (last && last.address + last.length === address && last.arenaOffset + last.length === this.used) {
      last.length += nBytes;
    } else {
      this.starts.push({ address, arenaOffset: this.used, length: nBytes, firstLine: lineNumber });
    }
    this.used += nBytes;
  }

  /** Sorted, merged blocks, or the line numbers of the first two blocks that overlap. */
  finish():
    | { ok: true; blocks: { address: number; bytes: Uint8Array; firstLine: number }[] }
    | { ok: false; address: number; line: number; earlierLine: number } {
    const sorted = this.starts.filter((block) => block.length > 0).sort((a, b) => a.address - b.address);
    const blocks: { address: number; bytes: Uint8Array; firstLine: number }[] = [];
    let previous: (typeof sorted)[number] | undefined;
    for (const block of sorted) {
      if (previous && block.address < previous.address + previous.length) {
        const later = block.firstLine > previous.firstLine ? block : previous;
        const earlier = later === block ? previous : block;
        return { ok: false, address: block.address, line: later.firstLine, earlierLine: earlier.firstLine };
      }
      previous = block;
    }
    // Join neighbouring blocks with one copy per joined run (not one copy per join).
    for (let first = 0; first < sorted.length; ) {
      let last = first;
      let nBytes = sorted[first]!.length;
      while (last + 1 < sorted.length && sorted[last]!.address + sorted[last]!.length === sorted[last + 1]!.address) {
        last++;
        nBytes += sorted[last]!.length;
      }
      const bytes = new Uint8Array(nBytes);
      let offset = 0;
      for (let index = first; index <= last; index++) {
        const block = sorted[index]!;
        bytes.set(this.arena.subarray(block.arenaOffset, block.arenaOffset + block.length), offset);
        offset += block.length;
      }
      blocks.push({ address: sorted[first]!.address, bytes, firstLine: sorted[first]!.firstLine });
      first = last + 1;
    }
    return { ok: true, blocks };
  }
}
