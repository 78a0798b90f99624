// The syntax tree of a control-table file. Every node carries the exact span it was parsed
// from; optional fields are missing when the user has not typed them yet, so every later
// stage must accept partial trees. The tree says nothing about meaning: names are not
// resolved and numbers are kept as written (a `101` is a pattern in a guard, a count elsewhere).
import type { Span } from '../text/span';

export interface Name {
  text: string;
  span: Span;
}

/** A number or bit pattern as written; its meaning depends on where it stands. */
export interface Literal {
  text: string;
  span: Span;
}

export interface StringLit {
  /** The text between the quotes, escapes resolved. */
  value: string;
  span: Span;
}

/** A reference to a declared thing: `alu`, `x.rs1`, or an indexed register `x[0]`. */
export interface Ref {
  name: Name;
  index?: Literal;
  /** `result[7:0]`: the low end of a range of bus lines (`index` is the high end). */
  indexLo?: Literal;
  span: Span;
}

/** `key=value` on a declaration line (`x0=hardwired`, `chip=28C64`, `opcode=0110011`). */
export interface OptionNode {
  key: Name;
  value?: Name | Literal;
  span: Span;
}

/** An address input as written: `step`, `funct3`, `taken`, `ir[20]`, `ir[14:12]`. */
export interface InputRef {
  name: Name;
  /** For `ir[hi]` or `ir[hi:lo]`. */
  bitHi?: Literal;
  bitLo?: Literal;
  span: Span;
}

interface DeclBase {
  span: Span;
  keyword: Span;
  description?: StringLit;
}

export interface MachineDecl extends DeclBase {
  kind: 'machine';
  title?: StringLit;
  isa?: Name;
  /** Machine-wide figures: supply voltage and budget, planned step clock. */
  options: OptionNode[];
}

export interface BusDecl extends DeclBase {
  kind: 'bus';
  name?: Name;
  width?: Literal;
  keeper?: Span;
  options: OptionNode[];
}

export type PartArg =
  | { kind: 'word'; name: Name; span: Span }
  | { kind: 'number'; value: Literal; span: Span }
  | { kind: 'option'; option: OptionNode; span: Span }
  | { kind: 'arrow'; target?: Name; span: Span };

export interface PartDecl extends DeclBase {
  kind: 'part';
  name?: Name;
  partKind?: Name;
  args: PartArg[];
}

export interface StrobeDecl extends DeclBase {
  kind: 'strobe';
  name?: Name;
  strobeKind?: Name;
  /** What comes before the arrow (or the only operand, for `count pc`). */
  source?: Ref;
  arrow?: Span;
  target?: Ref;
  activeKeyword?: Span;
  level?: Name;
  /** Electrical and timing figures (`load=12`); see docs/notation.md. */
  options: OptionNode[];
  /** `accept width-mismatch`: diagnostics the designer accepts on this line. */
  accept?: AcceptClause;
}

/** `accept CODE {, CODE}` at the end of a declaration line: a deliberate choice, not a mistake. */
export interface AcceptClause {
  keyword: Span;
  codes: Name[];
  span: Span;
}

export interface FieldValueNode {
  name: Name;
  code?: Literal;
  span: Span;
}

export interface FieldDecl extends DeclBase {
  kind: 'field';
  name?: Name;
  width?: Literal;
  arrow?: Span;
  target?: Ref;
  options: OptionNode[];
  values: FieldValueNode[];
  open?: Span;
  close?: Span;
}

export interface StoreDecl extends DeclBase {
  kind: 'store';
  name?: Name;
}

export interface ChipSpec {
  span: Span;
  /** `4 x 8`: count and one width. `8 + 8 + 16`: widths only. */
  count?: Literal;
  widths: Literal[];
}

export interface Placement {
  target: Ref;
  lo?: Literal;
  hi?: Literal;
  span: Span;
}

export interface WordDecl extends DeclBase {
  kind: 'word';
  width?: Literal;
  chips?: ChipSpec;
  options: OptionNode[];
  placements: Placement[];
}

export interface AddressSource {
  input: InputRef;
  lo?: Literal;
  hi?: Literal;
  span: Span;
}

export interface AddressDecl extends DeclBase {
  kind: 'address';
  width?: Literal;
  sources: AddressSource[];
}

export interface MapRow {
  patterns: Literal[];
  value?: Name;
  /** The row's number, for a map that sets a number field (a jump table: `001 3`). */
  number?: Literal;
  span: Span;
}

export interface MapDecl extends DeclBase {
  kind: 'map';
  name?: Name;
  inputs: InputRef[];
  arrow?: Span;
  output?: Ref;
  rows: MapRow[];
}

export interface GuardTerm {
  negated?: Span;
  input: InputRef;
  pattern?: Literal;
  span: Span;
}

export interface GuardNode {
  terms: GuardTerm[];
  /** Set for `N else:`, the alternative taken when no other guard of the step matches. */
  elseKeyword?: Span;
  span: Span;
}

export interface ActionNode {
  target: Ref;
  equals?: Span;
  /** A value name of the field, or the name of a decode map. */
  value?: Name;
  /** A number, for a number field (`next=5`). */
  number?: Literal;
  span: Span;
}

export interface StepLine {
  kind: 'step';
  number: Literal;
  guard?: GuardNode;
  colon?: Span;
  actions: ActionNode[];
  span: Span;
}

export interface UseLine {
  kind: 'use';
  keyword: Span;
  phase?: Name;
  at?: Literal;
  span: Span;
}

export type BodyItem = StepLine | UseLine;

export interface PhaseDecl extends DeclBase {
  kind: 'phase';
  name?: Name;
  body: BodyItem[];
}

export interface ClassDecl extends DeclBase {
  kind: 'class';
  name?: Name;
  options: OptionNode[];
  body: BodyItem[];
}

/** Text of an expression as written (parsed by `core/parts/expr`), with its exact span. */
export interface ExprText {
  text: string;
  span: Span;
}

/** A width or count as written: a number, or the name of a number setting of the kind. */
export type SizeRef = Literal | Name;

interface KindLineBase {
  keyword: Span;
  name?: Name;
  description?: StringLit;
  span: Span;
}

/** `setting NAME number [= N]` or `setting NAME choice A B C [= A]`. */
export interface KindSettingLine extends KindLineBase {
  item: 'setting';
  type?: Name;
  choices: Name[];
  default?: Name | Literal;
}

/** `input NAME WIDTH [after WORD | instruction]`: an operand wired on the part line. */
export interface KindInputLine extends KindLineBase {
  item: 'input';
  width?: SizeRef;
  /** `after from`: the part line writes `from NAME` for this input. */
  after?: Name;
  /** `instruction`: wired to the machine's instruction register, never written on the part line (after `after WORD`: unless the part line names it). */
  instruction?: Span;
  /** `keyed`: written `NAME=SOURCE` on the part line. */
  keyed?: Span;
  /** `field`: written `NAME=FIELD` on the part line, FIELD a number field of the word (its code in each step). */
  field?: Span;
}

/** `control NAME: A B C`: the value names a field controlling the part may use. */
export interface KindControlLine extends KindLineBase {
  item: 'control';
  values: Name[];
  /** `= VALUE`: what the control holds when no field drives it. */
  default?: Name;
}

/** `holds ROLE STATE`: the state holds an RV32I architectural role (registers, instruction, pc). */
export interface KindHoldsLine extends KindLineBase {
  item: 'holds';
  state?: Name;
  /** Further states after the first (`holds return r0 r1`: a stack of return registers, top first). */
  more?: Name[];
}

/** `state NAME WIDTH [x COUNT] [= RESET]`. */
export interface KindStateLine extends KindLineBase {
  item: 'state';
  width?: SizeRef;
  count?: SizeRef;
  reset?: ExprText;
}

/** `drive NAME WIDTH = EXPR`: a port an enable or read strobe puts on a bus. */
export interface KindDriveLine extends KindLineBase {
  item: 'drive';
  /** `NAME[P]`: a numbered port; P stands for the number a strobe writes (`x[5]`). */
  param?: Name;
  width?: SizeRef;
  expr?: ExprText;
}

/** `flag NAME = EXPR`: a one-bit output the address lines and guards may read. */
export interface KindFlagLine extends KindLineBase {
  item: 'flag';
  expr?: ExprText;
}

/** One `TARGET[INDEX] <= EXPR [when COND]` of an `on` line. */
export interface KindAssign {
  target: Name;
  index?: ExprText;
  expr?: ExprText;
  when?: ExprText;
  span: Span;
}

/** `on NAME [WIDTH]: TARGET <= EXPR, ...`: what a clock, count or write strobe does at the closing edge. */
export interface KindEdgeLine extends KindLineBase {
  item: 'on';
  /** `NAME[P]`: a numbered port; P stands for the number a strobe writes (`x[5]`). */
  param?: Name;
  /** Width of the bus value the strobe brings (`in`); none for a count or a latch. */
  width?: SizeRef;
  /** `always`: acts at every closing edge, no strobe (the edge twin of `connect`). */
  always?: Span;
  assigns: KindAssign[];
}

export type KindItem = KindSettingLine | KindInputLine | KindControlLine | KindHoldsLine | KindStateLine | KindDriveLine | KindFlagLine | KindEdgeLine;

/** `kind NAME "description"` and its indented lines: a part kind defined in the notation. */
export interface KindDecl extends DeclBase {
  kind: 'kind';
  name?: Name;
  items: KindItem[];
}

/** `connect PART[.PORT] -> BUS[hi:lo] ["description"]`: a driver that is on in every step, with no strobe. */
export interface ConnectDecl extends DeclBase {
  kind: 'connect';
  source?: Ref;
  arrow?: Span;
  target?: Ref;
}

export type Decl =
  | KindDecl
  | ConnectDecl
  | MachineDecl
  | BusDecl
  | PartDecl
  | StrobeDecl
  | FieldDecl
  | StoreDecl
  | WordDecl
  | AddressDecl
  | MapDecl
  | PhaseDecl
  | ClassDecl;

export interface FileNode {
  decls: Decl[];
  span: Span;
}

/** Words that start a declaration when they begin a line. */
export const declarationKeywords = [
  'machine',
  'kind',
  'bus',
  'part',
  'strobe',
  'connect',
  'field',
  'store',
  'word',
  'address',
  'map',
  'phase',
  'class',
] as const;
