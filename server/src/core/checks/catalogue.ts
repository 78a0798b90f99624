// The catalogue of diagnostic codes: the stable code users put in settings, its default
// severity, a one-line title, and the long explanation `phasewright explain CODE` prints.
// docs/diagnostics.md shows every code with an example and its fix; a test keeps the two in step.
import type { Severity } from '../text/diagnostic';

export interface CodeInfo {
  code: string;
  severity: Severity;
  title: string;
  /** What goes wrong in the hardware and what to do, in plain words. */
  explanation: string;
  /**
   * The line that causes it may say `accept CODE`: the code marks a design choice that can be
   * deliberate (never a hazard to hardware), so one line may accept it and the rest still report it.
   */
  acceptable?: true;
}

const HEAT_CAUTION =
  'Caution: outputs that fight each other on a bus pass large currents through both drivers; parts can overheat and be damaged within seconds. Fix the table before powering the board, and check the drivers\' data sheets for their short-circuit ratings.';

export const catalogue: CodeInfo[] = [
  {
    code: 'syntax-error',
    severity: 'error',
    title: 'the line does not follow the notation',
    explanation: 'The parser could not read this line. The message says what it expected at that place. The rest of the file is still read, from the next line or declaration on, so one typo does not hide other problems. See docs/notation.md for the grammar.',
  },
  {
    code: 'undefined-name',
    severity: 'error',
    title: 'a name is used but never declared',
    explanation: 'A step, layout, map or declaration refers to a bus, part, strobe, field, value, map, phase or flag that no declaration introduces. Usually a typo: the message suggests the closest declared name, and the quick fix replaces it. Otherwise, declare the name.',
  },
  {
    code: 'duplicate-name',
    severity: 'error',
    title: 'a name is declared twice',
    explanation: 'Two declarations of the same kind of thing share a name (buses and parts share one set of names; strobes and fields another). Only the first is used. Rename or remove one. A store also has only one word layout and one address layout.',
  },
  {
    code: 'unused-name',
    severity: 'warning',
    title: 'a declaration is never used',
    explanation: 'A strobe or field that no step asserts, a bus no strobe touches, a part nothing is wired to, a map or phase nobody uses, or a flag no guard or address tests. Harmless in itself, but often a sign of a forgotten step or a misspelt name. The quick fix removes an unused strobe and its placement in the word.',
  },
  {
    code: 'kind-definition',
    severity: 'error',
    title: 'a part kind\'s definition cannot be read as written',
    explanation: 'A `kind` declaration describes what a part does: its settings, inputs, controls, state, the ports strobes use and what happens at the closing edge (docs/notation.md, "Part kinds"). This line breaks one of its rules: a size that is neither a number nor a number setting declared above, a default that is not one of the choices, a closing-edge action on something that is not state, an index missing on (or added to) a register array, or a kind with no port at all. The line is left out, so the kind does less than you meant until it is fixed.',
  },
  {
    code: 'kind-not-wired',
    severity: 'error',
    title: 'a kind of the table\'s own uses something this version does not run yet',
    explanation: 'Kinds you declare with `kind` are read, width-checked, simulated and checked like the standard library\'s, except for what this version does not run yet: a state or a drive port wider than 32 bits (the simulator holds values of up to 32 bits). Its expressions are still checked, but rather than simulate a part it cannot hold, Phasewright reports the line. Split the state or port into parts of 32 bits or fewer.',
  },
  {
    code: 'unknown-kind',
    severity: 'error',
    title: 'an unknown part kind, strobe kind, setting or chip',
    explanation: 'The word after a part name must be a kind: one from the standard library or one the table declares with `kind`; the word after a strobe name must be a strobe kind; settings written `name=value` must be ones the declaration accepts; a chip must be a known part number or DEPTHxWIDTH. The message lists what is accepted.',
  },
  {
    code: 'wrong-wiring',
    severity: 'error',
    title: 'a strobe, field or part is wired to something that cannot do it',
    explanation: 'For example: an enable from a part with no output (a comparator), a clock into an ALU, a register-file port used the wrong way round (rd is an input; rs1 and rs2 are outputs), a field controlling a register, a value name an ALU does not know, or a map feeding a different field. The message says what the part can do.',
  },
  {
    code: 'bad-number',
    severity: 'error',
    title: 'a number or bit pattern is malformed or out of range',
    explanation: 'Widths, bit numbers, codes and opcodes must be whole numbers in range; bit patterns in guards and maps must have exactly as many 0, 1 or - characters as the input has bits. Electrical and timing figures (`name=number`) must lie in the range a real part can have (docs/budget.md lists each one): a zero or negative resistance, a zero supply or an LED forward voltage at or above the supply would make every sum after it wrong, so the figure is refused and left out.',
  },
  {
    code: 'width-mismatch',
    severity: 'warning',
    title: 'a part and its bus differ in width',
    explanation: 'A part drives or loads a bus of a different width. The extra bus lines float or the part\'s extra bits are lost. Usually a typo in a width. When the change is deliberate (a 16-bit register on the low lines of a 32-bit bus, an 8-bit port reading the low byte), write `accept width-mismatch` at the end of that strobe line (before its description): that line no longer reports it, every other line still does. The quick fix adds it.',
    acceptable: true,
  },
  {
    code: 'bus-contention',
    severity: 'error',
    title: 'two outputs drive one bus in the same step',
    explanation: 'Two or more enables (or a memory read) put values on the same bus in one step, for at least one combination of the guard inputs. The drivers fight: the bus carries neither value, and both drivers pass a large current. ' + HEAT_CAUTION + ' Remove all but one of the enables, or move one to another step.',
  },
  {
    code: 'field-conflict',
    severity: 'error',
    title: 'a field is given two values in one step',
    explanation: 'A field (a group of control bits, such as the ALU function) holds one code at a time; a step that sets it twice cannot be encoded. Keep one value.',
  },
  {
    code: 'repeated-strobe',
    severity: 'warning',
    title: 'a strobe is listed twice in one step',
    explanation: 'Asserting a strobe twice in one step is the same as once; the second mention is probably meant to be a different strobe.',
  },
  {
    code: 'clock-conflict',
    severity: 'error',
    title: 'a part is loaded twice in one step',
    explanation: 'A register loaded from two buses in the same step, or a counter both loaded and counted, cannot do both at one clock edge: which wins depends on the chip. Keep one load per part per step. A part of the table\'s own kind may hold several registers (states): two of its closing-edge ports conflict only when they assign the same state.',
  },
  {
    code: 'x0-write',
    severity: 'error',
    title: 'an explicit write to register x0',
    explanation: 'RV32I defines x0 as always zero. A strobe that clocks the register file\'s x[0] writes it: on a hard-wired x0 nothing happens, on a stored x0 every later read of x0 returns the written value and every instruction that relies on zero goes wrong. Remove the write.',
  },
  {
    code: 'rd-without-field',
    severity: 'error',
    title: 'a register write in a format that has no rd',
    explanation: 'In the S (stores) and B (branches) formats, instruction bits 11..7 hold immediate bits, not rd. A register-file write through the rd port in such a class writes whichever register the offset happens to name, corrupting it. Remove the write from this class.',
  },
  {
    code: 'x0-stored-write',
    severity: 'error',
    title: 'x0 is a stored register and nothing stops writes to it',
    explanation: 'The register file keeps x0 in a real register (x0=stored), and classes write rd without suppression. RV32I instructions with rd = x0 are common (the canonical NOP is `addi x0, x0, 0`; `jal x0, label` is a plain jump): each would store into x0. Declare `x0=hardwired` (x0 reads as zero, writes ignored) or `x0=guarded` (a zero detector on rd blocks the clock), or protect x0 in the microcode: put the rd bits on the address lines (`ir[11:7]`) and write rd only on a line whose guard excludes rd = 00000 (`N if ir[11:7]=00000: ...` without the write, `N else: ..., x.rd.ck`). The check follows every instruction with rd = x0 from step 0 along its guards and reports only the writes it reaches.',
  },
  {
    code: 'undriven-latch',
    severity: 'error',
    title: 'a part latches a bus that nothing drives',
    explanation: 'A clock or memory write takes a bus no enable drives in that step (or the ALU output when the ALU\'s operand bus is undriven). Without bus keepers the lines float: the part stores whatever noise is on them, and floating CMOS inputs can draw extra supply current. Enable a driver in the same step, or move the load.',
  },
  {
    code: 'stale-latch',
    severity: 'warning',
    title: 'a part latches a bus that only its keepers hold',
    explanation: 'Nothing drives the bus in this step, but it has keepers (bus-hold), so the part stores the last value driven in an earlier step. This works only if that earlier value is the one meant; it usually is not. Drive the bus explicitly.',
  },
  {
    code: 'instruction-uncovered',
    severity: 'error',
    title: 'an RV32I instruction is not decoded',
    explanation: 'An RV32I instruction reaches no class (no class has its opcode), or a decode map used by its class has no row for its funct3/funct7 bits. Its control-store addresses hold the fill word: the processor does nothing for it, silently. Add the class or the map row. Coverage follows what each instruction actually runs: its steps from step 0 along its guards until a step ends it, so a map on a line the instruction never reaches (a guard it does not meet, a step after its end) needs no row for it.',
  },
  {
    code: 'class-no-end',
    severity: 'error',
    title: 'a class never ends the instruction',
    explanation: 'No path through the class\'s steps asserts an end-of-instruction strobe before the step counter runs out. The counter wraps around and the processor never fetches the next instruction. Assert the end strobe in the last step (the quick fix adds it). On a machine with a sequencer part the same holds for returning the sequencer to step 0: a class none of whose steps returns it there, or a path that counts on past the class\'s last step into fill words.',
  },
  {
    code: 'micro-loop',
    severity: 'error',
    title: 'an instruction reaches steps it can never leave',
    explanation: 'On a machine with a sequencer part, some instruction reaches a set of steps from which no path returns the sequencer to step 0, whatever its flags do: the steps jump, hold or count among themselves for ever. The instruction never ends, the next one is never fetched and the processor hangs in those words. Give the loop a way out: an alternative, guarded by a flag the loop changes, that returns to 0 or goes to a step that does.',
  },
  {
    code: 'call-without-return',
    severity: 'error',
    title: 'a routine is called but ends the instruction without returning',
    explanation: 'On a machine whose sequencer has a return register, a step calls a routine (the sequencer keeps the step after the call to come back to), but some path through the routine returns the sequencer to step 0 before any return: the instruction ends inside the routine and the steps after the call never run, so whatever they were to do (write the result, step the pc) is lost. End the routine with `return`; a shared routine that is meant to end the instruction is entered with `goto`, not `call`.',
  },
  {
    code: 'return-without-call',
    severity: 'error',
    title: 'a return with no step saved by a call',
    explanation: 'On a machine whose sequencer has a return register, a step returns (its next step is read from the return register), but on the path that reaches it no call of the same instruction saved a step there, or the saved step was already returned to. The register still holds what an earlier instruction left, so the sequencer goes on at a step nobody chose and the instruction runs words of the table at random. Reach the returning step only through a call, or jump (`goto`) to the step meant.',
  },
  {
    code: 'return-depth',
    severity: 'error',
    title: 'calls nest deeper than the return registers',
    explanation: 'On a machine whose sequencer has return registers, a routine calls another while as many calls are open as the sequencer has return registers (`holds return r` is one; `holds return r0 r1` two). The new call overwrites the step an open call saved, so when the outer routine returns it goes back to the wrong step. Nest calls no deeper than the registers, or use a sequencer kind with more of them.',
  },
  {
    code: 'next-step-unknown',
    severity: 'error',
    title: 'the table does not fix where a step goes next',
    explanation: 'On a machine with a sequencer part, the next step after some step is read from something the table does not fix: an input of the sequencer wired to a bus or another part, not to a number field of the word or a decode map on the instruction\'s bits. The hardware may well be right, but Phasewright cannot follow the instruction past that step, so the control-flow checks, the coverage along the control flow and the cycle counts for it are not computed. Rather than let the table look checked, this is an error: give the sequencer its targets from number fields of the word, or from decode maps (a jump table on funct3: `map jumps (funct3) -> next` with a step number per row).',
  },
  {
    code: 'loop-exit-unchanged',
    severity: 'error',
    title: 'a loop exits only on flags the loop never changes',
    explanation: 'On a machine with a sequencer part, steps that repeat (a wait holding a step, a jump back) leave only on flags that none of the loop\'s steps can change: a latched flag changes only at a closing edge where its part is clocked or counted (or a part it reads), a combinational one also when a bus it reads is driven. If the loop is entered with those flags set the way that keeps it going, they stay so and the loop never ends. Change the flag inside the loop (count the loop counter down, latch the comparator) or exit on a flag the loop does change.',
  },
  {
    code: 'jump-outside',
    severity: 'error',
    title: 'a jump goes to a step the class does not have',
    explanation: 'On a machine with a sequencer part, a step\'s word loads the sequencer with a step number that the class does not write and no phase places there. The control store holds the fill word at that address (every strobe idle, the sequencer counting on), so the instruction runs fill words until it wraps to step 0, and the simulator stops with an illegal instruction. Jump to a step of the class (or of the phase it uses), or write the step.',
  },
  {
    code: 'step-unreachable',
    severity: 'warning',
    title: 'a written step is never reached',
    explanation: 'On a machine with a sequencer part, no instruction of the class reaches the step from step 0: nothing counts into it and no jump targets it, for any flag value. Its word takes store space and never runs; usually a jump target is mistyped or a loop\'s exit goes elsewhere. Jump to the step where it is meant to run, or remove it.',
  },
  {
    code: 'step-overflow',
    severity: 'error',
    title: 'a step number does not fit the step counter',
    explanation: 'The step counter has as many bits as the `step` lines in the address layout; this step number needs more. The ROM can never reach it. Widen the step counter (and the address) or use fewer steps.',
  },
  {
    code: 'step-gap',
    severity: 'warning',
    title: 'a class skips a step number',
    explanation: 'Between step 0 and the class\'s last step a number is missing. At that step the ROM holds the fill word: one clock cycle passes with every strobe idle. Renumber the steps or fill the gap.',
  },
  {
    code: 'guard-gap',
    severity: 'error',
    title: 'no alternative of a step applies to some inputs',
    explanation: 'The guarded alternatives of a step do not cover every value of the inputs they test, and an RV32I instruction (or a flag value) falls into the gap. There the ROM holds the fill word and the instruction does nothing at that step. Add the missing alternative, or an `else` line. Gaps that only illegal encodings reach are allowed: those fall to the fill word by design.',
  },
  {
    code: 'guard-overlap',
    severity: 'error',
    title: 'two alternatives of a step apply to the same inputs',
    explanation: 'Two lines of the same step (including one from a used phase) both match some combination of address inputs, so the control word there is undefined. Make the guards disjoint, or merge the lines.',
  },
  {
    code: 'class-opcode',
    severity: 'error',
    title: 'a class has no usable opcode',
    explanation: 'Each class handles one RV32I major opcode, given as seven bits (`opcode=0110011`). The opcode is missing, not an RV32I major opcode, or already taken by another class.',
  },
  {
    code: 'bit-overlap',
    severity: 'error',
    title: 'two signals share a bit, or two inputs share an address line',
    explanation: 'Each bit of the control word carries one strobe or field bit, and each address line one input. Overlapping placements make both wrong. Move one. A signal is also placed in one store only.',
  },
  {
    code: 'bit-range',
    severity: 'error',
    title: 'a bit or address line beyond the declared width',
    explanation: 'A placement uses a bit at or above the word width, or an address source a line at or above the address width. Widen the word or address, or move the placement.',
  },
  {
    code: 'unplaced-signal',
    severity: 'error',
    title: 'a strobe used in steps has no bit in any control word',
    explanation: 'The strobe or field is asserted by steps but no word layout gives it a bit, so no ROM produces it. Place it in a store\'s word layout.',
  },
  {
    code: 'placement-width',
    severity: 'error',
    title: 'a placement or address source has the wrong number of bits',
    explanation: 'A one-bit strobe needs one bit; a field needs exactly its width; an instruction field in the address needs as many lines as it has bits (opcode 5, funct3 3, f7b5 1).',
  },
  {
    code: 'value-too-wide',
    severity: 'error',
    title: 'a field code does not fit its bits',
    explanation: 'A named value\'s code needs more bits than the field has. The ROM would store a truncated code, selecting a different function. Widen the field or pick a smaller code.',
  },
  {
    code: 'chip-capacity',
    severity: 'error',
    title: 'the word or address does not fit the declared chips',
    explanation: 'The chips hold fewer data bits than the word, or fewer words than the address lines can select, or a chip\'s width differs from its byte lane. Choose bigger chips or narrow the layout.',
  },
  {
    code: 'not-addressable',
    severity: 'error',
    title: 'the control store cannot see an input the table depends on',
    explanation: 'A guard, decode map or class depends on an input (flag, instruction bits, the opcode, the step counter) that no store\'s address lines carry, so the ROM cannot react to it. Add it to an address layout.',
  },
  {
    code: 'store-ambiguous',
    severity: 'error',
    title: 'a store cannot hold its signals for some addresses',
    explanation: 'A store\'s address lines do not carry everything its signals depend on: two situations that the table treats differently land on the same address of that store. For example a decoder store without step lines holding a field that changes from step to step. Add the missing inputs to that store\'s address, or move the signal to a store that has them.',
  },
  {
    code: 'entry-unreachable',
    severity: 'error',
    title: 'a step\'s word is not where the chained stores point',
    explanation: 'With an entry-point decoder (a store whose field feeds another store\'s address), each step\'s word is laid at the address the table\'s own field values form, but the board forms it from what the decoder store holds. Where the two differ the step never runs: the processor reads another word there, usually the fill word (every strobe idle). The usual cause is a fetch phase that does not set the entry field: its words then stand at the field\'s idle code, while at step 0 the decoder points at the entry of the instruction left in the instruction register, so nothing is ever fetched. The check follows every RV32I instruction from step 0 along its guards through the encoded stores, as the address lines do, so fetch must run at every entry the decoder gives. Set the field in every step (a decode map on the opcode gives each class its own value).',
  },
  {
    code: 'map-overlap',
    severity: 'error',
    title: 'two rows of a decode map match the same inputs with different values',
    explanation: 'Decode-map rows must be disjoint where their values differ, or the field\'s code is undefined for those inputs. Narrow the patterns. Each row is reported against the earliest row it clashes with; after 100 such rows in one map the others are counted in one more message. A map with so many different patterns of don\'t-cares that the check cannot compare all of them in bounded time is reported too, naming the first row not compared: such a map cannot be shown to be safe, so write fewer patterns or split it.',
  },
  {
    code: 'strobe-overload',
    severity: 'error',
    title: 'a control line drives more load than the control store can',
    explanation: 'From your figures: the inputs a strobe reaches (loads x in_ua, times cards for a register file) plus its LED need more current than the control store\'s outputs are rated for (drive_ma on the word). The line sags out of its logic levels and the chip heats. Buffer the line or reduce its load. This is an estimate from entered figures; check the data sheets and measure.',
  },
  {
    code: 'bus-overload',
    severity: 'error',
    title: 'a bus driver is rated for less than the bus loads it with',
    explanation: 'From your figures: each bus line is loaded by every other part on the bus (inputs, idle drivers\' leakage), the keeper\'s overdrive current and an indicator LED. A driver rated (drive_ma) below that load cannot hold valid levels. Each driver is checked on its own, so the lightest is flagged first as the load grows. Use a stronger driver or a buffer. An estimate: check the data sheets and measure.',
  },
  {
    code: 'supply-budget',
    severity: 'error',
    title: 'the indicator LEDs exceed the supply budget',
    explanation: 'Each LED draws (Vsupply - Vf) / R; with every LED lit (a bus of all ones, every strobe asserted) the total must stay within supply_ma. Also reported: LEDs whose forward voltage is at or above the supply, which never light. Raise the resistors, light fewer LEDs or use a bigger supply; follow the supply\'s data sheet and local practice for bench work.',
  },
  {
    code: 'step-timing',
    severity: 'error',
    title: 'the planned step clock is faster than the slowest step allows',
    explanation: 'For every step the longest path runs from the control word changing (access_ns) through the enabled drivers (en_ns), the ALU or other logic (tpd_ns) and the bus (settle_ns) to the setup time (tsu_ns) of the part that loads at the closing edge. A clock period shorter than that path latches values before they settle. Slow the clock (the message gives the fastest safe one before margin) or shorten the path. Estimates from entered figures: real boards need margin and measurement.',
  },
  {
    code: 'address-loop',
    severity: 'error',
    title: 'a combinational flag can change the word that decides it',
    explanation: 'A flag that reads a bus or a control settles within the step from what the step\'s word drives, and the address lines carry it, so it chooses that same word. Where the word chosen with the flag at 0 and the one chosen with it at 1 drive the flag\'s inputs differently, the new word changes the flag again: the address oscillates (the control word never settles, and strobes glitch), or it settles on whichever word the previous step left it at. Make both words drive what the flag reads the same way and differ only in what they do at the closing edge, or latch the flag at a closing edge and test it in the next step.',
  },
  {
    code: 'expr-syntax',
    severity: 'error',
    title: 'an expression does not follow the expression syntax',
    explanation: 'An expression in a part definition (the behaviour of a port, flag or next value) could not be read: a missing operand or bracket, an unknown function, or an operator the syntax does not have (there is no `*`, `/` or lone `=`). The message says what was expected at that place; inside brackets the rest is still read, so one typo does not hide the next. See docs/expressions.md for the grammar.',
  },
  {
    code: 'expr-width',
    severity: 'error',
    title: 'the widths in an expression do not agree',
    explanation: 'Operands of `+ - & | ^`, of comparisons, the two choices of `?:` and the arms of a `select` must have the same width; a condition and a carry-in are one bit; the whole expression must have the width its place needs. The message names both widths. Hardware does not widen silently: say what the extra bits are with `zext` (zeros), `sext` (copies of the sign bit) or a slice `x[7:0]`. A decimal literal takes its width from its context, so where nothing gives one (alone in a `{..}` concatenation) write it in hex or binary, whose digits give the width. A register array or the memory is not one value: read one element, `r[i]`, and index the memory with a 32-bit byte address.',
  },
  {
    code: 'expr-slice',
    severity: 'error',
    title: 'a bit range or element lies outside its operand, or an index is misused',
    explanation: 'In `x[hi:lo]` and `x[bit]` every bit number must be below the width of `x` (an 8-bit signal has bits 7 down to 0), and the high bit comes first. Reading a bit the signal does not have would wire an input to nothing. Correct the bit numbers or the width of the signal. On a register array `r[3]` is element 3, which the array must have, and an element is read with one index (`r[3][7:0]` slices it afterwards); only arrays take a computed index such as `r[ir[19:15]]`, a plain signal\'s bits are chosen by numbers.',
  },
  {
    code: 'expr-name',
    severity: 'error',
    title: 'an expression names a signal that does not exist',
    explanation: 'A name in an expression is not a port, setting, control field or signal of the definition it stands in. Usually a typo: the message suggests the closest known name and the quick fix replaces it. Otherwise declare the port or field.',
  },
  {
    code: 'expr-value',
    severity: 'error',
    title: 'a select key or literal does not fit what it stands for',
    explanation: 'A `select` on a control field is keyed by the field\'s value names, and without an `else` arm it must have an arm for every value name (the message lists the missing ones); a `select` on a plain signal is keyed by numbers that fit its width; no key may be listed twice. A decimal literal must fit the width its place gives it (255 fits 8 bits, 256 does not). A code the field can carry that no arm lists gives 0 at run time, and the evaluator reports it to its caller (the simulator) rather than passing it on silently; list it or add `else`.',
  },
  {
    code: 'proof-refuted',
    severity: 'error',
    title: 'the table does not implement an RV32I instruction',
    explanation: 'The prover ran the encoded control store symbolically over the parts\' definitions and found register, immediate and memory values for which an instruction does not do what the RISC-V Unprivileged ISA specifies (the new pc, the value written to rd, or the memory written). The message gives the counterexample: the values before, what RV32I expects and what the table obtains, and the strobe that last set the value. The diagnostic stands on the decode-map row, the strobe or the step the counterexample implicates; the steps it ran are the related locations. `phasewright prove FILE --instruction NAME` prints it in full. The proof covers the table over the datapath as described, in user mode; it does not cover the wiring, the timing or electrical faults, so bring the board up step by step as usual before trusting it.',
  },
  {
    code: 'proof-incomplete',
    severity: 'warning',
    title: 'the table\'s meaning could not be proved',
    explanation: 'Either the prover does not follow this machine (the message says what: for example more than one control store; a table that is not a whole processor, with no program counter, instruction register, memory or register file, gets a note with this code instead of a warning), or an instruction was neither proved nor refuted (a path longer than the walk\'s bound of steps, too many paths, or a solver that could not decide). Nothing is wrong with the table for that reason, but nothing is proved about the instructions named: test them by running programs (`phasewright run`) before burning the store. `phasewright prove FILE` says the reason per instruction.',
  },
];

const byCode = new Map(catalogue.map((c) => [c.code, c]));

export function codeInfo(code: string): CodeInfo | undefined {
  return byCode.get(code);
}

/** The codes a line may accept with `accept CODE`. */
export const acceptableCodes: readonly string[] = catalogue.filter((c) => c.acceptable).map((c) => c.code);

export function defaultSeverity(code: string): Severity {
  return byCode.get(code)?.severity ?? 'error';
}

export const busContentionCaution = 'Caution: fighting outputs can overheat and damage parts; fix this before powering the board.';
