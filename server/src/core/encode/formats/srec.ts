// Motorola S-record writer and reader. The writer emits an S0 header carrying a module name,
// data records of the smallest type that reaches the highest address (S1 16-bit, S2 24-bit,
// S3 32-bit), an S5 record count (S6 when the count passes 65535), and the matching
// termination record (S9, S8 or S7) with start address 0. Uppercase hex, LF unless CRLF is
// asked for; wide images are written as their little-endian byte stream. The reader is strict
// and exists for read-back verification; it is not a general object-file loader.
import {
  AsciiBuffer,
  BlockCollector,
  asBytes,
  decodeHexPairs,
  describeChar,
  forEachLine,
  lineEndingBytes,
  printableAscii,
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

export interface SRecordWriteOptions {
  /** Data bytes per data record; 16 by default; at most 252 (S1), 251 (S2) or 250 (S3). */
  bytesPerLine?: number;
  lineEnding?: LineEnding;
  /** Text for the S0 header; non-printable characters become '?', cut to 64 characters. */
  moduleName?: string;
  /** Address of the first byte; 0 by default (a control-store image always starts at 0). */
  baseAddress?: number;
}

/** Longest S0 module name we write; any reader accepts this (the count byte allows 252). */
export const maxModuleNameLength = 64;

/** Address bytes of S0..S9; 0 marks the reserved S4. */
const addressBytesOfType = [2, 2, 3, 4, 0, 2, 3, 4, 3, 2];

export function writeSRecord(image: ChipImage, options: SRecordWriteOptions = {}): Uint8Array {
  assertValidImage(image);
  return writeSRecordBytes(imageBytes(image), options);
}

/** Writes a byte stream starting at address 0; the image writer above is a thin wrapper. */
export function writeSRecordBytes(data: Uint8Array, options: SRecordWriteOptions = {}): Uint8Array {
  const lineEnding = options.lineEnding ?? 'lf';
  const bytesPerLine = options.bytesPerLine ?? 16;
  const moduleName = printableAscii(options.moduleName ?? '', maxModuleNameLength);
  const baseAddress = options.baseAddress ?? 0;
  if (!Number.isInteger(baseAddress) || baseAddress < 0 || baseAddress + data.length > 0x100000000) {
    throw new ImageFormatError('S-record addresses reach only 4 GiB; the data does not fit');
  }

  const highestAddress = baseAddress + Math.max(0, data.length - 1);
  const dataType = highestAddress <= 0xffff ? 1 : highestAddress <= 0xffffff ? 2 : 3;
  const nAddressBytes = dataType + 1;
  const maxBytesPerLine = 255 - nAddressBytes - 1;
  if (!Number.isInteger(bytesPerLine) || bytesPerLine < 1 || bytesPerLine > maxBytesPerLine) {
    throw new ImageFormatError(
      `S${dataType} records carry 1 to ${maxBytesPerLine} data bytes per line, not ${bytesPerLine}`,
    );
  }
  const nDataRecords = Math.ceil(data.length / bytesPerLine);
  if (nDataRecords > 0xffffff) {
    throw new ImageFormatError(`${nDataRecords} data records is more than an S6 count record can hold`);
  }
  const countType = nDataRecords <= 0xffff ? 5 : 6;
  const terminationType = 10 - dataType;

  // Record length in characters: 'S', type, count, then two digits per counted byte.
  const nEolBytes = lineEndingBytes(lineEnding);
  const recordChars = (nCountedBytes: number): number => 4 + 2 * nCountedBytes + nEolBytes;
  const nFullRecords = Math.floor(data.length / bytesPerLine);
  const lastRecordBytes = data.length % bytesPerLine;
  const nOutputBytes =
    recordChars(2 + moduleName.length + 1) +
    nFullRecords * recordChars(nAddressBytes + bytesPerLine + 1) +
    (lastRecordBytes > 0 ? recordChars(nAddressBytes + lastRecordBytes + 1) : 0) +
    recordChars(countType === 5 ? 3 : 4) +
    recordChars(nAddressBytes + 1);

  const out = new AsciiBuffer(nOutputBytes, lineEnding);
  const nameBytes: number[] = [];
  for (let index = 0; index < moduleName.length; index++) nameBytes.push(moduleName.charCodeAt(index));
  writeRecord(out, 0, 0, 2, nameBytes);

  const digits = upperHexPairs;
  for (let dataOffset = 0; dataOffset < data.length; dataOffset += bytesPerLine) {
    const nBytes = Math.min(bytesPerLine, data.length - dataOffset);
    const address = baseAddress + dataOffset;
    const nCounted = nAddressBytes + nBytes + 1;
    out.char(0x53);
    out.char(0x30 + dataType);
    out.hexByte(nCounted, digits);
    let sum = nCounted;
    for (let shift = 8 * (nAddressBytes - 1); shift >= 0; shift -= 8) {
      const addressByte = (address >>> shift) & 0xff;
      out.hexByte(addressByte, digits);
      sum += addressByte;
    }
    const bytes = out.bytes;
    let offset = out.offset;
    for (let index = dataOffset, end = dataOffset + nBytes; index < end; index++) {
      const value = data[index]!;
      const pair = digits[value]!;
      bytes[offset++] = pair & 0xff;
      bytes[offset++] = pair >>> 8;
      sum += value;
    }
    out.offset = offset;
    out.hexByte(~sum & 0xff, digits);
    out.endLine();
  }
  writeRecord(out, countType, nDataRecords, countType === 5 ? 2 : 3, []);
  writeRecord(out, terminationType, 0, nAddressBytes, []);
  return out.finish();
}

function writeRecord(out: AsciiBuffer, recordType: number, address: number, nAddressBytes: number, data: number[]): void {
  const nCounted = nAddressBytes + data.length + 1;
  out.char(0x53);
  out.char(0x30 + recordType);
  out.hexByte(nCounted, upperHexPairs);
  let sum = nCounted;
  for (let shift = 8 * (nAddressBytes - 1); shift >= 0; shift -= 8) {
    const addressByte = (address >>> shift) & 0xff;
    out.hexByte(addressByte, upperHexPairs);
    sum += addressByte;
  }
  for (const value of data) {
    out.hexByte(value, upperHexPairs);
    sum += value;
  }
  out.hexByte(~sum & 0xff, upperHexPairs);
  out.endLine();
}

/** What an S-record file holds besides its data. */
export interface SRecordContents {
  blocks: MemoryBlock[];
  /** The S0 data as text (non-printable bytes shown as '?'), or null without an S0 record. */
  header: string | null;
  /** The data record type used (1, 2 or 3), or null when there are none or they are mixed. */
  dataType: 1 | 2 | 3 | null;
  nDataRecords: number;
  /** The S5/S6 count, or null when the file has no count record. */
  recordCount: number | null;
  terminationType: 7 | 8 | 9;
  startAddress: number;
}

/**
 * Parses an S-record file strictly: well-formed records with correct checksums, a count record
 * (if present) equal to the number of data records before it, a termination record last
 * (blank lines may follow) whose type matches the data records, and no address given twice.
 */
export function parseSRecord(input: Uint8Array | string): FormatResult<SRecordContents> {
  const bytes = asBytes(input);
  const record = new Uint8Array(260);
  const collector = new BlockCollector();
  let header: string | null = null;
  let nDataRecords = 0;
  let dataTypesSeen = 0;
  let recordCount: number | null = null;
  let termination: { type: 7 | 8 | 9; address: number; line: number } | null = null;

  const problem = forEachLine(bytes, (line): FormatResult<SRecordContents> | undefined => {
    if (line.end === line.start) return undefined;
    if (termination) {
      return failure('srec', `text after the termination record on line ${termination.line}`, line.lineNumber);
    }
    if (bytes[line.start] !== 0x53) {
      return failure('srec', `a record must start with 'S' but this line starts with ${describeChar(bytes[line.start]!)}`, line.lineNumber);
    }
    if (line.end - line.start < 2) return failure('srec', 'the record has no type digit', line.lineNumber);
    const typeChar = bytes[line.start + 1]!;
    const recordType = typeChar - 0x30;
    if (recordType < 0 || recordType > 9) {
      return failure('srec', `${describeChar(typeChar)} is not a record type (S0 to S9)`, line.lineNumber);
    }
    if (recordType === 4) return failure('srec', 'S4 is a reserved record type', line.lineNumber);
    const decoded = decodeHexPairs(bytes, line.start + 2, line.end, record);
    if (decoded < 0) {
      const column = -decoded + 2;
      return failure('srec', `column ${column}: ${describeChar(bytes[line.start + column - 1]!)} is not a hex digit`, line.lineNumber);
    }
    if ((line.end - line.start) % 2 !== 0) {
      return failure('srec', 'the record has an odd number of hex digits', line.lineNumber);
    }
    const nAddressBytes = addressBytesOfType[recordType]!;
    if (decoded < 1 || record[0]! !== decoded - 1) {
      return failure(
        'srec',
        decoded < 1
          ? 'the record has no count byte'
          : `the count byte says ${record[0]} bytes follow but the record holds ${decoded - 1}`,
        line.lineNumber,
      );
    }
    if (decoded < 1 + nAddressBytes + 1) {
      return failure('srec', `an S${recordType} record needs ${nAddressBytes} address bytes and a checksum`, line.lineNumber);
    }
    let sum = 0;
    for (let index = 0; index < decoded - 1; index++) sum += record[index]!;
    const expected = ~sum & 0xff;
    const found = record[decoded - 1]!;
    if (found !== expected) {
      return failure('srec', `checksum is ${hex2(found)} but the record's bytes need ${hex2(expected)}`, line.lineNumber);
    }
    let address = 0;
    for (let index = 1; index <= nAddressBytes; index++) address = address * 256 + record[index]!;
    const nData = decoded - 2 - nAddressBytes;
    const dataStart = 1 + nAddressBytes;

    switch (recordType) {
      case 0: {
        let text = '';
        for (let index = dataStart; index < dataStart + nData; index++) {
          const code = record[index]!;
          text += code >= 0x20 && code <= 0x7e ? String.fromCharCode(code) : '?';
        }
        header = text;
        return undefined;
      }
      case 1:
      case 2:
      case 3:
        if (address + nData > 0x100000000) {
          return failure('srec', 'the data record runs past the 4 GiB address space', line.lineNumber);
        }
        dataTypesSeen |= 1 << recordType;
        nDataRecords++;
        collector.add(address, record.subarray(dataStart), nData, line.lineNumber);
        return undefined;
      case 5:
      case 6:
        if (nData !== 0) return failure('srec', `an S${recordType} count record has no data bytes`, line.lineNumber);
        if (address !== nDataRecords) {
          return failure(
            'srec',
            `the count record says ${address} data records but ${nDataRecords} precede it; records may be missing`,
            line.lineNumber,
          );
        }
        recordCount = address;
        return undefined;
      default:
        if (nData !== 0) return failure('srec', `an S${recordType} termination record has no data bytes`, line.lineNumber);
        termination = { type: recordType as 7 | 8 | 9, address, line: line.lineNumber };
        return undefined;
    }
  });
  if (problem) return problem;
  if (!termination) return failure('srec', 'the file has no termination record (S7, S8 or S9); it may be cut short');
  const end: { type: 7 | 8 | 9; address: number; line: number } = termination;
  const singleType = dataTypesSeen === 2 ? 1 : dataTypesSeen === 4 ? 2 : dataTypesSeen === 8 ? 3 : null;
  if (singleType !== null && end.type !== 10 - singleType) {
    return failure(
      'srec',
      `S${end.type} does not terminate S${singleType} data records (S${singleType} ends with S${10 - singleType})`,
      end.line,
    );
  }
  const collected = collector.finish();
  if (!collected.ok) {
    return failure(
      'srec',
      `data at address 0x${hex(collected.address)} overlaps data already given from line ${collected.earlierLine}`,
      collected.line,
    );
  }
  return success({
    blocks: collected.blocks,
    header,
    dataType: singleType,
    nDataRecords,
    recordCount,
    terminationType: end.type,
    startAddress: end.address,
  });
}

/** Reads an S-record file back into a dense image of the given chip width. */
export function readSRecord(input: Uint8Array | string, widthBits: ChipWidth): FormatResult<ChipImage> {
  const parsed = parseSRecord(input);
  if (!parsed.ok) return parsed;
  return imageFromBlocks('srec', parsed.value.blocks, widthBits);
}

function hex2(value: number): string {
  return hex(value).padStart(2, '0');
}
