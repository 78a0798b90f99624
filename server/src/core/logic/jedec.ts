// JEDEC JESD3 fuse-map files: a writer (STX, design text, N notes, QP/QF/QV, F default, G
// security fuse, L fuse lists for non-default rows, C fuse checksum, V test vectors, ETX and
// the transmission checksum) and a reader that rebuilds the fuse array and validates both
// checksums, for reading back what was written. Field syntax and checksum rules follow the
// JESD3 description in device-programmer manuals (see the project's reference facts).
// It deliberately knows nothing about particular devices; callers pass fuse arrays.
import { LogicInputError } from './errors';

const STX = '\x02';
const ETX = '\x03';

/** Characters a test vector may hold (JESD3): drive 0/1, clocks C/K, expect H/L/Z, X don't care, F float, N power or untested. */
const VECTOR_CHARACTERS = /^[01CKHLZXFN]+$/;

export interface JedecWriteOptions {
  /** Free text before the first field; '*' and control characters are replaced. */
  readonly designText: string;
  /** N (note) fields, one per entry. */
  readonly notes?: readonly string[];
  /** QP: pins of the device package. */
  readonly pinCount: number;
  /** One entry per fuse: 0 = intact, 1 = blown. QF is its length. */
  readonly fuses: Uint8Array;
  /** Fuses per L line when grouping (the width of the device's AND-array row). */
  readonly rowWidth?: number;
  /** V fields: one string of `pinCount` characters per vector, pin 1 first. */
  readonly vectors?: readonly string[];
  /** G: the security fuse (1 would stop read-back of the programmed device). */
  readonly securityFuse?: 0 | 1;
  readonly lineEnding?: '\n' | '\r\n';
}

/** Keeps text printable 7-bit ASCII and free of the field terminator '*'. */
export function sanitiseJedecText(text: string): string {
  return text.replace(/\*/g, '+').replace(/[^\x20-\x7e]/g, '?');
}

/** JESD3 fuse checksum: 16-bit sum of the bytes formed by fuses 8k..8k+7, lowest fuse in bit 0. */
export function fuseChecksum(fuses: Uint8Array): number {
  let sum = 0;
  for (let byteStart = 0; byteStart < fuses.length; byteStart += 8) {
    let byte = 0;
    for (let bitIndex = 0; bitIndex < 8 && byteStart + bitIndex < fuses.length; bitIndex++) {
      if (fuses[byteStart + bitIndex]) byte |= 1 << bitIndex;
    }
    sum = (sum + byte) & 0xffff;
  }
  return sum;
}

/** JESD3 transmission checksum: 16-bit sum of the 7-bit character codes from STX through ETX inclusive. */
export function transmissionChecksum(textFromStxToEtx: string): number {
  let sum = 0;
  for (let i = 0; i < textFromStxToEtx.length; i++) sum = (sum + (textFromStxToEtx.charCodeAt(i) & 0x7f)) & 0xffff;
  return sum;
}

function hex4(value: number): string {
  return value.toString(16).toUpperCase().padStart(4, '0');
}

/** Writes a complete JEDEC file. Fuses equal to the default (F0) are left out of the L fields. */
export function writeJedec(options: JedecWriteOptions): string {
  const eol = options.lineEnding ?? '\n';
  const fuses = options.fuses;
  for (let i = 0; i < fuses.length; i++) {
    if (fuses[i] !== 0 && fuses[i] !== 1) throw new LogicInputError(`fuse ${i} has value ${fuses[i]}; fuses are 0 or 1`);
  }
  const vectors = options.vectors ?? [];
  for (const vector of vectors) {
    if (vector.length !== options.pinCount || !VECTOR_CHARACTERS.test(vector)) {
      throw new LogicInputError(`test vector "${vector}" must have ${options.pinCount} characters from 0 1 C K H L Z X F N`);
    }
  }
  const lines: string[] = [];
  lines.push(`${STX}${sanitiseJedecText(options.designText)}*`);
  for (const note of options.notes ?? []) lines.push(`N ${sanitiseJedecText(note)}*`);
  lines.push(`QP${options.pinCount}*`);
  lines.push(`QF${fuses.length}*`);
  if (vectors.length > 0) lines.push(`QV${vectors.length}*`);
  lines.push('F0*');
  lines.push(`G${options.securityFuse ?? 0}*`);
  const rowWidth = options.rowWidth ?? 32;
  const digits = String(fuses.length - 1).length;
  for (let first = 0; first < fuses.length; first += rowWidth) {
    const row = fuses.subarray(first, Math.min(first + rowWidth, fuses.length));
    if (row.every((fuse) => fuse === 0)) continue;
    lines.push(`L${String(first).padStart(digits, '0')} ${Array.from(row).join('')}*`);
  }
  lines.push(`C${hex4(fuseChecksum(fuses))}*`);
  const vectorDigits = String(vectors.length).length;
  vectors.forEach((vector, index) => lines.push(`V${String(index + 1).padStart(vectorDigits, '0')} ${vector}*`));
  const body = lines.join(eol) + eol + ETX;
  return body + hex4(transmissionChecksum(body)) + eol;
}

export interface JedecVector {
  readonly index: number;
  readonly pins: string;
}

export interface JedecFile {
  readonly designText: string;
  readonly notes: string[];
  readonly fuseCount: number;
  readonly pinCount: number | null;
  readonly vectorCount: number | null;
  readonly fuses: Uint8Array;
  /** Declared C value, or null when the file has none. It has been checked against the fuses. */
  readonly fuseChecksum: number | null;
  /** Declared transmission checksum, or null when absent or 0000 (JESD3's "not computed"). It has been checked. */
  readonly transmissionChecksum: number | null;
  readonly securityFuse: 0 | 1 | null;
  readonly vectors: JedecVector[];
}

export type JedecReadResult =
  | { readonly ok: true; readonly file: JedecFile }
  | { readonly ok: false; readonly message: string; readonly offset: number };

class JedecSyntaxError extends Error {
  constructor(
    message: string,
    readonly offset: number,
  ) {
    super(message);
  }
}

/** Reads a JEDEC file and validates it; never throws on bad input. */
export function readJedec(text: string): JedecReadResult {
  try {
    return { ok: true, file: parse(text) };
  } catch (error) {
    if (error instanceof JedecSyntaxError) return { ok: false, message: error.message, offset: error.offset };
    throw error;
  }
}

function parse(text: string): JedecFile {
  const stx = text.indexOf(STX);
  if (stx < 0) throw new JedecSyntaxError('no STX (0x02) character: not a JEDEC fuse-map file', 0);
  const etx = text.indexOf(ETX, stx);
  if (etx < 0) throw new JedecSyntaxError('no ETX (0x03) character: the file is cut short', text.length);

  let transmission: number | null = null;
  const trailer = text.slice(etx + 1, etx + 5);
  if (/^[0-9A-Fa-f]{4}$/.test(trailer)) {
    const declared = parseInt(trailer, 16);
    if (declared !== 0) {
      const computed = transmissionChecksum(text.slice(stx, etx + 1));
      if (computed !== declared) {
        throw new JedecSyntaxError(`transmission checksum is ${hex4(declared)} in the file but ${hex4(computed)} computed`, etx + 1);
      }
      transmission = declared;
    }
  }

  const body = text.slice(stx + 1, etx);
  const designEnd = body.indexOf('*');
  if (designEnd < 0) throw new JedecSyntaxError('the design field is not ended by "*"', stx + 1);
  const designText = body.slice(0, designEnd).trim();
  const notes: string[] = [];
  const vectors: JedecVector[] = [];
  let fuseCount: number | null = null;
  let pinCount: number | null = null;
  let vectorCount: number | null = null;
  let defaultFuse: 0 | 1 | null = null;
  let declaredChecksum: number | null = null;
  let securityFuse: 0 | 1 | null = null;
  const lists: { first: number; bits: string; offset: number }[] = [];

  let position = designEnd + 1;
  while (position < body.length) {
    const end = body.indexOf('*', position);
    const fieldEnd = end < 0 ? body.length : end;
    const raw = body.slice(position, fieldEnd);
    const offset = stx + 1 + position + (raw.length - raw.trimStart().length);
    const field = raw.trim();
    position = fieldEnd + 1;
    if (field.length === 0) continue;
    if (end < 0) throw new JedecSyntaxError(`field "${field.slice(0, 20)}" is not ended by "*"`, offset);
    const kind = field[0];
    const rest = field.slice(1);
    switch (kind) {
      case 'N':
        notes.push(rest.trim());
        break;
      case 'Q': {
        const match = /^([FPV])\s*(\d+)$/.exec(rest);
        if (!match) throw new JedecSyntaxError(`bad Q field "${field}"`, offset);
        const value = Number(match[2]);
        if (match[1] === 'F') fuseCount = value;
        else if (match[1] === 'P') pinCount = value;
        else vectorCount = value;
        break;
      }
      case 'F':
        if (!/^[01]$/.test(rest.trim())) throw new JedecSyntaxError(`bad default-fuse field "${field}"`, offset);
        defaultFuse = rest.trim() === '1' ? 1 : 0;
        break;
      case 'G':
        if (!/^[01]$/.test(rest.trim())) throw new JedecSyntaxError(`bad security-fuse field "${field}"`, offset);
        securityFuse = rest.trim() === '1' ? 1 : 0;
        break;
      case 'L': {
        const match = /^(\d+)\s+([01\s]+)$/.exec(rest);
        if (!match) throw new JedecSyntaxError(`bad fuse-list field "${field.slice(0, 30)}": expected L<number> followed by 0s and 1s`, offset);
        lists.push({ first: Number(match[1]), bits: match[2].replace(/\s+/g, ''), offset });
        break;
      }
      case 'C': {
        if (!/^[0-9A-Fa-f]{4}$/.test(rest.trim())) throw new JedecSyntaxError(`bad fuse-checksum field "${field}"`, offset);
        declaredChecksum = parseInt(rest.trim(), 16);
        break;
      }
      case 'V': {
        const match = /^(\d+)\s+(\S+)$/.exec(rest);
        if (!match || !VECTOR_CHARACTERS.test(match[2])) throw new JedecSyntaxError(`bad test-vector field "${field.slice(0, 40)}"`, offset);
        vectors.push({ index: Number(match[1]), pins: match[2] });
        break;
      }
      default:
        // Other JESD3 fields (P pin order, D, S, R, T, A, X, J...) carry nothing this reader needs.
        break;
    }
  }

  if (fuseCount === null) throw new JedecSyntaxError('no QF field: the fuse count is unknown', stx);
  const fuses = new Uint8Array(fuseCount);
  const known = new Uint8Array(fuseCount);
  if (defaultFuse !== null) {
    fuses.fill(defaultFuse);
    known.fill(1);
  }
  for (const list of lists) {
    if (list.first + list.bits.length > fuseCount) {
      throw new JedecSyntaxError(`fuse list L${list.first} runs past the last fuse (${fuseCount - 1})`, list.offset);
    }
    for (let k = 0; k < list.bits.length; k++) {
      fuses[list.first + k] = list.bits.charCodeAt(k) === 0x31 ? 1 : 0;
      known[list.first + k] = 1;
    }
  }
  const unknown = known.indexOf(0);
  if (unknown >= 0) throw new JedecSyntaxError(`fuse ${unknown} is not in any L field and there is no F default`, stx);
  if (declaredChecksum !== null) {
    const computed = fuseChecksum(fuses);
    if (computed !== declaredChecksum) {
      throw new JedecSyntaxError(`fuse checksum is ${hex4(declaredChecksum)} in the file but ${hex4(computed)} computed`, stx);
    }
  }
  if (pinCount !== null) {
    for (const vector of vectors) {
      if (vector.pins.length !== pinCount) {
        throw new JedecSyntaxError(`test vector ${vector.index} has ${vector.pins.length} pins; QP says ${pinCount}`, stx);
      }
    }
  }
  return {
    designText,
    notes,
    fuseCount,
    pinCount,
    vectorCount,
    fuses,
    fuseChecksum: declaredChecksum,
    transmissionChecksum: transmission,
    securityFuse,
    vectors,
  };
}
