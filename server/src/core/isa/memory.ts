// Byte-addressed, little-endian memory over the full 32-bit address space, as an RV32I hart
// sees it, plus `SparseMemory`, an implementation that only stores the 4 KiB pages that have
// been written. Unwritten memory reads as zero. Loads and stores of any alignment work and are
// performed byte by byte when they are misaligned or cross a page, the way qemu's user-mode
// emulation performs them; addresses wrap modulo 2^32.
//
// Deliberately not here: protection, memory-mapped devices, access faults. A program that
// strays into unmapped memory reads zeros (and word 0 is an illegal instruction, so runaway
// execution stops quickly) instead of getting the segmentation fault it would get under Linux.
//
// Public API:
//   interface Memory          load8/load16/load32, store8/store16/store32, readBytes, writeBytes
//   class SparseMemory        the fast implementation; also clone(), pageAddresses(), mappedBytes,
//                             wordsOfPage() (live word view of a page, for fast instruction fetch)
//   PAGE_SIZE_BYTES           4096
//   interface MemoryWrite     { address, size, value } record of one store, used by step()

export interface Memory {
  /** Unsigned byte 0..255. */
  load8(address: number): number;
  /** Unsigned halfword 0..65535, little-endian, any alignment. */
  load16(address: number): number;
  /** Word as a signed 32-bit integer, little-endian, any alignment. */
  load32(address: number): number;
  /** Stores the low 8 bits of `value`. */
  store8(address: number, value: number): void;
  /** Stores the low 16 bits of `value`, little-endian. */
  store16(address: number, value: number): void;
  /** Stores 32 bits of `value`, little-endian. */
  store32(address: number, value: number): void;
  /** Copies `lengthBytes` bytes starting at `address` (wrapping at 2^32) into a new array. */
  readBytes(address: number, lengthBytes: number): Uint8Array;
  /** Writes `bytes` starting at `address` (wrapping at 2^32). */
  writeBytes(address: number, bytes: Uint8Array): void;
}

/** One store as the interpreter reports it: `size` in bytes, `value` masked to that size, unsigned. */
export interface MemoryWrite {
  readonly address: number;
  readonly size: 1 | 2 | 4;
  readonly value: number;
}

export const PAGE_SIZE_BYTES = 4096;
const PAGE_SHIFT = 12;
const OFFSET_MASK = PAGE_SIZE_BYTES - 1;
// A small direct-mapped cache of page lookups sits in front of the Map: code, stack and data
// pages stay cached together, so the hot path is two array reads instead of a hash lookup.
const CACHE_SLOTS = 256;
const EMPTY_BYTES = new Uint8Array(0);
const EMPTY_WORDS = new Int32Array(0);
// Word views are only used when the host stores an Int32Array little-endian, like RISC-V memory.
const LITTLE_ENDIAN_HOST = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;

export class SparseMemory implements Memory {
  private readonly pages = new Map<number, Uint8Array>();
  private readonly cacheTags = new Int32Array(CACHE_SLOTS).fill(-1);
  private readonly cachePages: Uint8Array[] = new Array<Uint8Array>(CACHE_SLOTS).fill(EMPTY_BYTES);
  // Word views of the same pages: an aligned word access is then one typed-array read.
  private readonly cacheWords: Int32Array[] = new Array<Int32Array>(CACHE_SLOTS).fill(EMPTY_WORDS);

  /** Page holding `address` if it has been written, else undefined. */
  private pageIfMapped(address: number): Uint8Array | undefined {
    const index = address >>> PAGE_SHIFT;
    const slot = index & (CACHE_SLOTS - 1);
    if (this.cacheTags[slot] === index) return this.cachePages[slot];
    const page = this.pages.get(index);
    if (page) this.cache(index, page);
    return page;
  }

  private cache(index: number, page: Uint8Array): void {
    const slot = index & (CACHE_SLOTS - 1);
    this.cacheTags[slot] = index;
    this.cachePages[slot] = page;
    this.cacheWords[slot] = new Int32Array(page.buffer, page.byteOffset, PAGE_SIZE_BYTES / 4);
  }

  private pageForWrite(address: number): Uint8Array {
    const found = this.pageIfMapped(address);
    if (found) return found;
    const index = address >>> PAGE_SHIFT;
    const page = new Uint8Array(PAGE_SIZE_BYTES);
    this.pages.set(index, page);
    this.cache(index, page);
    return page;
  }

  /**
   * The page holding `address` as 1024 words, for instruction fetch; undefined when the page was
   * never written or the host is big-endian (then the word view would have the wrong byte order).
   * The array is the live backing store, so later stores (self-modifying code) are visible.
   */
  wordsOfPage(address: number): Int32Array | undefined {
    if (!LITTLE_ENDIAN_HOST) return undefined;
    const index = address >>> PAGE_SHIFT;
    const slot = index & (CACHE_SLOTS - 1);
    if (this.cacheTags[slot] === index) return this.cacheWords[slot];
    const page = this.pages.get(index);
    if (!page) return undefined;
    this.cache(index, page);
    return this.cacheWords[slot];
  }

  load8(address: number): number {
    const page = this.pageIfMapped(address);
    return page ? page[address & OFFSET_MASK]! : 0;
  }

  load16(address: number): number {
    const offset = address & OFFSET_MASK;
    if (offset <= PAGE_SIZE_BYTES - 2) {
      const page = this.pageIfMapped(address);
      return page ? page[offset]! | (page[offset + 1]! << 8) : 0;
    }
    return this.load8(address) | (this.load8((address + 1) >>> 0) << 8);
  }

  load32(address: number): number {
    if ((address & 3) === 0 && LITTLE_ENDIAN_HOST) {
      const index = address >>> PAGE_SHIFT;
      const slot = index & (CACHE_SLOTS - 1);
      if (this.cacheTags[slot] === index) return this.cacheWords[slot]![(address & OFFSET_MASK) >>> 2]!;
    }
    const offset = address & OFFSET_MASK;
    if (offset <= PAGE_SIZE_BYTES - 4) {
      const page = this.pageIfMapped(address);
      return page ? page[offset]! | (page[offset + 1]! << 8) | (page[offset + 2]! << 16) | (page[offset + 3]! << 24) : 0;
    }
    return (
      this.load8(address) |
      (this.load8((address + 1) >>> 0) << 8) |
      (this.load8((address + 2) >>> 0) << 16) |
      (this.load8((address + 3) >>> 0) << 24)
    );
  }

  store8(address: number, value: number): void {
    this.pageForWrite(address)[address & OFFSET_MASK] = value;
  }

  store16(address: number, value: number): void {
    const offset = address & OFFSET_MASK;
    if (offset <= PAGE_SIZE_BYTES - 2) {
      const page = this.pageForWrite(address);
      page[offset] = value;
      page[offset + 1] = value >>> 8;
      return;
    }
    this.store8(address, value);
    this.store8((address + 1) >>> 0, value >>> 8);
  }

  store32(address: number, value: number): void {
    if ((address & 3) === 0 && LITTLE_ENDIAN_HOST) {
      const index = address >>> PAGE_SHIFT;
      const slot = index & (CACHE_SLOTS - 1);
      if (this.cacheTags[slot] === index) {
        this.cacheWords[slot]![(address & OFFSET_MASK) >>> 2] = value;
        return;
      }
    }
    const offset = address & OFFSET_MASK;
    if (offset <= PAGE_SIZE_BYTES - 4) {
      const page = this.pageForWrite(address);
      page[offset] = value;
      page[offset + 1] = value >>> 8;
      page[offset + 2] = value >>> 16;
      page[offset + 3] = value >>> 24;
      return;
    }
    this.store8(address, value);
    this.store8((address + 1) >>> 0, value >>> 8);
    this.store8((address + 2) >>> 0, value >>> 16);
    this.store8((address + 3) >>> 0, value >>> 24);
  }

  readBytes(address: number, lengthBytes: number): Uint8Array {
    const out = new Uint8Array(lengthBytes);
    let done = 0;
    while (done < lengthBytes) {
      const at = (address + done) >>> 0;
      const offset = at & OFFSET_MASK;
      const chunk = Math.min(PAGE_SIZE_BYTES - offset, lengthBytes - done);
      const page = this.pageIfMapped(at);
      if (page) out.set(page.subarray(offset, offset + chunk), done);
      done += chunk;
    }
    return out;
  }

  writeBytes(address: number, bytes: Uint8Array): void {
    let done = 0;
    while (done < bytes.length) {
      const at = (address + done) >>> 0;
      const offset = at & OFFSET_MASK;
      const chunk = Math.min(PAGE_SIZE_BYTES - offset, bytes.length - done);
      this.pageForWrite(at).set(bytes.subarray(done, done + chunk), offset);
      done += chunk;
    }
  }

  /** Base addresses of the pages that hold written data, ascending. */
  pageAddresses(): number[] {
    return [...this.pages.keys()].sort((a, b) => a - b).map((index) => (index << PAGE_SHIFT) >>> 0);
  }

  /** Bytes of backing store in use (pages times 4 KiB). */
  get mappedBytes(): number {
    return this.pages.size * PAGE_SIZE_BYTES;
  }

  /** An independent copy, e.g. to load a program once and run it on two machines in lock-step. */
  clone(): SparseMemory {
    const copy = new SparseMemory();
    for (const [index, page] of this.pages) copy.pages.set(index, page.slice());
    return copy;
  }
}
