// Hostile inputs built on purpose, shared by the robustness tests and the robustness benchmark
// (bench/robust.bench.ts), so the benchmark measures exactly the cases the tests bound.
// Each generator's size argument grows the input linearly.

/**
 * A valid RV32I ELF32 executable (one PT_LOAD segment holding `addi x0,x0,0`, then
 * ECALL-free code) whose symbol table has `nSymbols` entries naming offsets near the start of
 * a string table of `nameBytes` bytes that holds no NUL at all: reading each name up to its
 * NUL scans to the end of the table, so a naive reader is quadratic. Layouts from the System V
 * gABI (ELF header 52 bytes, program header 32, section header 40, symbol 16) and the RISC-V
 * psABI (EM_RISCV = 243).
 */
export function unterminatedSymbolsElf(nSymbols: number, nameBytes: number): Uint8Array {
  const code = [0x13, 0x00, 0x00, 0x00];
  const codeAt = 52 + 32;
  const stringsAt = codeAt + code.length;
  const symbolsAt = stringsAt + nameBytes;
  const sectionsAt = symbolsAt + 16 * nSymbols;
  const bytes = new Uint8Array(sectionsAt + 3 * 40);
  const view = new DataView(bytes.buffer);
  bytes.set([0x7f, 0x45, 0x4c, 0x46, 1, 1, 1], 0);
  view.setUint16(16, 2, true); // ET_EXEC
  view.setUint16(18, 243, true); // EM_RISCV
  view.setUint32(20, 1, true);
  view.setUint32(24, 0x10000, true); // entry
  view.setUint32(28, 52, true); // e_phoff
  view.setUint32(32, sectionsAt, true); // e_shoff
  view.setUint16(40, 52, true);
  view.setUint16(42, 32, true);
  view.setUint16(44, 1, true);
  view.setUint16(46, 40, true);
  view.setUint16(48, 3, true); // null, .symtab, .strtab
  view.setUint32(52, 1, true); // PT_LOAD
  view.setUint32(56, codeAt, true);
  view.setUint32(60, 0x10000, true);
  view.setUint32(64, 0x10000, true);
  view.setUint32(68, code.length, true);
  view.setUint32(72, code.length, true);
  view.setUint32(76, 5, true); // R + X
  bytes.set(code, codeAt);
  bytes.fill(0x41, stringsAt, symbolsAt); // 'A' ... with no terminating NUL
  for (let i = 0; i < nSymbols; i++) {
    const at = symbolsAt + 16 * i;
    view.setUint32(at, 1 + (i % Math.max(1, nameBytes - 1)), true); // st_name
    view.setUint32(at + 4, 0x10000 + 4 * i, true); // st_value
    bytes[at + 12] = 2; // STT_FUNC
    view.setUint16(at + 14, 1, true); // st_shndx
  }
  const section = (index: number, type: number, offset: number, size: number, link: number) => {
    const at = sectionsAt + 40 * index;
    view.setUint32(at + 4, type, true);
    view.setUint32(at + 16, offset, true);
    view.setUint32(at + 20, size, true);
    view.setUint32(at + 24, link, true);
  };
  section(1, 2, symbolsAt, 16 * nSymbols, 2); // SHT_SYMTAB, names in section 2
  section(2, 3, stringsAt, nameBytes, 0); // SHT_STRTAB
  return bytes;
}

export type MapRowKind = 'overlapping' | 'distinct' | 'scattered';

/**
 * A table with one decode map of `nRows` rows over 16 instruction bits, used by a step:
 * `overlapping` rows are all don't-cares with alternating values (every row overlaps the
 * first rows); `distinct` rows fix every bit to a different value (nothing overlaps; one
 * pattern shape); `scattered` rows have pseudo-random don't-cares (thousands of shapes, the
 * worst case for grouping).
 */
export function bigMapTable(nRows: number, kind: MapRowKind): string {
  const width = 16;
  let seed = 12345;
  const random = () => ((seed = (seed * 1103515245 + 12345) >>> 0) >>> 16) / 65536;
  const rows: string[] = [];
  for (let i = 0; i < nRows; i++) {
    const value = i % 2 ? 'sub' : 'add';
    let pattern: string;
    if (kind === 'overlapping') pattern = '-'.repeat(width);
    else if (kind === 'distinct') pattern = (i % 2 ** width).toString(2).padStart(width, '0');
    else pattern = Array.from({ length: width }, () => (random() < 0.5 ? '-' : random() < 0.5 ? '0' : '1')).join('');
    rows.push(`  ${pattern} ${value}`);
  }
  return [
    'bus left 32',
    'bus right 32',
    'bus result 32',
    'part ir instruction 32',
    'part a register 32',
    'part b register 32',
    'part alu alu left right',
    'strobe a.oe   enable a -> left',
    'strobe b.oe   enable b -> right',
    'strobe alu.oe enable alu -> result',
    'strobe a.ck   clock result -> a',
    'strobe ir.ck  clock result -> ir',
    'strobe done   end',
    'field alu.fn 4 -> alu { add=0 sub=8 }',
    'word 16 as 2 x 8',
    '  a.oe 0  b.oe 1  alu.oe 2  a.ck 3  alu.fn 4..7  done 8  ir.ck 9',
    'address 1',
    '  step 0',
    'map fn (ir[31:16]) -> alu.fn',
    ...rows,
    'class OP opcode=0110011',
    '  0: a.oe, b.oe, alu.fn=fn, alu.oe, a.ck, ir.ck, done',
    '',
  ].join('\n');
}

/**
 * The demo table (given as text) with a store of 24 address lines, the most the notation
 * allows: eleven more instruction bits on the address (16 777 216 words per chip), no chip
 * part number (a 28C64 would be too small), and `suffix` appended to every class name, which
 * lengthens every listing line (with 70 characters the listing passes 2^29 bytes, beyond what one
 * JavaScript string can hold).
 */
export function store24Table(demo: string, suffix = ''): string {
  return demo
    .replace('address 13\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12', 'address 24\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12   ir[25:15] 13..23')
    .replace(' chip=28C64', '')
    .replace(/^class ([A-Z-]+) /gm, `class $1${suffix} `);
}
