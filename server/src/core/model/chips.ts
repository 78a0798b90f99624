// Control-store memory chips the word layout can name, with their organisation. Figures are
// the organisations printed in the manufacturers' data sheets for each part number (28C64
// 8K x 8, 28C256 32K x 8, 27C512 64K x 8, 39SF010/020/040 128K/256K/512K x 8); 28C16, 27C64,
// 27C256 and 27C010 are from memory of the same families' data sheets. Any other chip is
// written as `DEPTHxWIDTH`, e.g. `chip=8192x8`.
import type { ChipType } from './types';

const known: ChipType[] = [
  { name: '28C16', depth: 2048, width: 8 },
  { name: '28C64', depth: 8192, width: 8 },
  { name: '28C256', depth: 32768, width: 8 },
  { name: '27C64', depth: 8192, width: 8 },
  { name: '27C256', depth: 32768, width: 8 },
  { name: '27C512', depth: 65536, width: 8 },
  { name: '27C010', depth: 131072, width: 8 },
  { name: '39SF010', depth: 131072, width: 8 },
  { name: '39SF020', depth: 262144, width: 8 },
  { name: '39SF040', depth: 524288, width: 8 },
];

export const knownChipNames = known.map((c) => c.name);

/** Looks up a chip by part number (any case) or `DEPTHxWIDTH`. */
export function chipType(text: string): ChipType | undefined {
  const upper = text.toUpperCase();
  const found = known.find((c) => c.name === upper);
  if (found) return found;
  const m = /^([0-9]+)X([0-9]+)$/.exec(upper);
  if (m) {
    const depth = parseInt(m[1], 10);
    const width = parseInt(m[2], 10);
    if (depth > 0 && width > 0 && width <= 32) return { name: `${depth}x${width}`, depth, width };
  }
  return undefined;
}
