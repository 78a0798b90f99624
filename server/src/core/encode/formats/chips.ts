// Cuts a store's control words into per-chip images: chip 0 takes the least significant
// chipWidths[0] bits of every word, chip 1 the next chipWidths[1] bits, and so on, which is
// how the data lines of several ROMs side by side make up one wide word. It reads the
// encoder's word layout (word w's bit b is bit b&31 of words[w*lanes + (b>>5)]) and decides
// nothing about which signal sits in which bit.
import { ImageFormatError, allocateWords, isChipWidth, type ChipImage } from './image';

/**
 * One image per chip, in chip order. A chip whose bits reach past the stored lanes gets 0 in
 * those bits; callers normally make the chip widths add up to the word width exactly.
 */
export function splitWordsIntoChips(words: Uint32Array, lanes: number, chipWidths: readonly number[]): ChipImage[] {
  if (!Number.isInteger(lanes) || lanes < 1) throw new ImageFormatError(`a word needs at least one 32-bit lane, not ${lanes}`);
  if (words.length % lanes !== 0) {
    throw new ImageFormatError(`${words.length} lane values is not a whole number of ${lanes}-lane words`);
  }
  const nWords = words.length / lanes;
  const images: ChipImage[] = [];
  let lowBit = 0;
  for (const widthBits of chipWidths) {
    if (!isChipWidth(widthBits)) throw new ImageFormatError(`chip width ${widthBits} bits is not supported (use 8, 16 or 32)`);
    const out = allocateWords(widthBits, nWords);
    const laneIndex = lowBit >>> 5;
    const shift = lowBit & 31;
    const mask = widthBits === 32 ? 0xffffffff : (1 << widthBits) - 1;
    const spills = shift + widthBits > 32 && laneIndex + 1 < lanes;
    if (laneIndex < lanes) {
      for (let address = 0, base = laneIndex; address < nWords; address++, base += lanes) {
        let value = words[base]! >>> shift;
        if (spills) value |= words[base + 1]! << (32 - shift);
        out[address] = (value & mask) >>> 0;
      }
    }
    images.push({ widthBits, words: out });
    lowBit += widthBits;
  }
  return images;
}
