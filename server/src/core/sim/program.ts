// Loading a program for the simulator: an ELF32 little-endian RISC-V executable (through the ISA
// layer's loadElf) or a raw binary image copied to a load address, which is also its entry
// point. The result is one SparseMemory; lock-step runs clone it so the table's machine and the
// reference machine each get their own copy of the same image.
//
// Deliberately not here: reading files (the CLI and the language server pass bytes) and
// choosing the initial sp (the machines do that, as createReferenceMachine does).
import { loadElf, loadRaw, type ElfImage } from '../isa/elf';
import { SparseMemory } from '../isa/memory';

export interface LoadedProgram {
  memory: SparseMemory;
  entry: number;
  /** The ELF image (symbols, segments) when the program was an ELF file. */
  image?: ElfImage;
  /** Warnings from the loader worth showing (compressed-instruction flags and the like). */
  warnings: readonly string[];
}

export type LoadProgramResult = { ok: true; program: LoadedProgram } | { ok: false; error: string };

function isElf(bytes: Uint8Array): boolean {
  return bytes.length >= 4 && bytes[0] === 0x7f && bytes[1] === 0x45 && bytes[2] === 0x4c && bytes[3] === 0x46;
}

/**
 * Loads `bytes`: an ELF executable when it starts with the ELF magic, else a raw image that
 * needs `loadAddress`. Giving a load address for an ELF file is refused (the file says where
 * its segments go).
 */
export function loadProgram(bytes: Uint8Array, loadAddress?: number): LoadProgramResult {
  const memory = new SparseMemory();
  if (isElf(bytes)) {
    if (loadAddress !== undefined) return { ok: false, error: 'this is an ELF file, which says itself where it loads; --load-address is for raw binary images' };
    const loaded = loadElf(bytes, memory);
    if (!loaded.ok) return loaded;
    return { ok: true, program: { memory, entry: loaded.image.entry, image: loaded.image, warnings: loaded.image.warnings } };
  }
  if (loadAddress === undefined) {
    return { ok: false, error: 'the program is not an ELF file (it does not start with 7f 45 4c 46); for a raw binary image give the address it loads and starts at with --load-address' };
  }
  if (bytes.length === 0) return { ok: false, error: 'the raw image is empty' };
  if (loadAddress % 4 !== 0) return { ok: false, error: `load address 0x${loadAddress.toString(16)} is not a multiple of 4; RV32I instructions are 4-byte aligned` };
  const loaded = loadRaw(bytes, loadAddress, memory);
  if (!loaded.ok) return loaded;
  return { ok: true, program: { memory, entry: loadAddress, warnings: [] } };
}
