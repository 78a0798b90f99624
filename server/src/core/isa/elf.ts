// Loader for 32-bit little-endian RISC-V ELF executables (what `riscv64-unknown-elf-gcc
// -march=rv32i -mabi=ilp32` links), and for raw binary images. It checks the header, copies
// every PT_LOAD segment into a `Memory` (file bytes, then zeros up to the memory size), and
// returns the entry point, the segments and the symbol table (for labels in disassembly and for
// finding routines by name). Every problem with the file comes back as an error value with a
// message that says what is wrong and what was expected; nothing here throws on bad input.
//
// Layouts follow the System V ABI "generic ABI" ELF chapter (ELF header, program header,
// section header and symbol table entries) and the RISC-V ELF psABI (EM_RISCV = 243, e_flags bit
// 0 = RVC, bits 1-2 = float ABI).
//
// Stack convention: qemu-riscv32 user mode chooses its own initial sp (0x408009a0 in one run here)
// and places argc/argv there; our machines start with sp = DEFAULT_STACK_POINTER, a 16-byte
// aligned address below DEFAULT_STACK_TOP, with nothing on the stack. Test programs may use the
// stack but must not depend on sp's value or on argc/argv.
//
// Deliberately not here: dynamic linking, relocations, ELF64, big-endian files, program
// interpreters. Position-independent (ET_DYN) files are refused because nothing would relocate them.
//
// Public API:
//   parseElf(bytes) -> { ok, image } | { ok: false, error }      header, segments, symbols; no loading
//   loadElf(bytes, memory) -> same                               parse and copy segments into memory
//   loadRaw(bytes, address, memory) -> { ok } | { ok: false, error }
//   DEFAULT_STACK_TOP, DEFAULT_STACK_POINTER
//   symbolAt(image, address) -> ElfSymbol | undefined             nearest function/object symbol
import type { Memory } from './memory';

/** First address above the default stack. */
export const DEFAULT_STACK_TOP = 0x80000000;
/** Initial sp of our machines: 64 KiB below DEFAULT_STACK_TOP, 16-byte aligned as the psABI asks. */
export const DEFAULT_STACK_POINTER = 0x7fff0000;

export const EM_RISCV = 243;
const ET_EXEC = 2;
const ET_DYN = 3;
const PT_LOAD = 1;
const SHT_SYMTAB = 2;
const ELF_HEADER_BYTES = 52;
const PROGRAM_HEADER_BYTES = 32;
const SECTION_HEADER_BYTES = 40;
const SYMBOL_BYTES = 16;
/** Programs for a discrete-logic processor are small; this bound keeps a corrupt header from exhausting the host. */
export const MAX_LOADED_BYTES = 256 * 1024 * 1024;

export interface ElfSegment {
  /** Virtual address the segment is loaded at. */
  readonly address: number;
  /** Bytes taken from the file. */
  readonly fileBytes: number;
  /** Bytes occupied in memory; the part beyond fileBytes is zero-filled (.bss). */
  readonly memoryBytes: number;
  /** Offset of the segment's bytes in the file. */
  readonly fileOffset: number;
  readonly readable: boolean;
  readonly writable: boolean;
  readonly executable: boolean;
}

export interface ElfSymbol {
  readonly name: string;
  readonly address: number;
  readonly sizeBytes: number;
  readonly kind: 'function' | 'object' | 'other';
}

export interface ElfImage {
  readonly entry: number;
  readonly segments: readonly ElfSegment[];
  /** Named symbols with a defined address, sorted by address. Empty for stripped files. */
  readonly symbols: readonly ElfSymbol[];
  /** Things that do not stop loading but may stop the program, e.g. compressed-instruction flags. */
  readonly warnings: readonly string[];
}

export type ElfResult = { readonly ok: true; readonly image: ElfImage } | { readonly ok: false; readonly error: string };
export type LoadRawResult = { readonly ok: true; readonly endAddress: number } | { readonly ok: false; readonly error: string };

function fail(error: string): { ok: false; error: string } {
  return { ok: false, error };
}

function hex(value: number): string {
  return `0x${(value >>> 0).toString(16)}`;
}

/** Longest symbol name kept; longer names are cut (they only label addresses in reports). */
export const MAX_SYMBOL_NAME_CHARS = 1024;

/**
 * The names of one string table, read so that the whole walk costs the table's size plus a
 * logarithm per symbol, whatever the file holds: the table is decoded once into one string
 * and its NUL positions found in the same pass; each name's end is looked up among them
 * (binary search) instead of scanned for, which an unterminated table would make quadratic.
 * Names are slices of the one string, so a million symbols pointing into one long name take
 * no more memory than the table itself.
 */
class StringTable {
  private readonly text: string;
  private readonly nulPositions: Uint32Array;

  constructor(bytes: Uint8Array, start: number, end: number) {
    const pieces: string[] = [];
    // apply takes the typed array as it is (a spread would walk it through an iterator).
    for (let at = start; at < end; at += 4096) pieces.push(String.fromCharCode.apply(null, bytes.subarray(at, Math.min(end, at + 4096)) as unknown as number[]));
    this.text = pieces.join('');
    let count = 0;
    for (let at = start; at < end; at++) if (bytes[at] === 0) count++;
    this.nulPositions = new Uint32Array(count);
    for (let at = start, i = 0; at < end; at++) if (bytes[at] === 0) this.nulPositions[i++] = at - start;
  }

  /** Whether the table ends with a NUL, as the gABI requires of every string table. */
  get terminated(): boolean {
    return this.text.length > 0 && this.text.charCodeAt(this.text.length - 1) === 0;
  }

  /** Names cut to MAX_SYMBOL_NAME_CHARS so far. */
  cutNames = 0;

  /**
   * The name at `offset` into the table (the caller checks offset < the table's size). A cut
   * name stays a plain slice (no marker appended), so it never needs memory of its own.
   */
  nameAt(offset: number): string {
    let lo = 0;
    let hi = this.nulPositions.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.nulPositions[mid]! < offset) lo = mid + 1;
      else hi = mid;
    }
    const nul = lo < this.nulPositions.length ? this.nulPositions[lo]! : this.text.length;
    if (nul - offset > MAX_SYMBOL_NAME_CHARS) this.cutNames++;
    return this.text.slice(offset, Math.min(nul, offset + MAX_SYMBOL_NAME_CHARS));
  }
}

/** Reads and checks the ELF header, program headers and symbol table without loading anything. */
export function parseElf(bytes: Uint8Array): ElfResult {
  if (bytes.length < 4 || bytes[0] !== 0x7f || bytes[1] !== 0x45 || bytes[2] !== 0x4c || bytes[3] !== 0x46) {
    return fail('not an ELF file: it does not start with the bytes 7f 45 4c 46 ("\\x7fELF")');
  }
  if (bytes.length < ELF_HEADER_BYTES) {
    return fail(`truncated ELF file: ${bytes.length} bytes, but an ELF32 header alone needs ${ELF_HEADER_BYTES}`);
  }
  const elfClass = bytes[4];
  if (elfClass === 2) return fail('this is a 64-bit ELF file (ELFCLASS64); an RV32I program must be linked as ELFCLASS32 (-march=rv32i -mabi=ilp32)');
  if (elfClass !== 1) return fail(`unknown ELF class ${elfClass} (expected 1 = ELFCLASS32)`);
  const dataEncoding = bytes[5];
  if (dataEncoding === 2) return fail('this ELF file is big-endian (ELFDATA2MSB); RISC-V executables are little-endian (ELFDATA2LSB)');
  if (dataEncoding !== 1) return fail(`unknown ELF data encoding ${dataEncoding} (expected 1 = little-endian)`);
  if (bytes[6] !== 1) return fail(`unknown ELF version ${bytes[6]} in the identification bytes (expected 1)`);

  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const u16 = (offset: number) => view.getUint16(offset, true);
  const u32 = (offset: number) => view.getUint32(offset, true);

  const machine = u16(18);
  if (machine !== EM_RISCV) return fail(`ELF machine is ${machine}, not RISC-V (EM_RISCV = ${EM_RISCV})`);
  const type = u16(16);
  if (type === ET_DYN) return fail('this is a position-independent executable or shared object (ET_DYN); link a static executable (ET_EXEC) with -static and without -pie');
  if (type !== ET_EXEC) return fail(`ELF type is ${type}, not an executable (ET_EXEC = 2); object files (.o) must be linked first`);
  const entry = u32(24);
  const programHeaderOffset = u32(28);
  const sectionHeaderOffset = u32(32);
  const flags = u32(36);
  const programHeaderSize = u16(42);
  const programHeaderCount = u16(44);
  const sectionHeaderSize = u16(46);
  const sectionHeaderCount = u16(48);

  if (programHeaderCount === 0) return fail('the ELF file has no program headers, so there is nothing to load');
  if (programHeaderSize < PROGRAM_HEADER_BYTES) return fail(`program header entries are ${programHeaderSize} bytes; ELF32 needs at least ${PROGRAM_HEADER_BYTES}`);
  const programHeadersEnd = programHeaderOffset + programHeaderCount * programHeaderSize;
  if (programHeadersEnd > bytes.length) {
    return fail(`truncated ELF file: the program headers end at byte ${programHeadersEnd} but the file has ${bytes.length} bytes`);
  }

  const warnings: string[] = [];
  if (flags & 1) warnings.push('the ELF flags allow compressed (C extension) instructions; an RV32I machine stops at the first one');
  if (flags & 6) warnings.push('the ELF flags select a hardware floating-point ABI; RV32I has no floating-point registers');

  const segments: ElfSegment[] = [];
  for (let index = 0; index < programHeaderCount; index++) {
    const at = programHeaderOffset + index * programHeaderSize;
    if (u32(at) !== PT_LOAD) continue;
    const fileOffset = u32(at + 4);
    const address = u32(at + 8);
    const fileBytes = u32(at + 16);
    const memoryBytes = u32(at + 20);
    const segmentFlags = u32(at + 24);
    if (fileOffset + fileBytes > bytes.length) {
      return fail(`truncated ELF file: loadable segment ${index} needs file bytes up to ${fileOffset + fileBytes} but the file has ${bytes.length}`);
    }
    if (memoryBytes < fileBytes) {
      return fail(`loadable segment ${index} is malformed: memory size ${memoryBytes} is smaller than its file size ${fileBytes}`);
    }
    if (address + memoryBytes > 0x100000000) {
      return fail(`loadable segment ${index} at ${hex(address)} with ${memoryBytes} bytes runs past the end of the 32-bit address space`);
    }
    segments.push({
      address,
      fileBytes,
      memoryBytes,
      fileOffset,
      readable: (segmentFlags & 4) !== 0,
      writable: (segmentFlags & 2) !== 0,
      executable: (segmentFlags & 1) !== 0,
    });
  }
  if (segments.length === 0) return fail('the ELF file has no loadable (PT_LOAD) segments');
  const totalMemoryBytes = segments.reduce((sum, s) => sum + s.memoryBytes, 0);
  if (totalMemoryBytes > MAX_LOADED_BYTES) {
    return fail(`the loadable segments need ${totalMemoryBytes} bytes of memory; the simulator accepts at most ${MAX_LOADED_BYTES}`);
  }
  if (entry & 3) warnings.push(`the entry point ${hex(entry)} is not a multiple of 4; RV32I cannot start there`);
  if (!segments.some((s) => s.executable && entry >= s.address && entry < s.address + s.memoryBytes)) {
    warnings.push(`the entry point ${hex(entry)} is not inside an executable segment`);
  }
  const stackBottom = DEFAULT_STACK_POINTER - 0x100000;
  for (const s of segments) {
    if (s.address < DEFAULT_STACK_TOP && s.address + s.memoryBytes > stackBottom) {
      warnings.push(`segment at ${hex(s.address)} overlaps the default stack area ${hex(stackBottom)}..${hex(DEFAULT_STACK_TOP)}`);
    }
  }

  const symbolsResult = readSymbols(bytes, view, sectionHeaderOffset, sectionHeaderSize, sectionHeaderCount, warnings);
  if (typeof symbolsResult === 'string') return fail(symbolsResult);
  return { ok: true, image: { entry, segments, symbols: symbolsResult, warnings } };
}

// Returns the symbols, or an error message. A file without section headers (stripped) has none.
// Every walk is bounded by the file's size: the section headers and the symbol table lie
// inside the file (checked), only the first SHT_SYMTAB section is read (the gABI allows one per
// file), and names come from a StringTable, whose cost is linear in its size.
function readSymbols(bytes: Uint8Array, view: DataView, offset: number, entrySize: number, count: number, warnings: string[]): ElfSymbol[] | string {
  if (offset === 0 || count === 0) return [];
  if (entrySize < SECTION_HEADER_BYTES) return `section header entries are ${entrySize} bytes; ELF32 needs at least ${SECTION_HEADER_BYTES}`;
  if (offset + count * entrySize > bytes.length) {
    return `truncated ELF file: the section headers end at byte ${offset + count * entrySize} but the file has ${bytes.length} bytes`;
  }
  const u32 = (at: number) => view.getUint32(at, true);
  let symbolTable = -1;
  let extraTables = 0;
  for (let index = 0; index < count; index++) {
    if (u32(offset + index * entrySize + 4) !== SHT_SYMTAB) continue;
    if (symbolTable < 0) symbolTable = index;
    else extraTables++;
  }
  if (symbolTable < 0) return [];
  if (extraTables > 0) warnings.push(`the ELF file has ${extraTables + 1} symbol tables (SHT_SYMTAB); the gABI allows one, and only the first is read`);
  const header = offset + symbolTable * entrySize;
  const tableOffset = u32(header + 16);
  const tableBytes = u32(header + 20);
  const stringSection = u32(header + 24);
  if (tableOffset + tableBytes > bytes.length) return `truncated ELF file: the symbol table ends past the end of the file`;
  if (stringSection >= count) return `the symbol table names string section ${stringSection}, which does not exist`;
  const stringHeader = offset + stringSection * entrySize;
  const stringsOffset = u32(stringHeader + 16);
  const stringsEnd = stringsOffset + u32(stringHeader + 20);
  if (stringsEnd > bytes.length) return `truncated ELF file: the symbol names end past the end of the file`;
  const strings = new StringTable(bytes, stringsOffset, stringsEnd);
  if (stringsEnd > stringsOffset && !strings.terminated) warnings.push('the symbol name table does not end with a NUL byte as the gABI requires; its last name may be cut');
  const symbols: ElfSymbol[] = [];
  for (let at = tableOffset; at + SYMBOL_BYTES <= tableOffset + tableBytes; at += SYMBOL_BYTES) {
    const nameOffset = u32(at);
    const sectionIndex = view.getUint16(at + 14, true);
    if (nameOffset === 0 || sectionIndex === 0 || stringsOffset + nameOffset >= stringsEnd) continue;
    const name = strings.nameAt(nameOffset);
    const symbolType = bytes[at + 12]! & 0xf;
    // Local labels such as .L3 and the RISC-V mapping symbols ($x, $d) are not useful as names.
    if (name.startsWith('.L') || name.startsWith('$')) continue;
    symbols.push({ name, address: u32(at + 4), sizeBytes: u32(at + 8), kind: symbolType === 2 ? 'function' : symbolType === 1 ? 'object' : 'other' });
  }
  if (strings.cutNames > 0) warnings.push(`${strings.cutNames} symbol name(s) are longer than ${MAX_SYMBOL_NAME_CHARS} characters and were cut to that length`);
  // A plain comparison: locale-aware ordering costs far more and names are ASCII in practice.
  symbols.sort((a, b) => a.address - b.address || (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  return symbols;
}

const ZERO_PAGE = new Uint8Array(4096);

/** Parses `bytes` and copies every loadable segment into `memory`. */
export function loadElf(bytes: Uint8Array, memory: Memory): ElfResult {
  const parsed = parseElf(bytes);
  if (!parsed.ok) return parsed;
  for (const segment of parsed.image.segments) {
    memory.writeBytes(segment.address, bytes.subarray(segment.fileOffset, segment.fileOffset + segment.fileBytes));
    // The zero fill goes in page-sized pieces so a large .bss does not need one large array.
    for (let done = segment.fileBytes; done < segment.memoryBytes; done += ZERO_PAGE.length) {
      const pieceBytes = Math.min(ZERO_PAGE.length, segment.memoryBytes - done);
      memory.writeBytes(segment.address + done, ZERO_PAGE.subarray(0, pieceBytes));
    }
  }
  return parsed;
}

/** Copies a raw binary image to `address` (e.g. `objcopy -O binary` output or a ROM dump). */
export function loadRaw(bytes: Uint8Array, address: number, memory: Memory): LoadRawResult {
  if (!Number.isInteger(address) || address < 0 || address > 0xffffffff) {
    return fail(`load address ${address} is not a 32-bit unsigned address`);
  }
  if (address + bytes.length > 0x100000000) {
    return fail(`${bytes.length} bytes at ${hex(address)} run past the end of the 32-bit address space`);
  }
  memory.writeBytes(address, bytes);
  return { ok: true, endAddress: address + bytes.length };
}

/** The symbol at or nearest below `address` (a function or object symbol wins over a plain label at the same address). */
export function symbolAt(image: ElfImage, address: number): ElfSymbol | undefined {
  let best: ElfSymbol | undefined;
  for (const symbol of image.symbols) {
    if (symbol.address > address) break;
    if (best && best.address === symbol.address && best.kind !== 'other' && symbol.kind === 'other') continue;
    best = symbol;
  }
  return best;
}
