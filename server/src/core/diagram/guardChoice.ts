// The guard choice of a timing diagram: which value each address input takes (`taken=1`,
// `funct3=101`), so that exactly one alternative of every guarded step applies. It reads the
// user's text, checks names and widths against the machine, and lists the inputs a class's
// guards and decode maps depend on. It does not pick alternatives; the encoder's decoder does.
import type { ClassDef, InputVar, Machine } from '../model/types';
import { parseNumber, toBinary } from '../model/numbers';
import { instructionFields } from '../model/vocabulary';

/** Values the user chose: instruction bits (with a mask of the bits given) and flags. */
export interface GuardChoice {
  ir: number;
  irGiven: number;
  flags: Map<string, number>;
}

/** One input a class depends on, with the value the choice gives it. */
export interface ChoiceInput {
  /** The name as the table writes it: `taken`, `funct3`, `ir[20]`. */
  name: string;
  input: InputVar & ({ kind: 'ir' } | { kind: 'flag' });
  width: number;
  /** The chosen value as binary digits, most significant first. */
  bits: string;
  /** False when the user gave no value and 0 stands in. */
  given: boolean;
  /** False when no store's address lines carry this input (the stores cannot see it). */
  onAddress: boolean;
}

export type ChoiceResult = { ok: true; choice: GuardChoice } | { ok: false; reason: string };

export function emptyChoice(): GuardChoice {
  return { ir: 0, irGiven: 0, flags: new Map() };
}

/** Resolves an input name the way guards write them: a flag, `funct3`, `f7b5`, `funct7`, `ir[N]`, `ir[H:L]`. */
export function resolveInput(machine: Machine, name: string): (InputVar & ({ kind: 'ir' } | { kind: 'flag' })) | undefined {
  if (machine.flags.has(name)) return { kind: 'flag', name };
  const field = instructionFields[name];
  if (field) return field;
  const bits = /^ir\[(\d+)(?::(\d+))?\]$/.exec(name);
  if (bits) {
    const hi = Number(bits[1]);
    const lo = bits[2] === undefined ? hi : Number(bits[2]);
    if (hi <= 31 && lo <= hi) return { kind: 'ir', hi, lo };
  }
  return undefined;
}

function maskOf(hi: number, lo: number): number {
  const width = hi - lo + 1;
  return (width >= 32 ? 0xffffffff : ((2 ** width - 1) * 2 ** lo)) >>> 0;
}

/**
 * Reads `taken=1,funct3=101` (commas, spaces or `&` between terms). A value is binary digits of
 * exactly the input's width, or a number (`5`, `0x5`, `0b101`) that fits it. The opcode is
 * fixed by the class, so it cannot be chosen.
 */
export function parseGuardChoice(machine: Machine, text: string): ChoiceResult {
  const choice = emptyChoice();
  const terms = text.split(/[\s,&]+/).filter(Boolean);
  for (const term of terms) {
    const eq = term.indexOf('=');
    if (eq <= 0) return { ok: false, reason: `'${term}' is not of the form name=value (for example taken=1 or funct3=101)` };
    const name = term.slice(0, eq);
    const valueText = term.slice(eq + 1);
    if (name === 'opcode') return { ok: false, reason: 'the opcode is fixed by the class; choose the class instead' };
    const input = resolveInput(machine, name);
    if (!input) {
      const flags = [...machine.flags.keys()];
      return { ok: false, reason: `'${name}' is not an address input; use ${[...flags, 'funct3', 'f7b5', 'funct7', 'ir[N]', 'ir[H:L]'].join(', ')}` };
    }
    const width = input.kind === 'flag' ? 1 : input.hi - input.lo + 1;
    let value: number | undefined;
    if (/^[01]+$/.test(valueText) && valueText.length === width) value = parseInt(valueText, 2);
    else value = parseNumber(valueText);
    if (value === undefined || value < 0 || value >= 2 ** width) {
      return { ok: false, reason: `'${valueText}' is not a ${width}-bit value for ${name} (write ${width} binary digits, such as ${'0'.repeat(width)})` };
    }
    if (input.kind === 'flag') {
      choice.flags.set(input.name, value);
      continue;
    }
    const mask = maskOf(input.hi, input.lo);
    const shifted = (value * 2 ** input.lo) >>> 0;
    const overlap = choice.irGiven & mask;
    if (overlap && ((choice.ir ^ shifted) & overlap) !== 0) {
      return { ok: false, reason: `${name}=${valueText} disagrees with an earlier value for the same instruction bits` };
    }
    choice.ir = ((choice.ir & ~mask) | shifted) >>> 0;
    choice.irGiven = (choice.irGiven | mask) >>> 0;
  }
  return { ok: true, choice };
}

/** The choice written back as text, in the order of `inputs`. */
export function choiceText(inputs: readonly ChoiceInput[]): string {
  return inputs.map((i) => `${i.name}=${i.bits}`).join(',');
}

/** The value an input takes under a choice (0 where nothing was given). */
export function valueOf(choice: GuardChoice, input: InputVar & ({ kind: 'ir' } | { kind: 'flag' })): number {
  if (input.kind === 'flag') return choice.flags.get(input.name) ?? 0;
  const width = input.hi - input.lo + 1;
  return Math.floor(choice.ir / 2 ** input.lo) % 2 ** width;
}

function isGiven(choice: GuardChoice, input: InputVar & ({ kind: 'ir' } | { kind: 'flag' })): boolean {
  if (input.kind === 'flag') return choice.flags.has(input.name);
  const mask = maskOf(input.hi, input.lo);
  return (choice.irGiven & mask) === mask;
}

function sameInput(a: InputVar, b: InputVar): boolean {
  if (a.kind === 'flag' && b.kind === 'flag') return a.name === b.name;
  if (a.kind === 'ir' && b.kind === 'ir') return a.hi === b.hi && a.lo === b.lo;
  return false;
}

/**
 * The inputs a class's choice is about: those its step guards test and those the decode maps
 * it uses read, in first-use order, each with its chosen value. Inputs the user gave that the
 * class does not read are listed after them, so the choice text round-trips.
 */
export function choiceInputsOf(machine: Machine, cls: ClassDef, choice: GuardChoice, addressInputs: readonly InputVar[]): ChoiceInput[] {
  const found: { name: string; input: ChoiceInput['input'] }[] = [];
  const add = (name: string, input: InputVar) => {
    if (input.kind === 'step') return;
    if (input.kind === 'ir' && input.lo >= 2 && input.hi <= 6) return; // opcode bits: fixed by the class
    if (!found.some((f) => sameInput(f.input, input))) found.push({ name, input });
  };
  const steps = [...cls.steps.keys()].sort((a, b) => a - b);
  for (const step of steps) {
    for (const alt of cls.steps.get(step) ?? []) {
      for (const literal of alt.guard ?? []) add(literal.label, literal.input);
      for (const action of alt.actions) {
        if (action.value?.kind !== 'map') continue;
        for (const mapInput of machine.maps.get(action.value.map)?.inputs ?? []) add(mapInput.label, mapInput.input);
      }
    }
  }
  for (const flag of choice.flags.keys()) add(flag, { kind: 'flag', name: flag });
  for (const [name, field] of Object.entries(instructionFields)) {
    if (name === 'opcode') continue;
    const mask = maskOf(field.hi, field.lo);
    if ((choice.irGiven & mask) === mask && !found.some((f) => f.input.kind === 'ir' && f.input.lo <= field.lo && f.input.hi >= field.hi)) add(name, field);
  }
  return found.map(({ name, input }) => {
    const width = input.kind === 'flag' ? 1 : input.hi - input.lo + 1;
    const onAddress = input.kind === 'flag' ? addressInputs.some((a) => a.kind === 'flag' && a.name === input.name) : coversBits(addressInputs, input.hi, input.lo);
    return { name, input, width, bits: toBinary(valueOf(choice, input), width), given: isGiven(choice, input), onAddress };
  });
}

/** True when the address inputs together carry every instruction bit from lo to hi. */
function coversBits(addressInputs: readonly InputVar[], hi: number, lo: number): boolean {
  for (let bit = lo; bit <= hi; bit++) {
    if (!addressInputs.some((a) => a.kind === 'ir' && a.lo <= bit && a.hi >= bit)) return false;
  }
  return true;
}
