// The control-store listing: a text file a person reads beside the ROM images. One line per
// address the table uses: the address, what its lines carry (step, flags, instruction bits),
// the class, the word in hex per chip, and the asserted strobes and field values by name,
// read back from the encoded bits (so the listing shows what will be burned). Runs of
// addresses holding the fill word are one line each. The text comes in chunks of about
// `chunkChars` characters, so a store of 24 address lines (16 million lines, gigabytes of
// text) is written without ever being one string; `writeListing` joins them for small stores.
// Where the address lines carry another store's field (formedAddress.ts), a word no step's
// address ever reaches is marked `unreached` instead of being labelled with that step, and a
// fill address a step does reach is listed on its own line saying which step lands there.
// On a machine with a sequencer part each word's line ends with where the step goes next
// (`-> 3`, `stays`, `-> 0 (ends)`), from the sequencer's definition and the codes in the word.
import { returnRegisters, sequencerMove } from '../model/sequencing';
import type { Machine, StepAlt } from '../model/types';
import { toBinary, toHex } from '../model/numbers';
import { decodeWord, type EncodedMachine, type EncodedStore } from './encoder';
import { formedAddresses } from './formedAddress';
import { pointInputs, pointInputsInto } from './universe';

export interface ListingOptions {
  source: string;
}

/** Bits of a word from `lowBit`, `width` wide, as an unsigned number. */
export function wordBits(enc: EncodedStore, address: number, lowBit: number, width: number): number {
  let value = 0;
  const base = address * enc.lanes;
  for (let i = width - 1; i >= 0; i--) {
    const bit = lowBit + i;
    value = value * 2 + ((enc.words[base + (bit >>> 5)] >>> (bit & 31)) & 1);
  }
  return value;
}

/** The word at `address` as hex per chip, chip 0 first. */
export function chipHex(enc: EncodedStore, address: number): string[] {
  const out: string[] = [];
  let low = 0;
  for (const width of enc.store.word!.chipWidths) {
    out.push(toHex(wordBits(enc, address, low, width), Math.ceil(width / 4)));
    low += width;
  }
  return out;
}

/** What each address source carries at `address`, as `name=bits`. */
export function describeAddress(enc: EncodedStore, address: number): string {
  return enc.store
    .address!.sources.map((s) => {
      const width = s.hi - s.lo + 1;
      const value = Math.floor(address / 2 ** s.lo) % 2 ** width;
      return `${s.label}=${s.input.kind === 'step' ? String(value) : toBinary(value, width)}`;
    })
    .join(' ');
}

const hexChars = '0123456789ABCDEF';

function hexDigits(value: number, digits: number): string {
  let out = '';
  for (let i = digits - 1; i >= 0; i--) out += hexChars[(value >>> (i * 4)) & 15];
  return out;
}

/** A fast `describeAddress` for one store: each source's text per value, computed once. */
function addressDescriber(enc: EncodedStore): (address: number) => string {
  const parts = enc.store.address!.sources.map((s) => {
    const width = s.hi - s.lo + 1;
    const texts = Array.from({ length: 2 ** width }, (_, value) => `${s.label}=${s.input.kind === 'step' ? String(value) : toBinary(value, width)}`);
    return { lo: s.lo, mask: 2 ** width - 1, texts };
  });
  return (address) => {
    let text = parts[0]?.texts[(address >>> parts[0].lo) & parts[0].mask] ?? '';
    for (let i = 1; i < parts.length; i++) text += ' ' + parts[i].texts[(address >>> parts[i].lo) & parts[i].mask];
    return text;
  };
}

/**
 * Strobes asserted and field values at an address, read from the encoded word. Fields are
 * shown when the step sets them (`setFields`) or when they differ from their idle code.
 */
export function describeWord(machine: Machine, enc: EncodedStore, address: number, setFields?: Set<string>): string {
  const { asserted, fields } = decodeWord(machine, enc, address);
  const items = [...asserted];
  for (const [name, code] of fields) {
    const field = machine.signals.get(name);
    if (field?.type !== 'field') continue;
    if (!setFields?.has(name) && code === field.idle) continue;
    const value = [...field.values.values()].find((v) => v.code === code)?.name;
    items.push(`${name}=${value ?? code}`);
  }
  return items.join(' ');
}

/** Characters per chunk of listing text (about 1 MB). */
export const chunkChars = 1 << 20;

/** The whole listing as one string: for stores small enough to hold it (tests, small tables). */
export function writeListing(machine: Machine, encoded: EncodedMachine, enc: EncodedStore, options: ListingOptions): string {
  return [...listingChunks(machine, encoded, enc, options)].join('');
}

/** The listing, chunk by chunk; each chunk ends with a line end. */
export function* listingChunks(machine: Machine, encoded: EncodedMachine, enc: EncodedStore, options: ListingOptions): Generator<string> {
  const store = enc.store;
  const word = store.word!;
  const nAddresses = 2 ** enc.addressBits;
  const addressDigits = Math.max(4, Math.ceil(enc.addressBits / 4));
  const chipNames = word.chipWidths.map((_, i) => `chip${i}`);
  let lines: string[] = [];
  let pending = 0;
  const push = (line: string) => {
    lines.push(line);
    pending += line.length + 1;
  };
  push('# Phasewright control-store listing');
  push(`# machine: ${machine.title || '(untitled)'}    source: ${options.source}    store: ${store.name}`);
  push(`# ${enc.addressBits} address lines (${nAddresses} words); ${word.width}-bit word as ${word.chipWidths.map((w) => `${w}`).join(' + ')} bits${word.chip ? ` in ${word.chip.name} chips` : ''}; chip 0 holds bit 0`);
  push(`# address lines: ${store.address!.sources.map((s) => `${s.label} ${s.lo === s.hi ? s.lo : `${s.lo}..${s.hi}`}`).join('  ')}`);
  push(`# ${enc.usedCount} words from the table, ${nAddresses - enc.usedCount} hold the fill word (every strobe inactive): ${chipHexOfWord(enc.fillWord, enc.store.word!.chipWidths).join(' ')}`);
  push('# Fields are shown where a step sets them or where they differ from their idle code.');
  push('# Check the images against your chips\' data sheets before programming them.');
  const reach = formedAddresses(machine, encoded, enc);
  if (reach) push('# The address lines carry another store\'s field: a word no step reaches through them is marked unreached, and a fill word a step does reach is named.');
  const nextNote = nextStepNote(machine, enc);
  if (nextNote) push(`# Last on a word's line: where the sequencer \`${machine.sequencer}\` goes next with that word's codes: -> N (step N), stays (the same step again), -> 0 (ends) (back to step 0: the instruction ends)${returnRegisters(machine).length ? ', -> N (call, back to M) (a call: the return register keeps step M), -> return (to the step the last open call kept)' : ''}.`);
  push('#');
  push(`# ${'address'.padEnd(addressDigits + 2)}  ${'inputs'.padEnd(describeAddress(enc, 0).length)}  ${'class'.padEnd(10)} ${chipNames.map((n, i) => n.padEnd(Math.max(n.length, Math.ceil(word.chipWidths[i] / 4)))).join(' ')}  asserted`);
  let fillStart = -1;
  const flushFill = (end: number) => {
    if (fillStart < 0) return;
    const range = fillStart === end - 1 ? `0x${toHex(fillStart, addressDigits)}` : `0x${toHex(fillStart, addressDigits)}-0x${toHex(end - 1, addressDigits)}`;
    push(`  ${range}  fill (${end - fillStart} word${end - fillStart > 1 ? 's' : ''})`);
    fillStart = -1;
  };
  /** A fill address some step's address lines do form: its own line, saying who lands there. */
  const strayFill = (address: number, point: number) => {
    const decoded = encoded.decoder.decodeShared(pointInputsInto(encoded.universe, point, inputs));
    push(`  0x${hexDigits(address, addressDigits)}  ${inputsText(address)}  fill: ${stepName(decoded)} forms this address and finds the fill word here (the table put its word at another address)`);
  };
  // Many addresses hold the same word for the same step: describe each (decode, word) once.
  const described = new Map<unknown, Map<number | string, string>>();
  const inputs = pointInputs(encoded.universe, 0);
  const inputsText = addressDescriber(enc);
  for (let address = 0; address < nAddresses; address++) {
    const point = enc.origin[address];
    if (point < 0) {
      if (reach && reach.stray[address] >= 0) {
        flushFill(address);
        strayFill(address, reach.stray[address]);
      } else if (fillStart < 0) fillStart = address;
      continue;
    }
    flushFill(address);
    const decoded = encoded.decoder.decodeShared(pointInputsInto(encoded.universe, point, inputs));
    let byWord = described.get(decoded);
    if (!byWord) described.set(decoded, (byWord = new Map()));
    const wordKey = enc.lanes === 1 ? enc.words[address] : Array.from(enc.words.subarray(address * enc.lanes, (address + 1) * enc.lanes)).join(',');
    let tail = byWord.get(wordKey);
    if (tail === undefined) {
      const hex = chipHex(enc, address).map((h, i) => h.padEnd(Math.max(chipNames[i].length, h.length)));
      tail = `${(decoded?.cls?.name ?? '-').padEnd(10)} ${hex.join(' ')}  ${describeWord(machine, enc, address, new Set(decoded?.fieldCodes.keys() ?? []))}`;
      if (nextNote && decoded?.alt) tail += `  ${nextNote(address, decoded.alt)}`;
      byWord.set(wordKey, tail);
    }
    const reached = !reach || reach.formed[address] === 1;
    push('  0x' + hexDigits(address, addressDigits) + '  ' + inputsText(address) + '  ' + (reached ? tail : unreachedTail(tail, decoded)));
    if (pending >= chunkChars) {
      yield lines.join('\n') + '\n';
      lines = [];
      pending = 0;
    }
  }
  flushFill(nAddresses);
  if (lines.length > 0) yield lines.join('\n') + '\n';
}

type Decoded = ReturnType<EncodedMachine['decoder']['decodeShared']>;

/**
 * Where the step goes after the word at an address, as the listing writes it, on a store that
 * holds every field the sequencer reads (its control fields and its `field` inputs, if any);
 * undefined on a machine without a sequencer, or on a store without those fields or step lines.
 * The codes are read back from the encoded word, so a field a decode map sets shows the code
 * burned at that address.
 */
function nextStepNote(machine: Machine, enc: EncodedStore): ((address: number, alt: StepAlt) => string) | undefined {
  const part = machine.sequencer ? machine.parts.get(machine.sequencer) : undefined;
  const steps = enc.store.address!.sources.find((s) => s.input.kind === 'step');
  if (!part || !steps) return undefined;
  const read = [...part.controlFields.values(), ...[...part.inputs.values()].flatMap((i) => (i.from === 'field' ? [i.name] : []))];
  const placed = new Set(enc.store.word!.placements.map((p) => p.signal));
  if (!read.every((name) => placed.has(name))) return undefined;
  return (address, alt) => {
    // The step the address lines carry.
    const step = Math.floor(address / 2 ** steps.lo) % 2 ** (steps.hi - steps.lo + 1);
    const { fields } = decodeWord(machine, enc, address);
    const actions = [...fields].map(([signal, code]) => ({ signal, value: { kind: 'code' as const, name: String(code), code }, span: alt.span }));
    const move = sequencerMove(machine, { ...alt, actions }, step);
    if (move?.returnOf !== undefined) return '-> return';
    const next = move?.to;
    if (next === undefined) return '-> ? (the word does not fix it)';
    if (move?.calls) return `-> ${next} (call, back to ${move.context.values.find((v) => v !== undefined) ?? '?'})`;
    return next === 0 ? '-> 0 (ends)' : next === step ? 'stays' : `-> ${next}`;
  };
}

/** "step 0 of phase fetch in class OP-IMM", for notes. */
function stepName(decoded: Decoded): string {
  if (!decoded?.alt) return 'a step';
  return `step ${decoded.alt.step} of ${decoded.alt.phase ? `phase ${decoded.alt.phase.name} in ` : ''}class ${decoded.cls?.name}`;
}

/** The line tail of a table word no address lines reach: `unreached` in the class column, and for whom it was laid. */
function unreachedTail(tail: string, decoded: Decoded): string {
  const width = Math.max(10, (decoded?.cls?.name ?? '-').length);
  return `${'unreached'.padEnd(width)}${tail.slice(width)}  (laid for ${stepName(decoded)}, whose address lines form another address)`;
}

/** A word (in 32-bit lanes) as hex per chip, chip 0 (the lowest bits) first. */
export function chipHexOfWord(word: Uint32Array, chipWidths: readonly number[]): string[] {
  const out: string[] = [];
  let low = 0;
  for (const width of chipWidths) {
    let value = 0;
    for (let i = width - 1; i >= 0; i--) {
      const bit = low + i;
      value = value * 2 + ((word[bit >>> 5] >>> (bit & 31)) & 1);
    }
    out.push(toHex(value, Math.ceil(width / 4)));
    low += width;
  }
  return out;
}
