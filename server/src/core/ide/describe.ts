// Plain-words explanations the editor features share: what each part kind, strobe kind, value
// name, address input and keyword means, where a word bit lands (chip and data pin), and how
// hexadecimal per chip is written. What a part, its ports, settings and values mean comes from
// its kind's definition (model/partFacts.ts), so a table's own kind is explained like a library
// kind. Text only; it knows nothing of positions or of the protocol.
import type { Machine, Part, Strobe, StrobeKind, WordLayout } from '../model/types';
import { strobeKindDescriptions } from '../model/vocabulary';
import { standardLibrary } from '../parts/library';
import { type PortFact, inputsOf, inputsReadBy, portText, portsOf, settingsReadBy, strobeWiring } from '../model/partFacts';

/** What a part kind is: its definition's description (the table's own kinds, then the library's). */
export function partKindText(machine: Machine | undefined, kind: string): string {
  const def = machine?.kinds.get(kind) ?? standardLibrary().kinds.get(kind);
  if (!def) return `part kind \`${kind}\``;
  return (def.description ?? `part kind \`${def.name}\``) + (def.origin === 'table' ? ' (a kind of this table; hover it for its definition)' : '');
}

/** The kind of a part, in words: its name and description. */
export function partKindLine(machine: Machine, part: Part): string {
  const def = part.def;
  return `\`${def.name}\`${def.origin === 'table' ? ' (of this table)' : ''}${def.description ? ` — ${def.description}` : ''}`;
}

export function strobeKindText(kind: StrobeKind): string {
  return strobeKindDescriptions[kind];
}

/** What the ROM bit of a strobe is when it is asserted, in words. */
export function activeLevelText(strobe: Strobe): string {
  return strobe.active === 'low'
    ? 'active low: the ROM bit is 0 when asserted and 1 when idle (typical for /OE and /WE inputs)'
    : 'active high: the ROM bit is 1 when asserted and 0 when idle';
}

/** The chip holding word bit `bitIndex` and its data pin within that chip (chip 0 holds the lowest bits). */
export function chipOfBit(layout: WordLayout, bitIndex: number): { chip: number; pin: number } | undefined {
  let first = 0;
  for (let chip = 0; chip < layout.chipWidths.length; chip++) {
    const width = layout.chipWidths[chip];
    if (bitIndex < first + width) return { chip, pin: bitIndex - first };
    first += width;
  }
  return undefined;
}

/** "chip 2, D5" or "chip 2, D0..D3", split where a range crosses chips; "no chip" beyond them. */
export function chipPinsText(layout: WordLayout, lo: number, hi: number): string {
  const pieces: string[] = [];
  let bit = lo;
  while (bit <= hi) {
    const at = chipOfBit(layout, bit);
    if (!at) {
      pieces.push(`bits ${bit}..${hi} on no chip (the chips hold fewer bits than the word)`);
      break;
    }
    let last = bit;
    while (last + 1 <= hi && chipOfBit(layout, last + 1)?.chip === at.chip) last++;
    const endPin = at.pin + (last - bit);
    pieces.push(endPin === at.pin ? `chip ${at.chip}, D${at.pin}` : `chip ${at.chip}, D${at.pin}..D${endPin}`);
    bit = last + 1;
  }
  return pieces.join(' and ');
}

/** The first bit of each chip and its width. */
export function chipSlices(layout: WordLayout): { chip: number; lo: number; width: number }[] {
  const slices: { chip: number; lo: number; width: number }[] = [];
  let lo = 0;
  layout.chipWidths.forEach((width, chip) => {
    slices.push({ chip, lo, width });
    lo += width;
  });
  return slices;
}

/** The value of `width` bits of a word (in 32-bit lanes) starting at bit `lo`. */
export function bitsOf(word: Uint32Array, lo: number, width: number): number {
  let value = 0;
  for (let i = width - 1; i >= 0; i--) {
    const bit = lo + i;
    const lane = bit >>> 5;
    value = value * 2 + (lane < word.length ? (word[lane] >>> (bit & 31)) & 1 : 0);
  }
  return value;
}

/** Hexadecimal of a chip's data, as many digits as its width needs, upper case. */
export function hexDigits(value: number, width: number): string {
  return value.toString(16).toUpperCase().padStart(Math.max(1, Math.ceil(width / 4)), '0');
}

/** Binary of a code in exactly `width` digits. */
export function binaryDigits(value: number, width: number): string {
  return value.toString(2).padStart(width, '0').slice(-width);
}

/** Per chip, the hexadecimal of its data lines in a word, chip 0 first. */
export function chipHex(layout: WordLayout, word: Uint32Array): string[] {
  return chipSlices(layout).map(({ lo, width }) => hexDigits(bitsOf(word, lo, width), width));
}

/** Address inputs the notation names, with the instruction bits they carry (RV32I base formats, ch. 2.2). */
export const addressInputTexts: Record<string, string> = {
  step: 'the step counter: which step of the instruction is running (its width is set by the `step` address lines)',
  opcode: 'instruction bits 6..2, the major opcode (bits 1..0 are always 11)',
  funct3: 'instruction bits 14..12: selects the operation, branch condition or access size',
  f7b5: 'instruction bit 30 (funct7 bit 5): tells sub from add and sra from srl',
  funct7: 'instruction bits 31..25',
  ir: 'instruction register bits, `ir[n]` or `ir[hi:lo]`',
};

/** Words that have a fixed meaning where they stand. */
export const keywordTexts: Record<string, string> = {
  machine: 'names the machine; `isa rv32i` promises the whole RV32I base instruction set',
  kind: 'defines a part kind in the notation: its settings, inputs, controls, state, ports and closing-edge actions (docs/notation.md, "Part kinds")',
  bus: 'a shared bus: `bus NAME WIDTH [keeper]`',
  part: 'a part on the buses: `part NAME KIND ...`',
  strobe: 'a one-bit control output of the control store: `strobe NAME KIND ...`',
  connect: 'a part\'s output that drives a bus in every step, with no strobe: `connect PART[.PORT] -> BUS[hi:lo]`; the contention check counts it in every step',
  field: 'a multi-bit control output holding one code per step: `field NAME WIDTH -> PART { name=code ... }`',
  store: 'starts a named control store; the `word` and `address` lines after it belong to it',
  word: 'the control word and its split over ROM chips; body lines place each strobe and field on its bits',
  address: 'the control-store address lines and what feeds them (step counter, instruction bits, flags)',
  map: 'a decode map: a field value from instruction bits or flags, so one step line serves many instructions',
  phase: 'a named run of steps shared by many classes (such as fetch); classes bring it in with `use`',
  class: 'the steps of one RV32I major opcode',
  keeper: 'bus-hold keepers: an undriven bus keeps its last driven value (a load then stores a stale value) instead of floating',
  active: '`active high` or `active low`: the ROM bit level that asserts the strobe',
  accept: '`accept width-mismatch`: the width change on this line is deliberate, so this line does not report it (every other line still does)',
  high: 'active high: the ROM bit is 1 when the strobe is asserted',
  low: 'active low: the ROM bit is 0 when the strobe is asserted (typical for /OE and /WE inputs)',
  use: 'places a phase\'s steps into this class, at `at N` or right after the steps written so far',
  if: 'a guard: this alternative applies only when every term holds',
  else: 'the alternative taken when no other line of this step applies',
  isa: '`isa rv32i`: the coverage check then requires a class for every RV32I major opcode',
  as: 'the split of the word over chips: `4 x 8` or `8 + 8 + 16`',
};

const roleTexts: Record<PortFact['role'], string> = {
  enable: 'output, drives a bus through an enable strobe',
  read: 'output, drives a bus through a read strobe',
  clock: 'input, loads a bus at a clock strobe\'s closing edge',
  write: 'input, stores a bus at a write strobe\'s closing edge',
  latch: 'acts at a clock strobe\'s closing edge (no bus)',
  count: 'acts at a count strobe\'s closing edge',
};

/** Longest expression a port's line spells out. */
const maxShownExpression = 72;

/** One port of a part in words: its role, description and what it computes (with the part's settings). */
export function portLine(machine: Machine, part: Part, port: PortFact): string {
  const computes = portText(machine, part, port);
  const settings = settingsReadBy(machine, part, port);
  // A long expression is left to the kind's hover, which shows the whole definition.
  const shown = [...(computes.length <= maxShownExpression ? [`\`${computes}\``] : []), ...settings];
  // An `always` port (a sequencer's next step) needs no strobe; its description usually says so already.
  const always = port.edge?.always === true;
  const role = always ? 'acts at every closing edge, no strobe needed' : roleTexts[port.role];
  const description = always ? port.description?.replace(/^at every closing edge:\s*/, '') : port.description;
  return `\`${port.name}\`: ${role}${description ? `: ${description}` : ''}${shown.length ? ` (${shown.join(', ')})` : ''}`;
}

/** The ports of a part, for hovers: name, direction and what it carries, from its kind's definition. */
export function partPorts(machine: Machine, part: Part): string[] {
  const defined = part;
  const lines = portsOf(machine, part).map((p) => portLine(machine, part, p));
  for (const flag of defined.def.flags) lines.push(`\`${flag.name}\`: flag \`${defined.flagNames.get(flag.name) ?? flag.name}\` (\`${flag.expr.text}\`), an address input`);
  const numbered = defined.def.states.find((s) => typeof s.count === 'object');
  if (strobeWiring(part).numbered && numbered) lines.push(`\`${part.name}[n]\`: register n of \`${numbered.name}\` itself, for a strobe wired to one fixed register`);
  return lines;
}

/** Inputs a port reads with their sources, for a strobe hover: `a from \`left\``. */
export function portInputs(machine: Machine, part: Part, port: PortFact): string[] {
  return inputsReadBy(machine, part, port);
}

/** The settings of a part as written or defaulted, and where its inputs come from, for hovers. */
export function partSettings(machine: Machine, part: Part): string[] {
  const defined = part;
  const out: string[] = [];
  for (const setting of defined.def.settings) {
    const value = defined.settings.get(setting.name);
    if (value === undefined) continue;
    const shown = typeof value === 'number' && value > 9 && setting.name !== 'width' ? `${value} (0x${value.toString(16).toUpperCase()})` : String(value);
    out.push(`${setting.name}=${shown}${setting.description && setting.name !== 'width' ? ` (${setting.description})` : ''}`);
  }
  for (const input of inputsOf(machine, part)) {
    const from = input.source.from === 'instruction' ? 'the instruction register' : `${input.source.from} \`${input.source.name}\``;
    out.push(`${input.name} from ${from}${input.description ? ` (${input.description})` : ''}`);
  }
  for (const [control, field] of defined.controlFields) out.push(`\`${control}\` from field \`${field}\``);
  return out;
}
