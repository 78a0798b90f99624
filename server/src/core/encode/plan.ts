// Plans a build: which files to write for which stores and chips, with their contents
// (chip images, listings). Pure; the CLI and the language server hand the plan to the safe
// output writer. Chips narrower than 8, 16 or 32 bits are padded to the next of those widths
// in the files (the unused high data bits are 0), since the formats carry whole bytes.
import type { Machine, Store } from '../model/types';
import { encodeMachine, type EncodedMachine, type EncodedStore } from './encoder';
import { type ChipImage, type ChipWidth, type ImageFormatName, type ImageWriteOptions, imageFormats } from './formats';
import { listingChunks } from './listing';

export type BuildFormat = ImageFormatName | 'list';
export const buildFormats: BuildFormat[] = ['ihex', 'srec', 'bin', 'memh', 'list'];

export interface PlannedImage {
  kind: 'image';
  name: string;
  format: ImageFormatName;
  store: string;
  chip: number;
  image: ChipImage;
  /** What the writer puts in the file's own header: the source file (S0 record, `$readmemh` comment), the store and chip. */
  options: ImageWriteOptions;
}

export interface PlannedText {
  kind: 'text';
  name: string;
  format: 'list';
  store: string;
  /** The text, made chunk by chunk when asked for (a listing can be larger than memory). */
  chunks: () => Iterable<string>;
}

export type PlannedFile = PlannedImage | PlannedText;

export interface StoreSummary {
  store: string;
  addressBits: number;
  wordBits: number;
  chipWidths: number[];
  chipName?: string;
  usedWords: number;
  fillWords: number;
}

export interface BuildPlan {
  files: PlannedFile[];
  stores: StoreSummary[];
  encoded: EncodedMachine;
  /** Plain-language reasons nothing could be planned for a store. */
  problems: string[];
}

export interface PlanOptions {
  /** File name stem, usually the source file's name without `.pwt`. */
  stem: string;
  /** The source file's name as the headers of the files show it (listing, S0 record, `$readmemh`). */
  source: string;
  formats?: BuildFormat[];
  stores?: string[];
}

export function paddedWidth(width: number): ChipWidth {
  return width <= 8 ? 8 : width <= 16 ? 16 : 32;
}

export function chipImagesOf(enc: EncodedStore): ChipImage[] {
  const nWords = enc.words.length / enc.lanes;
  const images: ChipImage[] = [];
  let low = 0;
  for (const width of enc.store.word!.chipWidths) {
    const widthBits = paddedWidth(width);
    const words = widthBits === 8 ? new Uint8Array(nWords) : widthBits === 16 ? new Uint16Array(nWords) : new Uint32Array(nWords);
    const lane = low >>> 5;
    const shift = low & 31;
    const spills = shift + width > 32 && lane + 1 < enc.lanes;
    const mask = width >= 32 ? 0xffffffff : 2 ** width - 1;
    for (let address = 0, base = lane; address < nWords; address++, base += enc.lanes) {
      let value = enc.words[base] >>> shift;
      if (spills) value |= enc.words[base + 1] << (32 - shift);
      words[address] = (value & mask) >>> 0;
    }
    images.push({ widthBits, words });
    low += width;
  }
  return images;
}

/** `7..0`: the word bits a chip holds, high first. */
function bitRange(chipWidths: readonly number[], chip: number): string {
  const low = chipWidths.slice(0, chip).reduce((a, b) => a + b, 0);
  return `${low + chipWidths[chip] - 1}..${low}`;
}

export function planBuild(machine: Machine, options: PlanOptions): BuildPlan {
  const formats = options.formats ?? buildFormats;
  const problems: string[] = [];
  const wanted = machine.stores.filter((s) => !options.stores || options.stores.includes(s.name));
  for (const s of wanted) {
    if (!s.word) problems.push(`store ${s.name} has no word layout`);
    if (!s.address) problems.push(`store ${s.name} has no address layout`);
  }
  // Stores whose fields feed a wanted store's address lines are encoded too (not written): the
  // listing reads their words to tell which addresses the hardware really forms.
  const feeding = new Set(wanted.map((s) => s.name));
  for (const s of wanted) {
    for (const source of s.address?.sources ?? []) {
      if (source.input.kind !== 'field') continue;
      const name = source.input.name;
      const holder = machine.stores.find((other) => other.word?.placements.some((p) => p.signal === name));
      if (holder) feeding.add(holder.name);
    }
  }
  const encoded = encodeMachine(machine, { stores: [...feeding] });
  if (encoded.stores.length === 0 && wanted.length > 0 && problems.length === 0) {
    problems.push(`the address inputs of all stores together take ${encoded.universe.bits} bits; Phasewright encodes up to 24`);
  }
  const files: PlannedFile[] = [];
  const stores: StoreSummary[] = [];
  for (const enc of encoded.stores) {
    if (!wanted.includes(enc.store)) continue;
    const store: Store = enc.store;
    // Chip images only when an image format is wanted (the listing reads the encoded store).
    const images = formats.some((f) => f !== 'list') ? chipImagesOf(enc) : [];
    stores.push({
      store: store.name,
      addressBits: enc.addressBits,
      wordBits: enc.wordBits,
      chipWidths: store.word!.chipWidths,
      chipName: store.word!.chip?.name,
      usedWords: enc.usedCount,
      fillWords: 2 ** enc.addressBits - enc.usedCount,
    });
    for (const format of formats) {
      if (format === 'list') {
        files.push({ kind: 'text', name: `${options.stem}.${store.name}.lst`, format: 'list', store: store.name, chunks: () => listingChunks(machine, encoded, enc, { source: options.source }) });
        continue;
      }
      images.forEach((image, chip) => {
        const description = `store ${store.name}, chip ${chip} of ${images.length} (bits ${bitRange(store.word!.chipWidths, chip)} of the ${enc.wordBits}-bit word)`;
        files.push({
          kind: 'image',
          name: `${options.stem}.${store.name}.chip${chip}${imageFormats[format].extension}`,
          format,
          store: store.name,
          chip,
          image,
          options: { sourceName: options.source, description },
        });
      });
    }
  }
  return { files, stores, encoded, problems };
}
