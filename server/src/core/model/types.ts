// The semantic model of one machine: what the checks, the encoder, the simulator and the
// editor features read. It is built from a possibly broken syntax tree, so every collection
// holds only what could be understood; problems were reported while building it. Names map to
// the first declaration of that name (later duplicates are reported and left out).
import type { Span } from '../text/span';
import type { KindDef } from '../parts/kinds';

export type Level = 'high' | 'low';

export type SymbolKind = 'bus' | 'part' | 'port' | 'flag' | 'strobe' | 'field' | 'value' | 'map' | 'phase' | 'class' | 'store' | 'kind';

/** A declared name. `key` identifies it uniquely (values are `field/value`, ports `part.port`). */
export interface SymbolInfo {
  kind: SymbolKind;
  name: string;
  key: string;
  /** The span of the name where it is declared. */
  span: Span;
  /** The whole declaration (line or block). */
  declSpan: Span;
  /** `library`: declared in the standard library; its spans are offsets in the library's text. */
  origin?: 'library';
}

/** A use of a declared name, at `span` (the name's text only). */
export interface Reference {
  span: Span;
  symbol: SymbolInfo;
}

export interface Bus {
  name: string;
  width: number;
  keeper: boolean;
  description?: string;
  symbol: SymbolInfo;
  figures: Figures;
}

/**
 * Where an input of a part comes from: a bus, another part's value, the instruction register, or
 * a number field of the word (`input target 4 field`: the field's code in each step, a constant
 * per control word; `span` is where the part line names it).
 */
export type InputSource = { from: 'bus'; name: string } | { from: 'part'; name: string } | { from: 'instruction' } | { from: 'field'; name: string; span: Span };

/**
 * A part: an instance of a part kind (the standard library's or the table's own, `kind`), read
 * from its part line against the kind's definition (model/buildPart.ts). Everything the
 * checks, the simulator, the prover and the editor know about it comes from `def` and what the
 * part line and the fields set here; no layer asks which kind it is by name.
 */
export interface Part {
  name: string;
  /** The width setting's value, or the first drive port's width for a kind without one. */
  width: number;
  description?: string;
  symbol: SymbolInfo;
  figures: Figures;
  /** The kind's name (`def.name`). */
  kindName: string;
  def: KindDef;
  /** Every setting of the kind, with the part line's value or the kind's default. */
  settings: Map<string, number | string>;
  inputs: Map<string, InputSource>;
  /** Machine flag name of each of the kind's flags (`-> NAME` on the part line, in order). */
  flagNames: Map<string, string>;
  /** The field that drives each of the kind's controls (`field F W -> PART.CONTROL`). */
  controlFields: Map<string, string>;
  /** Each driven control's value names and the codes its field gives them. */
  controlValues: Map<string, ReadonlyMap<string, number>>;
}

/** A one-bit flag produced by a part (`flag` in its kind) and usable as an address input. */
export interface Flag {
  name: string;
  part: string;
  symbol: SymbolInfo;
}

export type StrobeKind = 'enable' | 'read' | 'write' | 'clock' | 'count' | 'end' | 'trap';

/** Electrical and timing figures (`name=value`), kept as numbers with their spans. */
export type Figures = Map<string, { value: number; span: Span }>;

export interface Strobe {
  type: 'strobe';
  name: string;
  kind: StrobeKind;
  active: Level;
  /** True when `active` was written; the default is high. */
  activeWritten: boolean;
  description?: string;
  /** The part driven, loaded, counted, read or written. */
  part?: string;
  /** The port as written (`x.rs1` gives `rs1`), or `x[n]` for a numbered port. */
  port?: string;
  /** For `x[n]` ports. */
  register?: number;
  /** The drive or edge port of the part's kind the strobe uses (named or the default). */
  kindPort?: string;
  /** A connection (`connect`): on in every step, held by no control bit. */
  always?: boolean;
  /** The bus driven (enable, read) or loaded from (clock, write). */
  bus?: string;
  /** The lines of the bus it drives or loads (`result[7:0]`); undefined for the whole bus. */
  lines?: { hi: number; lo: number };
  symbol: SymbolInfo;
  figures: Figures;
}

export interface FieldValue {
  name: string;
  code: number;
  symbol: SymbolInfo;
}

export interface Field {
  type: 'field';
  name: string;
  width: number;
  target?: string;
  values: Map<string, FieldValue>;
  /** Code the field holds where no step sets it (the fill word's value). */
  idle: number;
  /** A number field (`field next 4`, no values, no part): a step sets it with a number, which is its code. */
  numeric?: boolean;
  description?: string;
  symbol: SymbolInfo;
}

export type Signal = Strobe | Field;

/** An address input variable: instruction-register bits, a flag, or the step counter. */
export type InputVar = { kind: 'ir'; hi: number; lo: number } | { kind: 'flag'; name: string } | { kind: 'step' };

export interface Placement {
  signal: string;
  lo: number;
  hi: number;
  span: Span;
}

export interface ChipType {
  name: string;
  /** Number of addresses (words) each chip holds. */
  depth: number;
  /** Data bits per chip. */
  width: number;
}

export interface WordLayout {
  width: number;
  chipWidths: number[];
  chip?: ChipType;
  /** Level of word bits no signal occupies. */
  unusedLevel: 0 | 1;
  placements: Placement[];
  span: Span;
  /** Control-store figures: access time, output drive. */
  figures: Figures;
}

export interface AddressSource {
  /** What feeds these address lines. `field` is a field of another store (an entry-point decoder). */
  input: InputVar | { kind: 'field'; name: string };
  /** Display name as written (`funct3`, `ir[20]`, `taken`). */
  label: string;
  lo: number;
  hi: number;
  span: Span;
}

export interface AddressLayout {
  width: number;
  sources: AddressSource[];
  span: Span;
}

export interface Store {
  name: string;
  implicit: boolean;
  description?: string;
  word?: WordLayout;
  address?: AddressLayout;
  symbol: SymbolInfo;
}

/** One condition on an address input: its bits, most significant first, with `-` for any. */
export interface GuardLiteral {
  input: InputVar;
  label: string;
  bits: string;
  span: Span;
}

export type ActionValue = { kind: 'code'; name: string; code: number } | { kind: 'map'; map: string };

export interface Action {
  signal: string;
  value?: ActionValue;
  span: Span;
}

/** One alternative of a step: its guard (null = always) and what it asserts. */
export interface StepAlt {
  step: number;
  guard: GuardLiteral[] | null;
  isElse: boolean;
  actions: Action[];
  /** The step line. */
  span: Span;
  numberSpan: Span;
  /** Set when the step comes from a phase through `use`. */
  phase?: { name: string; useSpan: Span };
}

export interface MapRow {
  patterns: string[];
  value: string;
  code: number;
  span: Span;
}

export interface DecodeMap {
  name: string;
  inputs: { input: InputVar; label: string; width: number; span: Span }[];
  output?: string;
  rows: MapRow[];
  description?: string;
  symbol: SymbolInfo;
}

export interface Phase {
  name: string;
  description?: string;
  steps: StepAlt[];
  symbol: SymbolInfo;
}

export interface ClassDef {
  name: string;
  /** The 7-bit major opcode, when given and valid. */
  opcode?: number;
  opcodeSpan?: Span;
  description?: string;
  /** Alternatives by step number, phases expanded. */
  steps: Map<number, StepAlt[]>;
  symbol: SymbolInfo;
}

export interface Machine {
  title?: string;
  /** Part kinds by name: the standard library's and the table's own (`kind` declarations). */
  kinds: Map<string, KindDef>;
  isa?: string;
  /** Machine-wide figures from the `machine` line: supply, budget, planned clock. */
  figures: Figures;
  buses: Map<string, Bus>;
  parts: Map<string, Part>;
  flags: Map<string, Flag>;
  signals: Map<string, Signal>;
  /**
   * Drivers that are on in every step, with no strobe (`connect`): enable-like strobes named
   * `connect PART.PORT`, not in `signals` (no control bit holds them). The contention and
   * latch rules count them in every step.
   */
  connections: Strobe[];
  stores: Store[];
  maps: Map<string, DecodeMap>;
  phases: Map<string, Phase>;
  classes: ClassDef[];
  symbols: SymbolInfo[];
  references: Reference[];
  /** Width of the step counter: the widest `step` address source of any store. */
  stepBits?: number;
  /** The instruction register (the part whose kind `holds instruction`), when one is declared. */
  instructionRegister?: string;
  /**
   * The sequencer: the part whose kind `holds step` (its state is the step counter the address
   * lines read). Without one the machine has the implicit counter (`end` returns it to 0).
   */
  sequencer?: string;
}

/** Where a signal sits: the store, its bits, and the chips those bits land in. */
export interface SignalLocation {
  store: Store;
  placement: Placement;
}
