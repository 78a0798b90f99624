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
