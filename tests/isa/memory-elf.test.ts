// Checks SparseMemory (little-endian byte order as RISC-V specifies in the Unprivileged ISA
// 20191213 section 1.4, "Memory", page crossings, address wrap-around) and the ELF loader's
// header checks against the ELF layout of the System V gABI (ELF header 52 bytes, program
// header 32 bytes for ELFCLASS32) and the RISC-V psABI (EM_RISCV = 243). The files here are
// built by hand byte by byte; real toolchain output is loaded in tests/outside/programs-qemu.test.ts.
import { describe, expect, it } from 'vitest';
import { SparseMemory } from '../../server/src/core/isa/memory';
import { DEFAULT_STACK_POINTER, loadElf, loadRaw, parseElf, symbolAt } from '../../server/src/core/isa/elf';
import { unterminatedSymbolsElf } from '../support/hostile';

describe('SparseMemory', () => {
  it('stores words little-endian (spec 1.4: RISC-V memory is little-endian)', () => {
    const memory = new SparseMemory();
    memory.store32(0x2000, 0x11223344);
    expect([0, 1, 2, 3].map((i) => memory.load8(0x2000 + i))).toEqual([0x44, 0x33, 0x22, 0x11]);
    expect(memory.load16(0x2002)).toBe(0x1122);
    expect(memory.load32(0x2000)).toBe(0x11223344);
  });

  it('load32 returns a signed value, load8/load16 unsigned', () => {
    const memory = new SparseMemory();
    memory.store32(0x10, 0xfffefdfc);
    expect(memory.load32(0x10)).toBe(-0x10204);
    expect(memory.load16(0x10)).toBe(0xfdfc);
    expect(memory.load8(0x13)).toBe(0xff);
  });

  it('misaligned accesses across a page boundary touch both pages', () => {
    const memory = new SparseMemory();
    memory.store32(0x0ffe, 0xaabbccdd);
    expect(memory.pageAddresses()).toEqual([0x0000, 0x1000]);
    expect(memory.load8(0x0ffe)).toBe(0xdd);
    expect(memory.load8(0x1001)).toBe(0xaa);
    expect(memory.load32(0x0ffe) >>> 0).toBe(0xaabbccdd);
    memory.store16(0x1fff, 0x1234);
    expect(memory.load16(0x1fff)).toBe(0x1234);
    expect(memory.load8(0x2000)).toBe(0x12);
  });

  it('addresses wrap modulo 2^32', () => {
    const memory = new SparseMemory();
    memory.store32(0xfffffffe, 0x04030201);
    expect(memory.load8(0xfffffffe)).toBe(0x01);
    expect(memory.load8(0xffffffff)).toBe(0x02);
    expect(memory.load8(0)).toBe(0x03);
    expect(memory.load8(1)).toBe(0x04);
    expect(memory.load32(0xfffffffe)).toBe(0x04030201);
  });

  it('reading unwritten memory gives zeros and allocates nothing', () => {
    const memory = new SparseMemory();
    expect(memory.load32(0x12345678)).toBe(0);
    expect(memory.readBytes(0x7ffff000, 8192)).toEqual(new Uint8Array(8192));
    expect(memory.mappedBytes).toBe(0);
    memory.store8(0x12345678, 1);
    expect(memory.mappedBytes).toBe(4096);
  });

  it('readBytes/writeBytes span pages; clone is independent', () => {
    const memory = new SparseMemory();
    const bytes = Uint8Array.from({ length: 10000 }, (_, i) => (i * 7) & 0xff);
    memory.writeBytes(0x3ff0, bytes);
    expect(memory.readBytes(0x3ff0, 10000)).toEqual(bytes);
    const copy = memory.clone();
    copy.store8(0x3ff0, 0xee);
    expect(memory.load8(0x3ff0)).toBe(0);
    expect(copy.load8(0x3ff0)).toBe(0xee);
  });
});

/** A minimal ELF32 RISC-V executable: header, one PT_LOAD program header, then the segment bytes. */
function makeElf(options: { code?: number[]; memoryBytes?: number; address?: number; entry?: number } = {}): Uint8Array {
  const code = options.code ?? [0x13, 0x00, 0x00, 0x00]; // addi x0,x0,0
  const segmentOffset = 52 + 32;
  const bytes = new Uint8Array(segmentOffset + code.length);
  const view = new DataView(bytes.buffer);
  bytes.set([0x7f, 0x45, 0x4c, 0x46, 1, 1, 1], 0); // magic, ELFCLASS32, ELFDATA2LSB, EV_CURRENT
  view.setUint16(16, 2, true); // e_type ET_EXEC
  view.setUint16(18, 243, true); // e_machine EM_RISCV
  view.setUint32(20, 1, true); // e_version
  view.setUint32(24, options.entry ?? options.address ?? 0x10000, true); // e_entry
  view.setUint32(28, 52, true); // e_phoff
  view.setUint16(40, 52, true); // e_ehsize
  view.setUint16(42, 32, true); // e_phentsize
  view.setUint16(44, 1, true); // e_phnum
  view.setUint32(52, 1, true); // p_type PT_LOAD
  view.setUint32(56, segmentOffset, true); // p_offset
  view.setUint32(60, options.address ?? 0x10000, true); // p_vaddr
  view.setUint32(64, options.address ?? 0x10000, true); // p_paddr
  view.setUint32(68, code.length, true); // p_filesz
  view.setUint32(72, options.memoryBytes ?? code.length, true); // p_memsz
  view.setUint32(76, 5, true); // p_flags R+X
  view.setUint32(80, 0x1000, true); // p_align
  bytes.set(code, segmentOffset);
  return bytes;
}

function patched(bytes: Uint8Array, patch: (view: DataView, bytes: Uint8Array) => void): Uint8Array {
  const copy = bytes.slice();
  patch(new DataView(copy.buffer), copy);
  return copy;
}

describe('ELF loader', () => {
  it('loads a well-formed file: entry, segment, bytes in memory, .bss zeroed', () => {
    const elf = makeElf({ code: [0x93, 0x00, 0x50, 0x00], memoryBytes: 16 }); // addi x1,x0,5
    const memory = new SparseMemory();
    memory.store32(0x10004, 0xffffffff); // the zero fill must overwrite earlier contents
    const result = loadElf(elf, memory);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.image.entry).toBe(0x10000);
    expect(result.image.segments).toEqual([{ address: 0x10000, fileBytes: 4, memoryBytes: 16, fileOffset: 84, readable: true, writable: false, executable: true }]);
    expect(result.image.warnings).toEqual([]);
    expect(memory.load32(0x10000)).toBe(0x00500093);
    expect(memory.load32(0x10004)).toBe(0);
  });

  const cases: [string, Uint8Array, string][] = [
    ['not ELF', new Uint8Array([0x4d, 0x5a, 0x90, 0]), 'not an ELF file: it does not start with the bytes 7f 45 4c 46 ("\\x7fELF")'],
    ['truncated header', makeElf().subarray(0, 40), 'truncated ELF file: 40 bytes, but an ELF32 header alone needs 52'],
    ['ELFCLASS64', patched(makeElf(), (_v, b) => (b[4] = 2)), 'this is a 64-bit ELF file (ELFCLASS64); an RV32I program must be linked as ELFCLASS32 (-march=rv32i -mabi=ilp32)'],
    ['big-endian', patched(makeElf(), (_v, b) => (b[5] = 2)), 'this ELF file is big-endian (ELFDATA2MSB); RISC-V executables are little-endian (ELFDATA2LSB)'],
    ['x86-64 machine (62)', patched(makeElf(), (v) => v.setUint16(18, 62, true)), 'ELF machine is 62, not RISC-V (EM_RISCV = 243)'],
    ['relocatable object', patched(makeElf(), (v) => v.setUint16(16, 1, true)), 'ELF type is 1, not an executable (ET_EXEC = 2); object files (.o) must be linked first'],
    ['position-independent', patched(makeElf(), (v) => v.setUint16(16, 3, true)), 'this is a position-independent executable or shared object (ET_DYN); link a static executable (ET_EXEC) with -static and without -pie'],
    ['program headers past the end', patched(makeElf(), (v) => v.setUint16(44, 4, true)), 'truncated ELF file: the program headers end at byte 180 but the file has 88 bytes'],
    ['segment past the end', makeElf().subarray(0, 86), 'truncated ELF file: loadable segment 0 needs file bytes up to 88 but the file has 86'],
    ['memsz < filesz', makeElf({ memoryBytes: 2 }), 'loadable segment 0 is malformed: memory size 2 is smaller than its file size 4'],
    ['no PT_LOAD', patched(makeElf(), (v) => v.setUint32(52, 4, true)), 'the ELF file has no loadable (PT_LOAD) segments'],
    ['beyond 4 GiB', makeElf({ address: 0xfffffffe }), 'loadable segment 0 at 0xfffffffe with 4 bytes runs past the end of the 32-bit address space'],
  ];
  it.each(cases)('rejects %s with a clear message', (_label, bytes, error) => {
    const memory = new SparseMemory();
    expect(loadElf(bytes, memory)).toEqual({ ok: false, error });
    expect(memory.mappedBytes).toBe(0);
  });

  it('warns about a misaligned entry point and the compressed-instruction flag but still parses', () => {
    const result = parseElf(patched(makeElf({ entry: 0x10002 }), (v) => v.setUint32(36, 1, true)));
    expect(result.ok && result.image.warnings).toEqual([
      'the ELF flags allow compressed (C extension) instructions; an RV32I machine stops at the first one',
      'the entry point 0x10002 is not a multiple of 4; RV32I cannot start there',
    ]);
  });

  it('has no symbols without section headers, and symbolAt copes', () => {
    const result = parseElf(makeElf());
    expect(result.ok && result.image.symbols).toEqual([]);
    if (result.ok) expect(symbolAt(result.image, 0x10000)).toBeUndefined();
  });

  it('loadRaw places bytes and rejects images that run past 4 GiB', () => {
    const memory = new SparseMemory();
    expect(loadRaw(new Uint8Array([1, 2, 3]), 0x400, memory)).toEqual({ ok: true, endAddress: 0x403 });
    expect(memory.load8(0x402)).toBe(3);
    expect(loadRaw(new Uint8Array(8), 0xfffffffc, memory)).toEqual({ ok: false, error: '8 bytes at 0xfffffffc run past the end of the 32-bit address space' });
    expect(loadRaw(new Uint8Array(1), -1, memory)).toEqual({ ok: false, error: 'load address -1 is not a 32-bit unsigned address' });
  });

  it('the default stack pointer is 16-byte aligned (RISC-V psABI: sp aligned to 16 at calls)', () => {
    expect(DEFAULT_STACK_POINTER % 16).toBe(0);
  });
});

describe('ELF symbol names from a hostile file', () => {
  it('reads an unterminated name table in one pass: names cut at 1024 characters, warnings, every symbol kept', () => {
    const result = parseElf(unterminatedSymbolsElf(2000, 100_000));
    if (!result.ok) throw new Error(result.error);
    expect(result.image.symbols).toHaveLength(2000);
    expect(result.image.symbols[0]).toEqual({ name: 'A'.repeat(1024), address: 0x10000, sizeBytes: 0, kind: 'function' });
    expect(result.image.warnings).toContain('the symbol name table does not end with a NUL byte as the gABI requires; its last name may be cut');
    expect(result.image.warnings).toContain('2000 symbol name(s) are longer than 1024 characters and were cut to that length');
  });
});
