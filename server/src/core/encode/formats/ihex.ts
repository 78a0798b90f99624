// Intel HEX writer and reader (Intel Hexadecimal Object File Format Specification, Rev A).
// The writer emits data records (type 00), extended linear address records (type 04) only once
// the image passes 64 KiB, and the end-of-file record (type 01); uppercase hex digits; LF line
// endings unless CRLF is asked for. Images wider than 8 bits are written as their little-endian
// byte stream (word k at byte address k*bytesPerWord). The reader exists to verify what we
// wrote and to load images back; it is strict and is not a general object-file loader.
import {
  AsciiBuffer,
  BlockCollector,
  asBytes,
  decodeHexPairs,
  describeChar,
  forEachLine,
  lineEndingBytes,
  upperHexPairs,
  type LineEnding,
} from './ascii';
import {
  ImageFormatError,
  assertValidImage,
  failure,
  hex,
  imageBytes,
  imageFromBlocks,
  success,
  type ChipImage,
  type ChipWidth,
  type FormatResult,
  type MemoryBlock,
} from './image';

export interface IntelHexWriteOptions {
  /** Data bytes per data record, 1..255; 16 by default (32 is the other common choice). */
  bytesPerLine?: number;
  /** Line ending after every record including the last; 'lf' by default. */
  lineEnding?: LineEnding;
  /** Address of the first byte; 0 by default (a control-store image always starts at 0). */
  baseAddress?: number;
}

const DATA = 0x00;
const END_OF_FILE = 0x01;
const EXTENDED_SEGMENT_ADDRESS = 0x02;
const START_SEGMENT_ADDRESS = 0x03;
const EXTENDED_LINEAR_ADDRESS = 0x04;
const START_LINEAR_ADDRESS = 0x05;

const SEGMENT_BYTES = 0x10000;
/** Colon, length, 4 address digits, type, checksum: the characters of a record besides data. */
const RECORD_OVERHEAD_CHARS = 11;

export function writeIntelHex(image: ChipImage, options: IntelHexWriteOptions = {}): Uint8Array {
  assertValidImage(image);
  return writeIntelHexBytes(imageBytes(image), options);
}

/** Writes a byte stream starting at address 0; the image writer above is a thin wrapper. */
export function writeIntelHexBytes(data: Uint8Array, options: IntelHexWriteOptions = {}): Uint8Array {
  const bytesPerLine = options.bytesPerLine ?? 16;
  const lineEnding = options.lineEnding ?? 'lf';
  if (!Number.isInteger(bytesPerLine) || bytesPerLine < 1 || bytesPerLine > 255) {
    throw new ImageFormatError(`Intel HEX bytes per line must be a whole number from 1 to 255, not ${bytesPerLine}`);
  }
  const baseAddress = options.baseAddress ?? 0;
  if (!Number.isInteger(baseAddress) || baseAddress < 0 || baseAddress + data.length > 0x100000000) {
    throw new ImageFormatError('Intel HEX with linear addresses reaches only 4 GiB; the data does not fit');
  }
  const nEolBytes = lineEndingBytes(lineEnding);
  const endAddress = baseAddress + data.length;

  // Exact output size: each 64 KiB segment is cut into lines separately (a data record never
  // crosses a segment boundary), and every segment other than segment 0 needs one 04 record.
  let nDataLines = 0;
  let nExtendedRecords = 0;
  for (let segmentStart = baseAddress; segmentStart < endAddress; ) {
    const segmentEnd = Math.min(endAddress, (Math.floor(segmentStart / SEGMENT_BYTES) + 1) * SEGMENT_BYTES);
    nDataLines += Math.ceil((segmentEnd - segmentStart) / bytesPerLine);
    if (segmentStart >= SEGMENT_BYTES) nExtendedRecords++;
    segmentStart = segmentEnd;
  }
  const nOutputBytes =
    nDataLines * (RECORD_OVERHEAD_CHARS + nEolBytes) +
    data.length * 2 +
    nExtendedRecords * (RECORD_OVERHEAD_CHARS + 4 + nEolBytes) +
    (RECORD_OVERHEAD_CHARS + nEolBytes);

  const out = new AsciiBuffer(nOutputBytes, lineEnding);
  const digits = upperHexPairs;
  let upperAddress = 0;
  for (let address = baseAddress; address < endAddress; ) {
    const segment = Math.floor(address / SEGMENT_BYTES);
    if (segment !== upperAddress) {
      upperAddress = segment;
      writeRecord(out, EXTENDED_LINEAR_ADDRESS, 0, [segment >>> 8, segment & 0xff]);
    }
    const offsetInSegment = address % SEGMENT_BYTES;
    const nBytes = Math.min(bytesPerLine, endAddress - address, SEGMENT_BYTES - offsetInSegment);
    out.char(0x3a);
    out.hexByte(nBytes, digits);
    out.hexByte(offsetInSegment >>> 8, digits);
    out.hexByte(offsetInSegment & 0xff, digits);
    out.hexByte(DATA, digits);
    let sum = nBytes + (offsetInSegment >>> 8) + (offsetInSegment & 0xff);
    const bytes = out.bytes;
    let offset = out.offset;
    for (let index = address - baseAddress, end = index + nBytes; index < end; index++) {
      const value = data[index]!;
      const pair = digits[value]!;
      bytes[offset++] = pair & 0xff;
      bytes[offset++] = pair >>> 8;
      sum += value;
    }
    out.offset = offset;
    out.hexByte(-sum & 0xff, digits);
    out.endLine();
    address += nBytes;
  }
  writeRecord(out, END_OF_FILE, 0, []);
  return out.finish();
}

function writeRecord(out: AsciiBuffer, recordType: number, offset: number, data: number[]): void {
  out.char(0x3a);
  out.hexByte(data.length, upperHexPairs);
  out.hexByte(offset >>> 8, upperHexPairs);
  out.hexByte(offset & 0xff, upperHexPairs);
  out.hexByte(recordType, upperHexPairs);
  let sum = data.length + (offset >>> 8) + (offset & 0xff) + recordType;
  for (const value of data) {
    out.hexByte(value, upperHexPairs);
    sum += value;
  }
  out.hexByte(-sum & 0xff, upperHexPairs);
  out.endLine();
}

/** What a HEX file holds: data blocks by address and the start address records, if any. */
export interface IntelHexContents {
  blocks: MemoryBlock[];
  /** From a type 05 record (32-bit) or, as segment*16+offset, a type 03 record. */
  startAddress: number | null;
  nRecords: number;
}

/**
 * Parses an Intel HEX file strictly: every line must be a well-formed record with a correct
 * checksum; blank lines are ignored; the file must end with an end-of-file record and nothing
 * may follow it; no address may be given twice. Errors name the line and the reason.
 */
export function parseIntelHex(input: Uint8Array | string): FormatResult<IntelHexContents> {
  const bytes = asBytes(input);
  const record = new Uint8Array(260);
  const collector = new BlockCollector();
  let baseAddress = 0;
  let startAddress: number | null = null;
  let endLine = 0;
  let nRecords = 0;

  const problem = forEachLine(bytes, (line): FormatResult<IntelHexContents> | undefined => {
    if (line.end === line.start) return undefined;
    if (endLine > 0) {
      return failure('ihex', `text after the end-of-file record on line ${endLine}`, line.lineNumber);
    }
    if (bytes[line.start] !== 0x3a) {
      return failure('ihex', `a record must start with ':' but this line starts with ${describeChar(bytes[line.start]!)}`, line.lineNumber);
    }
    const nChars = line.end - line.start - 1;
    const decoded = decodeHexPairs(bytes, line.start + 1, line.end, record);
    if (decoded < 0) {
      const column = -decoded + 1;
      return failure('ihex', `column ${column}: ${describeChar(bytes[line.start + column - 1]!)} is not a hex digit`, line.lineNumber);
    }
    if (nChars % 2 !== 0) {
      return failure('ihex', 'the record has an odd number of hex digits', line.lineNumber);
    }
    if (decoded < 5) {
      return failure('ihex', `the record is too short (${decoded} bytes; at least 5 are needed)`, line.lineNumber);
    }
    const nData = record[0]!;
    if (decoded !== nData + 5) {
      return failure(
        'ihex',
        `the length byte says ${nData} data bytes but the record holds ${decoded - 5}`,
        line.lineNumber,
      );
    }
    let sum = 0;
    for (let index = 0; index < decoded - 1; index++) sum += record[index]!;
    const expected = -sum & 0xff;
    const found = record[decoded - 1]!;
    if (found !== expected) {
      return failure(
        'ihex',
        `checksum is ${hex2(found)} but the record's bytes need ${hex2(expected)}`,
        line.lineNumber,
      );
    }
    nRecords++;
    const offset = (record[1]! << 8) | record[2]!;
    const recordType = record[3]!;
    switch (recordType) {
      case DATA: {
        if (offset + nData > SEGMENT_BYTES) {
          return failure('ihex', 'the data record runs past the end of its 64 KiB segment', line.lineNumber);
        }
        const address = baseAddress + offset;
        if (address + nData > 0x100000000) {
          return failure('ihex', 'the data record runs past the 4 GiB address space', line.lineNumber);
        }
        collector.add(address, record.subarray(4), nData, line.lineNumber);
        return undefined;
      }
      case END_OF_FILE:
        if (nData !== 0) return failure('ihex', 'the end-of-file record must have no data', line.lineNumber);
        endLine = line.lineNumber;
        return undefined;
      case EXTENDED_SEGMENT_ADDRESS:
      case EXTENDED_LINEAR_ADDRESS:
        if (nData !== 2 || offset !== 0) {
          return failure('ihex', `record type ${hex2(recordType)} must have 2 data bytes and address 0000`, line.lineNumber);
        }
        baseAddress =
          recordType === EXTENDED_LINEAR_ADDRESS
            ? ((record[4]! << 24) | (record[5]! << 16)) >>> 0
            : ((record[4]! << 8) | record[5]!) * 16;
        return undefined;
      case START_SEGMENT_ADDRESS:
      case START_LINEAR_ADDRESS: {
        if (nData !== 4 || offset !== 0) {
          return failure('ihex', `record type ${hex2(recordType)} must have 4 data bytes and address 0000`, line.lineNumber);
        }
        const high = (record[4]! << 8) | record[5]!;
        const low = (record[6]! << 8) | record[7]!;
        startAddress = recordType === START_LINEAR_ADDRESS ? high * 0x10000 + low : high * 16 + low;
        return undefined;
      }
      default:
        return failure('ihex', `unknown record type ${hex2(recordType)}`, line.lineNumber);
    }
  });
  if (problem) return problem;
  if (endLine === 0) return failure('ihex', 'the file has no end-of-file record (:00000001FF); it may be cut short');
  const collected = collector.finish();
  if (!collected.ok) {
    return failure(
      'ihex',
      `data at address 0x${hex(collected.address)} overlaps data already given from line ${collected.earlierLine}`,
      collected.line,
    );
  }
  return success({ blocks: collected.blocks, startAddress, nRecords });
}

/** Reads a HEX file back into a dense image of the given chip width. */
export function readIntelHex(input: Uint8Array | string, widthBits: ChipWidth): FormatResult<ChipImage> {
  const parsed = parseIntelHex(input);
  if (!parsed.ok) return parsed;
  return imageFromBlocks('ihex', parsed.value.blocks, widthBits);
}

function hex2(value: number): string {
  return hex(value).padStart(2, '0');
}
