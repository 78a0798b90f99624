// What a timing diagram shows, as plain data: for one class and one guard choice, the step
// alternative that applies in each step (picked by the encoder's own point decoder), every
// strobe's line level per step by its polarity, the field values, who drives and who loads
// each bus, and the word each store holds at that step's address (laid by the encoder's
// `wordForAlternative`, so it equals the ROM images and the listing). Without a sequencer part
// the columns are the class's steps in number order; with one they are the steps in the order
// the sequencer takes them, a loop drawn for a loop count (sequencedPath.ts), each column's
// word and address formed with the flags that column runs with. It draws nothing; the SVG
// renderer in timing.ts does.
import { chipHexOfWord } from '../encode/listing';
import { PointDecoder, type PointDecode } from '../encode/decodePoint';
import { addressOf, fillWordOf, wordForAlternative } from '../encode/encoder';
import { universeOf, type PointInputs } from '../encode/universe';
import { toBinary, toHex } from '../model/numbers';
import { contendedBuses } from '../model/busDrivers';
import type { ClassDef, InputVar, Level, Machine, StepAlt, Store, Strobe, StrobeKind } from '../model/types';
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import { guardText } from '../ide/usage';
import { hasSequencer } from '../model/sequencing';
import { stepsText } from '../flow/stepGraph';
import { type ChoiceInput, type GuardChoice, choiceInputsOf } from './guardChoice';
import { type PathCut, type PathLoop, defaultLoopCount, sequencedPath } from './sequencedPath';

export interface TimingColumn {
  step: number;
  /** The alternative's guard as written (`if taken`, `else`), or undefined when the step has one alternative. */
  guard?: string;
  /** The phase the step comes from (`use fetch`). */
  phase?: string;
  /** Why this step holds the fill word for this choice, if it does. */
  fillReason?: PointDecode['fillReason'];
  /** False for steps after one that ended the instruction (the counter has returned to 0). */
  reached: boolean;
  /** The alternative that applies, if any. */
  alt?: StepAlt;
  /** On a sequencer machine, where the path visits the step more than once: which visit this is (1 = the first). */
  visit?: number;
  /** On a sequencer machine: the step the sequencer goes to at the closing edge (undefined where the word does not fix it). */
  next?: number;
  /** On a sequencer machine: true when that step comes back to this one (a loop goes round: a hold, a jump back). */
  goesRound?: boolean;
  /** On a sequencer machine: the flags of the step's guards that the loop count set here, not the guard choice. */
  loopFlags?: string[];
  /** On a sequencer with return registers: the move at the closing edge is a call or a return. */
  call?: 'call' | 'return';
}

/** How a sequencer machine's columns were laid: the loop count, the loops drawn, where the path was cut. */
export interface TimingSequence {
  loopCount: number;
  /** False when the loop count is the default one. */
  loopCountGiven: boolean;
  loops: PathLoop[];
  cut?: PathCut;
  /** Steps the class writes that this path does not take. */
  notDrawn: number[];
}

export interface StrobeRow {
  name: string;
  kind: StrobeKind;
  active: Level;
  /** Asserted in each column. */
  asserted: boolean[];
  /** The ROM output level in each column: the active level where asserted, the other one elsewhere. */
  levels: Level[];
  /** Where the strobe sits: `main bit 14 (chip 1)`; undefined when no store places it. */
  placement?: string;
}

export interface FieldCell {
  /** The value name (or the code in hex when the field has no name for it). */
  value: string;
  code: number;
  /** True where the step sets the field; false where it holds its idle code. */
  set: boolean;
  /** The decode map that gave the value, if one did. */
  map?: string;
}

export interface FieldRow {
  name: string;
  width: number;
  cells: FieldCell[];
  placement?: string;
}

export interface BusCell {
  drivers: string[];
  loaders: string[];
  /** Drivers that share a line (the one rule of model/busDrivers.ts): byte lanes side by side do not fight. */
  contention: boolean;
}

export interface BusRow {
  name: string;
  keeper: boolean;
  cells: BusCell[];
}

export interface StoreWordRow {
  store: string;
  chipWidths: number[];
  /** Address and word per column: the address in hex and each chip's data in hex, chip 0 first. */
  cells: { address: number; addressHex: string; chipHex: string[] }[];
}

export interface TimingModel {
  machineTitle?: string;
  className: string;
  opcode?: number;
  description?: string;
  /** The RV32I instruction the chosen bits spell in this class, if there is exactly one. */
  instruction?: string;
  inputs: ChoiceInput[];
  columns: TimingColumn[];
  strobes: StrobeRow[];
  fields: FieldRow[];
  buses: BusRow[];
  words: StoreWordRow[];
  /** Sentences worth reading next to the picture (inputs the stores cannot see, and so on). */
  notes: string[];
  /** Set on a machine with a sequencer part: the columns follow the sequencer. */
  sequence?: TimingSequence;
}

export interface TimingOptions {
  /** Show every strobe, field and bus of the machine, not only those the class uses. */
  all?: boolean;
  /** On a sequencer machine: how many times each loop goes round before its way out (default 2). */
  loopCount?: number;
}

const closingEdgeKinds: ReadonlySet<StrobeKind> = new Set(['clock', 'count', 'write', 'end', 'trap']);

/** True for strobes whose effect happens at the step's closing edge rather than during it. */
export function actsAtClosingEdge(kind: StrobeKind): boolean {
  return closingEdgeKinds.has(kind);
}

export function findClass(machine: Machine, name: string): ClassDef | undefined {
  return machine.classes.find((c) => c.name === name) ?? machine.classes.find((c) => c.name.toLowerCase() === name.toLowerCase());
}

/**
 * The class whose declaration holds `offset`, if any. Where one declaration ends the next
 * begins, so of two candidates the later-starting one is meant (the cursor at the start of a
 * `class` line is in that class).
 */
export function classAtOffset(machine: Machine, offset: number): ClassDef | undefined {
  let found: ClassDef | undefined;
  for (const c of machine.classes) {
    const span = c.symbol.declSpan;
    if (offset >= span.start && offset <= span.end && (!found || span.start > found.symbol.declSpan.start)) found = c;
  }
  return found;
}

function addressInputsOf(machine: Machine): InputVar[] {
  const inputs: InputVar[] = [];
  for (const store of machine.stores) {
    for (const s of store.address?.sources ?? []) if (s.input.kind !== 'field') inputs.push(s.input);
  }
  return inputs;
}

function placementText(machine: Machine, signal: string): string | undefined {
  for (const store of machine.stores) {
    const p = store.word?.placements.find((q) => q.signal === signal);
    if (!p || !store.word) continue;
    let low = 0;
    let chip = -1;
    for (let i = 0; i < store.word.chipWidths.length; i++) {
      if (p.lo >= low && p.lo < low + store.word.chipWidths[i]) chip = i;
      low += store.word.chipWidths[i];
    }
    const bits = p.lo === p.hi ? `bit ${p.lo}` : `bits ${p.lo}..${p.hi}`;
    const where = machine.stores.length > 1 ? `${store.name} ` : '';
    return `${where}${bits}${chip >= 0 ? ` chip ${chip}` : ''}`;
  }
  return undefined;
}

/** Chip data of a word (32-bit lanes), chip 0 first, in hex with one digit per 4 bits. */

function instructionName(cls: ClassDef, ir: number): string | undefined {
  if (cls.opcode === undefined) return undefined;
  const word = ((ir & ~0x7f) | cls.opcode) >>> 0;
  const funct3 = (word >>> 12) & 7;
  const funct7 = (word >>> 25) & 0x7f;
  const imm12 = word >>> 20;
  const matches = RV32I_INSTRUCTIONS.filter(
    (s) => s.opcode === cls.opcode && (s.funct3 === null || s.funct3 === funct3) && (s.funct7 === null || s.funct7 === funct7) && (s.imm12 === null || s.imm12 === imm12),
  );
  return matches.length === 1 ? matches[0].mnemonic : undefined;
}

/** Builds the diagram data of one class under one guard choice. */
export function timingModel(machine: Machine, cls: ClassDef, choice: GuardChoice, options: TimingOptions = {}): TimingModel {
  const universe = universeOf(machine);
  const decoder = new PointDecoder(machine);
  const irMask = universe.irBits.reduce((mask, bit) => (mask | (1 << bit)) >>> 0, 0);
  const irFull = cls.opcode === undefined ? choice.ir : (((choice.ir & ~0x7f) | cls.opcode) >>> 0);
  const flags = new Map<string, number>();
  for (const flag of universe.flags) flags.set(flag, choice.flags.get(flag) ?? 0);
  const inputs = choiceInputsOf(machine, cls, choice, addressInputsOf(machine));
  const notes: string[] = [];
  for (const input of inputs) {
    if (!input.onAddress) notes.push(`${input.name} is on no store's address lines: the stores cannot tell its values apart, so the steps do as for 0.`);
  }

  const stepNumbers = [...cls.steps.keys()].sort((a, b) => a - b);
  const columns: TimingColumn[] = [];
  const decodes: (PointDecode | undefined)[] = [];
  const pointInputs: PointInputs[] = [];
  let sequence: TimingSequence | undefined;
  let ended = false;
  if (hasSequencer(machine)) {
    const loopCount = options.loopCount ?? defaultLoopCount;
    const path = sequencedPath(machine, cls, decoder, { step: 0, ir: (irFull & irMask) >>> 0, irMask, flags }, loopCount);
    const times = new Map<number, number>();
    for (const c of path.columns) times.set(c.step, (times.get(c.step) ?? 0) + 1);
    const seen = new Map<number, number>();
    for (const c of path.columns) {
      const alts = cls.steps.get(c.step) ?? [];
      const alt = c.decoded.cls === cls ? c.decoded.alt : undefined;
      const guard = alt && alts.length > 1 ? guardText(alt) : undefined;
      seen.set(c.step, (seen.get(c.step) ?? 0) + 1);
      columns.push({
        step: c.step,
        guard: guard === undefined ? undefined : guard === 'else' ? 'else' : `if ${guard}`,
        phase: alt?.phase?.name,
        fillReason: alt ? undefined : c.decoded.fillReason ?? 'no-class',
        reached: true,
        alt,
        visit: times.get(c.step)! > 1 ? seen.get(c.step) : undefined,
        next: c.next,
        goesRound: c.goesRound,
        loopFlags: c.loopFlags,
        ...(c.call && { call: c.call }),
      });
      decodes.push(alt ? c.decoded : undefined);
      pointInputs.push(c.point);
    }
    const notDrawn = stepNumbers.filter((s) => !times.has(s));
    sequence = { loopCount, loopCountGiven: options.loopCount !== undefined, loops: path.loops, cut: path.cut, notDrawn };
    notes.push(...sequenceNotes(sequence, choice));
  }
  for (const step of sequence ? [] : stepNumbers) {
    const point: PointInputs = { step, ir: (irFull & irMask) >>> 0, irMask, flags };
    const decoded = decoder.decode(point);
    const alts = cls.steps.get(step) ?? [];
    const alt = decoded.cls === cls ? decoded.alt : undefined;
    const guard = alt && alts.length > 1 ? guardText(alt) : undefined;
    columns.push({
      step,
      guard: guard === undefined ? undefined : guard === 'else' ? 'else' : `if ${guard}`,
      phase: alt?.phase?.name,
      fillReason: alt ? undefined : decoded.fillReason ?? 'no-class',
      reached: !ended,
      alt,
    });
    decodes.push(alt ? decoded : undefined);
    pointInputs.push(point);
    if (alt?.actions.some((a) => machine.signals.get(a.signal)?.type === 'strobe' && (machine.signals.get(a.signal) as Strobe).kind === 'end')) ended = true;
  }
  if (columns.some((c) => c.fillReason === 'no-map-row')) notes.push('Where a decode map has no row for the chosen bits the store holds the fill word (every strobe inactive).');

  const assertedIn = (name: string, col: number) => !!columns[col].alt?.actions.some((a) => a.signal === name && !a.value);
  const usedSignals = new Set<string>();
  for (const alts of cls.steps.values()) for (const alt of alts) for (const a of alt.actions) usedSignals.add(a.signal);

  const strobes: StrobeRow[] = [];
  const fields = [];
  for (const signal of machine.signals.values()) {
    if (!options.all && !usedSignals.has(signal.name)) continue;
    if (signal.type === 'strobe') {
      const asserted = columns.map((_, i) => assertedIn(signal.name, i));
      const inactive: Level = signal.active === 'high' ? 'low' : 'high';
      strobes.push({ name: signal.name, kind: signal.kind, active: signal.active, asserted, levels: asserted.map((on) => (on ? signal.active : inactive)), placement: placementText(machine, signal.name) });
    } else {
      const nameOf = (code: number) => [...signal.values.values()].find((v) => v.code === code)?.name ?? `0x${toHex(code, Math.ceil(signal.width / 4))}`;
      const cells: FieldCell[] = columns.map((column, i) => {
        const code = decodes[i]?.fieldCodes.get(signal.name);
        if (code === undefined) return { value: nameOf(signal.idle), code: signal.idle, set: false };
        const action = column.alt?.actions.find((a) => a.signal === signal.name);
        return { value: nameOf(code), code, set: true, map: action?.value?.kind === 'map' ? action.value.map : undefined };
      });
      fields.push({ name: signal.name, width: signal.width, cells, placement: placementText(machine, signal.name) });
    }
  }

  const buses: BusRow[] = [];
  for (const bus of machine.buses.values()) {
    const touching = [...machine.signals.values()].filter((s): s is Strobe => s.type === 'strobe' && s.bus === bus.name);
    if (!options.all && !touching.some((s) => usedSignals.has(s.name))) continue;
    const connected = machine.connections.filter((c) => c.bus === bus.name).map((c) => c.name);
    const cells = columns.map((_, i) => {
      const drivers = [...connected, ...touching.filter((s) => (s.kind === 'enable' || s.kind === 'read') && assertedIn(s.name, i)).map((s) => s.name)];
      return {
        drivers,
        loaders: touching.filter((s) => (s.kind === 'clock' || s.kind === 'write') && assertedIn(s.name, i)).map((s) => s.name),
        contention: contendedBuses(machine, drivers).some((c) => c.bus === bus.name),
      };
    });
    buses.push({ name: bus.name, keeper: bus.keeper, cells });
  }

  const words: StoreWordRow[] = [];
  for (const store of machine.stores) {
    if (!store.word || !store.address) continue;
    words.push(storeWords(machine, store, universe, columns, decodes, pointInputs));
  }

  return {
    machineTitle: machine.title,
    className: cls.name,
    opcode: cls.opcode,
    description: cls.description,
    instruction: instructionName(cls, irFull),
    inputs,
    columns,
    strobes,
    fields,
    buses,
    words,
    notes,
    ...(sequence ? { sequence } : {}),
  };
}

/** `3rd`, `11th`, `22nd`. */
export function ordinal(n: number): string {
  const teen = n % 100 >= 11 && n % 100 <= 13;
  const suffix = teen ? 'th' : ['th', 'st', 'nd', 'rd'][n % 10] ?? 'th';
  return `${n}${suffix}`;
}

/** `2 times`, `once`. */
function timesText(n: number): string {
  return n === 1 ? 'once' : `${n} times`;
}

/** What a drawn loop does, for its bracket: `step 3 repeats 3 times (shz=0), then leaves (shz=1)`. */
export function loopText(loop: PathLoop): string {
  const round = loop.flags.filter((f) => f.round !== undefined).map((f) => `${f.name}=${f.round}`).join(' ');
  const out = loop.flags.filter((f) => f.out !== undefined).map((f) => `${f.name}=${f.out}`).join(' ');
  const single = loop.steps.length === 1;
  if (loop.forEver) return `${single ? `step ${loop.entry} repeats` : `${stepsText(loop.steps)} loop`} for ever: no way out (cut)`;
  const what = single ? `step ${loop.entry} repeats ${timesText(loop.repeats)}` : `${stepsText(loop.steps)} loop, back to step ${loop.entry} ${timesText(loop.repeats)}`;
  if (loop.cut) return `${what}${round ? ` (${round})` : ''}: cut before its way out`;
  return `${what}${round ? ` (${round})` : ''}, then ${single ? 'leaves' : 'out'}${out ? ` (${out})` : ''}`;
}

/** Sentences on how the columns follow the sequencer: who set the loop flags, where the path was cut, the steps not drawn. */
function sequenceNotes(sequence: TimingSequence, choice: GuardChoice): string[] {
  const notes: string[] = [];
  for (const loop of sequence.loops) {
    if (loop.forEver || loop.flags.length === 0) continue;
    const names = loop.flags.map((f) => f.name);
    const given = names.filter((n) => choice.flags.has(n));
    const values = loop.flags
      .filter((f) => f.round !== undefined || f.out !== undefined)
      .map((f) => [f.round !== undefined ? `${f.name}=${f.round} while it repeats` : '', f.out !== undefined ? `${f.name}=${f.out} on the way out` : ''].filter(Boolean).join(', '));
    notes.push(
      `In the loop of ${stepsText(loop.steps)} the loop count (${sequence.loopCount}) sets ${names.join(', ')}${values.length ? `: ${values.join('; ')}` : ''}` +
        `${given.length ? `; the guard choice's ${given.map((n) => `${n}=${choice.flags.get(n)}`).join(' ')} holds only outside the loop` : ''}.`,
    );
  }
  const cut = sequence.cut;
  if (cut?.kind === 'bound') {
    notes.push(cut.canEnd ? `The path is longer than ${cut.columns} columns: the drawing stops there (a smaller loop count shortens it).` : `The path does not return to step 0 within ${cut.columns} columns: the drawing stops there.`);
  } else if (cut?.kind === 'for-ever') {
    notes.push(`No path from step ${cut.step} returns to step 0 (micro-loop): the sequencer would go round for ever; drawn ${timesText(cut.times)}, then cut.`);
  } else if (cut?.kind === 'unknown-next') {
    notes.push(`The step after step ${cut.step} is not fixed by its word (a bus gives it): the drawing stops there.`);
  } else if (cut?.kind === 'not-followed') {
    notes.push(`The step after step ${cut.step} is not followed (a return to a step no call of this instruction saved): the drawing stops there.`);
  }
  if (sequence.notDrawn.length) notes.push(`S${stepsText(sequence.notDrawn).slice(1)} of the class ${sequence.notDrawn.length > 1 ? 'are' : 'is'} not on this path (another guard choice takes ${sequence.notDrawn.length > 1 ? 'them' : 'it'}).`);
  return notes;
}

function storeWords(machine: Machine, store: Store, universe: ReturnType<typeof universeOf>, columns: TimingColumn[], decodes: (PointDecode | undefined)[], points: PointInputs[]): StoreWordRow {
  const word = store.word!;
  const addressDigits = Math.max(1, Math.ceil(store.address!.width / 4));
  const cells = columns.map((column, i) => {
    const decoded = decodes[i];
    let lanes: Uint32Array;
    if (column.alt && decoded) {
      // Maps give codes per field; the encoder's word builder wants them per map.
      const mapCodes = new Map<string, number>();
      for (const action of column.alt.actions) {
        if (action.value?.kind === 'map') {
          const code = decoded.fieldCodes.get(action.signal);
          if (code !== undefined) mapCodes.set(action.value.map, code);
        }
      }
      lanes = wordForAlternative(machine, store, column.alt, mapCodes);
    } else {
      lanes = fillWordOf(machine, store);
    }
    const address = addressOf(store, universe, points[i], decoded ?? { step: column.step, fieldCodes: new Map(), mapRows: [] }, machine);
    return { address, addressHex: toHex(address, addressDigits), chipHex: chipHexOfWord(lanes, word.chipWidths) };
  });
  return { store: store.name, chipWidths: word.chipWidths, cells };
}

/** The opcode as the class writes it (7 bits), for titles. */
export function opcodeText(model: TimingModel): string | undefined {
  return model.opcode === undefined ? undefined : toBinary(model.opcode, 7);
}
