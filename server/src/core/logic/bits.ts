// Small bit-twiddling helpers shared by the logic modules (population count, lowest set bit).
// It is deliberately not a general bitset class: the modules keep their own typed arrays.

/** Number of set bits in the low 32 bits of `value`. */
export function popcount(value: number): number {
  let v = value - ((value >>> 1) & 0x55555555);
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
  return (((v + (v >>> 4)) & 0x0f0f0f0f) * 0x01010101) >>> 24;
}

/** Index of the lowest set bit of a non-zero 32-bit value. */
export function lowestBitIndex(value: number): number {
  return 31 - Math.clz32(value & -value);
}

/** Indexes of the set bits of a 32-bit value, lowest first. */
export function bitIndexes(value: number): number[] {
  const indexes: number[] = [];
  let rest = value;
  while (rest !== 0) {
    indexes.push(lowestBitIndex(rest));
    rest &= rest - 1;
  }
  return indexes;
}

/** A mask with the low `nBits` bits set (nBits from 0 to 32). */
export function lowMask(nBits: number): number {
  return nBits >= 32 ? -1 : (1 << nBits) - 1;
}
