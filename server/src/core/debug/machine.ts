// A program under the debugger: a ProgramRun (the table's machine from its encoded store, and
// the RV32I reference beside it when lock-step is on) that moves one microcycle, one
// instruction, out of a function, or on to a breakpoint, and back again through its history.
//
// Where the machine stands: between two steps. "The current step" is the one about to run: its
// word is what the address lines form now, its table line is the one the editor highlights, and
// its bus values are shown settled (BusSimulator.settleNextStep) before its closing edge.
//
// Breakpoints:
//   - on table lines (stepLines.ts): the machine stops before a step whose word the line wrote;
//   - on program addresses (function names resolve through the ELF symbols): it stops at the
//     start (step 0) of the instruction at that address;
//   - each with an optional condition (condition.ts) asked at that moment.
// Continuing runs whole instructions on the fast path (compiled chains where they apply) and
// looks at each instruction's logged store addresses after it; only when one holds a marked
// word does it go back to the instruction's start and walk it one step at a time, so the common
// case costs one check per instruction.
//
// Deliberately not here: the protocol (server/src/debug/), what the views show (views.ts).
import { symbolAt, type ElfSymbol } from '../isa/elf';
import { disassemble } from '../isa/disasm';
import type { ClassDef, StepAlt } from '../model/types';
import type { Span } from '../text/span';
import { stopText, type FormatOptions } from '../sim/describe';
import { ProgramRun, type ProblemReport, type RunEnding } from '../sim/lockstep';
import type { SimPlan } from '../sim/plan';
import type { LoadedProgram } from '../sim/program';
import { conditionHolds, parseCondition, type Condition } from './condition';
import { DebugHistory, DEFAULT_HISTORY_STEPS } from './history';
import type { StepLineIndex } from './stepLines';

export type StopEvent =
  | { reason: 'step' }
  | { reason: 'breakpoint'; ids: number[] }
  | { reason: 'pause' }
  | { reason: 'ebreak'; pc: number }
  /** A divergence, a machine fault, an illegal instruction or an unsupported system call. */
  | { reason: 'exception'; headline: string; details: string; report?: ProblemReport }
  | { reason: 'exited'; exitCode: number }
  /** Going back reached the oldest step the history holds. */
  | { reason: 'history-start'; oldestStep: number }
  /** The chunk's step budget ran out; call resumeChunk again. */
  | { reason: 'budget' };

export type ResumeMode = 'continue' | 'instruction' | 'out';

export interface BreakpointRequest {
  condition?: string;
}
export interface BreakpointResult {
  id: number;
  verified: boolean;
  message?: string;
  /** For program breakpoints: the address it stands at. */
  address?: number;
}

interface StepBreakpoint {
  id: number;
  marks: Uint8Array[];
  condition?: Condition;
}
interface AddressBreakpoint {
  id: number;
  address: number;
  condition?: Condition;
}

/** Steps between history snapshots while continuing (going back replays at most this many). */
const SNAPSHOT_SPACING = 512;
/** Steps one fast-path call runs when no breakpoint needs a look at every instruction. */
const FAST_CHUNK = 1 << 16;

export interface CurrentStep {
  step: number;
  uop: number;
  /** Store addresses the step's word is read from. */
  addresses: number[];
  alt?: StepAlt;
  cls?: ClassDef;
  /** `class OP step 2`, `phase fetch step 0 (used by class LOAD)` or `fill word`. */
  label: string;
  source?: Span;
}

export interface DebugMachineOptions {
  reference: boolean;
  format?: FormatOptions;
  historySteps?: number;
}

export class DebugMachine {
  readonly run: ProgramRun;
  readonly history: DebugHistory;
  readonly symbols: readonly ElfSymbol[];
  private stepBreakpoints: StepBreakpoint[] = [];
  private addressBreakpoints: AddressBreakpoint[] = [];
  /** OR of every step breakpoint's marks, per store (null when there are none). */
  private stepMarks: Uint8Array[] | null = null;
  private addressMarks = new Map<number, AddressBreakpoint[]>();
  private nextId = 1;
  private resume: { mode: ResumeMode; first: boolean; sp0: number; fn?: ElfSymbol; retired0: number } | null = null;
  /** The exception the run stopped with last (for the exception view). */
  lastException: Extract<StopEvent, { reason: 'exception' }> | null = null;
  private current: CurrentStep | null = null;

  constructor(
    readonly plan: SimPlan,
    program: LoadedProgram,
    readonly options: DebugMachineOptions,
    readonly stepLines: StepLineIndex,
  ) {
    // The run writes into its memory; restarting needs the pristine image, so it gets a copy.
    this.run = new ProgramRun(plan, { ...program, memory: program.memory.clone() }, { reference: options.reference, format: options.format });
    this.history = new DebugHistory(this.run, options.historySteps ?? DEFAULT_HISTORY_STEPS);
    this.symbols = program.image?.symbols ?? [];
  }

  get sim() {
    return this.run.sim;
  }

  // ---- Breakpoints.

  /** Replaces the breakpoints on table lines (zero-based lines). */
  setStepBreakpoints(requests: (BreakpointRequest & { line: number })[]): BreakpointResult[] {
    this.stepBreakpoints = [];
    const results = requests.map((r) => {
      const id = this.nextId++;
      const marks = this.stepLines.marksForLine(r.line);
      if (!marks.ok) return { id, verified: false, message: marks.reason };
      const condition = this.conditionOf(r.condition);
      if (typeof condition === 'string') return { id, verified: false, message: condition };
      this.stepBreakpoints.push({ id, marks: marks.marks, condition });
      return { id, verified: true, message: `${marks.label}: ${marks.addresses} address${marks.addresses === 1 ? '' : 'es'} in the store` };
    });
    this.stepMarks = null;
    if (this.stepBreakpoints.length) {
      this.stepMarks = this.plan.stores.map((s) => new Uint8Array(s.wordOfAddress.length));
      for (const b of this.stepBreakpoints) b.marks.forEach((m, store) => m.forEach((v, a) => (this.stepMarks![store][a] |= v)));
    }
    return results;
  }

  /**
   * Replaces the breakpoints on program addresses: each `target` is a function name from the
   * ELF symbols or an address (`0x10074`, decimal). `kind` keeps function and instruction
   * breakpoints apart, as the protocol sets them separately.
   */
  setAddressBreakpoints(kind: 'function' | 'instruction', requests: (BreakpointRequest & { target: string })[]): BreakpointResult[] {
    this.addressBreakpoints = this.addressBreakpoints.filter((b) => (b.id < 0) !== (kind === 'function'));
    const results = requests.map((r) => {
      const id = kind === 'function' ? -this.nextId++ : this.nextId++;
      const address = this.addressOf(r.target);
      if (typeof address === 'string') return { id: Math.abs(id), verified: false, message: address };
      const condition = this.conditionOf(r.condition);
      if (typeof condition === 'string') return { id: Math.abs(id), verified: false, message: condition };
      this.addressBreakpoints.push({ id, address, condition });
      return { id: Math.abs(id), verified: true, address, message: `${hex(address)}: ${disassemble(this.sim.memory.load32(address), address)}` };
    });
    this.addressMarks = new Map();
    for (const b of this.addressBreakpoints) this.addressMarks.set(b.address, [...(this.addressMarks.get(b.address) ?? []), b]);
    return results;
  }

  private addressOf(target: string): number | string {
    const text = target.trim();
    if (/^(0x[0-9a-f]+|\d+)$/i.test(text)) {
      const value = Number(text);
      if (value > 0xffffffff) return `${text} is not a 32-bit address`;
      if (value % 4 !== 0) return `${text} is not a multiple of 4; RV32I instructions are 4-byte aligned`;
      return value;
    }
    const symbol = this.symbols.find((s) => s.name === text && s.kind === 'function') ?? this.symbols.find((s) => s.name === text);
    if (!symbol) return this.symbols.length ? `the program has no symbol \`${text}\`` : `the program has no symbols (a raw image or a stripped ELF): give an address such as 0x10074`;
    return symbol.address;
  }

  private conditionOf(text: string | undefined): Condition | undefined | string {
    if (!text || !text.trim()) return undefined;
    const parsed = parseCondition(text);
    if (!parsed.ok) return `condition: ${parsed.error}`;
    const unknown = parsed.names.find((n) => this.valueOf(n) === undefined && !this.knowsName(n));
    if (unknown) return `condition: no register, bus, part or flag is named \`${unknown}\``;
    return parsed.condition;
  }

  /** Set by the views: the value of a name in a condition (undefined when it has none now). */
  valueOf: (name: string) => number | undefined = () => undefined;
  /** Set by the views: whether a name exists at all (a floating bus has no value but exists). */
  knowsName: (name: string) => boolean = () => false;

  /** Whether a condition holds now (the watch and debug console ask), or why it cannot be read. */
  evaluateCondition(text: string): boolean | string {
    const condition = this.conditionOf(text);
    if (typeof condition === 'string') return condition.replace(/^condition: /, '');
    return condition ? conditionHolds(condition, this.valueOf) : false;
  }

  // ---- Where the machine stands.

  /** The step about to run (cached until the machine moves). */
  currentStep(): CurrentStep {
    if (this.current) return this.current;
    const sim = this.sim;
    const plan = this.plan;
    const uop = this.run.ending && this.run.ending.kind !== 'fault' ? sim.uopAtStep(sim.step) : sim.settleNextStep();
    const addresses = plan.stores.map((_, s) => sim.logAddress[sim.step * plan.stores.length + s]);
    let alt: StepAlt | undefined;
    let cls: ClassDef | undefined;
    for (let s = 0; s < plan.stores.length && !alt; s++) ({ alt, cls } = plan.sourceOf(s, addresses[s]));
    const label = alt && cls ? (alt.phase ? `phase ${alt.phase.name} step ${alt.step} (used by class ${cls.name})` : `class ${cls.name} step ${alt.step}`) : 'fill word (no step of the table covers this address)';
    this.current = { step: sim.step, uop, addresses, alt, cls, label, source: alt?.span };
    return this.current;
  }

  private moved(): void {
    this.current = null;
  }

  // ---- Moving forward.

  /** One microcycle. */
  stepMicrocycle(): StopEvent {
    const ended = this.endedEvent();
    if (ended) return ended;
    this.history.snapshot();
    this.moved();
    this.run.advance(1);
    return this.endedEvent() ?? { reason: 'step' };
  }

  /** Starts continuing, stepping one instruction, or stepping out; then call resumeChunk until it returns something else than `budget`. */
  beginResume(mode: ResumeMode): void {
    const sim = this.sim;
    this.history.snapshot();
    const pc = sim.instructionPc;
    const fn = mode === 'out' ? symbolAt({ entry: 0, segments: [], symbols: this.symbols, warnings: [] }, pc) : undefined;
    this.resume = { mode, first: true, sp0: sim.regs[2] >>> 0, fn: fn && fn.sizeBytes > 0 ? fn : undefined, retired0: sim.instructionsRetired };
  }

  /** Runs up to about `budgetSteps` steps of the resumption begun last. */
  resumeChunk(budgetSteps: number, pauseRequested = false): StopEvent {
    const state = this.resume;
    if (!state) return { reason: 'step' };
    this.moved();
    const sim = this.sim;
    const run = this.run;
    const start = sim.steps;
    if (pauseRequested && !state.first) return this.finish({ reason: 'pause' });
    while (sim.steps - start < budgetSteps) {
      const ended = this.endedEvent();
      if (ended) return this.finish(ended);
      if (sim.step === 0 && !state.first) {
        const goal = this.goalReached(state);
        if (goal) return this.finish(goal);
        const hit = this.addressHit();
        if (hit) return this.finish(hit);
      }
      const perInstruction = state.mode !== 'continue' || this.stepMarks !== null || this.addressMarks.size > 0;
      if (!perInstruction) {
        run.advance(Math.min(FAST_CHUNK, budgetSteps - (sim.steps - start)));
        this.history.snapshot();
        state.first = false;
        continue;
      }
      if (sim.step === 0 && this.history.stepsSinceSnapshot() >= SNAPSHOT_SPACING) this.history.snapshot();
      const startSteps = sim.steps;
      const startStep = sim.step;
      run.advance(budgetSteps, true);
      const ran = sim.steps - startSteps;
      if (this.stepMarks && this.logHasMark(startStep, ran, state.first)) {
        // A marked word ran in this instruction: walk it again one step at a time, asking the conditions.
        this.goBackTo(startSteps);
        for (let i = 0; i < ran; i++) {
          if (i > 0 || !state.first) {
            const hit = this.stepHit();
            if (hit) return this.finish(hit);
          }
          run.advance(1);
          if (run.ending) break;
        }
      }
      state.first = false;
    }
    return { reason: 'budget' };
  }

  private finish(event: StopEvent): StopEvent {
    this.resume = null;
    this.moved();
    return event;
  }

  /** Whether stepping over an instruction or out of a function is done (at an instruction start). */
  private goalReached(state: NonNullable<DebugMachine['resume']>): StopEvent | null {
    const sim = this.sim;
    if (state.mode === 'instruction') return { reason: 'step' };
    if (state.mode === 'out' && sim.instructionsRetired > state.retired0) {
      // A return is `jalr x0, 0(x1)` (RISC-V psABI: ra holds the return address), taken with the stack back where it was or above.
      const word = sim.lastRetiredWord;
      const isReturn = (word & 0x000fffff) === 0x00008067;
      const outside = !state.fn || sim.pc < state.fn.address || sim.pc >= state.fn.address + state.fn.sizeBytes;
      if (isReturn && outside && sim.regs[2] >>> 0 >= state.sp0) return { reason: 'step' };
    }
    return null;
  }

  private addressHit(): StopEvent | null {
    const list = this.addressMarks.get(this.sim.instructionPc);
    if (!list) return null;
    const ids = list.filter((b) => !b.condition || conditionHolds(b.condition, this.valueOf)).map((b) => Math.abs(b.id));
    return ids.length ? { reason: 'breakpoint', ids } : null;
  }

  private logHasMark(startStep: number, ran: number, skipFirst: boolean): boolean {
    const marks = this.stepMarks!;
    const nStores = this.plan.stores.length;
    const log = this.sim.logAddress;
    for (let i = skipFirst ? 1 : 0; i < ran; i++) {
      const step = startStep + i;
      if (step >= this.plan.nSteps) break;
      for (let s = 0; s < nStores; s++) if (marks[s][log[step * nStores + s]]) return true;
    }
    return false;
  }

  /** Breakpoints on table lines whose word the current step runs and whose condition holds. */
  private stepHit(): StopEvent | null {
    this.moved();
    const here = this.currentStep();
    const ids = this.stepBreakpoints
      .filter((b) => here.addresses.some((a, s) => b.marks[s][a]) && (!b.condition || conditionHolds(b.condition, this.valueOf)))
      .map((b) => b.id);
    return ids.length ? { reason: 'breakpoint', ids } : null;
  }

  /** The stop a run's ending makes, or null while it runs. */
  private endedEvent(): StopEvent | null {
    const ending: RunEnding | null = this.run.ending;
    if (!ending) return null;
    switch (ending.kind) {
      case 'exit':
        return { reason: 'exited', exitCode: ending.exitCode };
      case 'ebreak':
        return { reason: 'ebreak', pc: ending.pc };
      case 'stopped':
        return this.exception({ reason: 'exception', headline: stopText(ending.stop), details: stopText(ending.stop) });
      case 'divergence':
      case 'fault':
        return this.exception({ reason: 'exception', headline: ending.report.headline, details: ending.report.text, report: ending.report });
    }
  }

  private exception(event: Extract<StopEvent, { reason: 'exception' }>): StopEvent {
    this.lastException = event;
    return event;
  }

  // ---- Moving back.

  /** Back to total step `target`: the latest snapshot before it, then forward again. */
  private goBackTo(target: number): boolean {
    const from = this.history.restoreAtOrBefore(target);
    if (from === undefined) return false;
    if (target > from) this.run.advance(target - from);
    this.moved();
    return true;
  }

  /** Why going back is refused now, if it is. */
  private cannotGoBack(): string | null {
    const ending = this.run.ending;
    if (ending && (ending.kind === 'divergence' || ending.kind === 'fault')) return 'the run stopped at a divergence or a fault; the reference and the table no longer agree, so restart to run again';
    return null;
  }

  /** One microcycle back. */
  stepBackMicrocycle(): StopEvent | string {
    const refused = this.cannotGoBack();
    if (refused) return refused;
    const target = this.sim.steps - 1;
    if (target < this.history.oldestStep || !this.goBackTo(target)) return { reason: 'history-start', oldestStep: this.history.oldestStep };
    return { reason: 'step' };
  }

  /** Back to the start of the current instruction, or of the previous one when at a start already. */
  stepBackInstruction(): StopEvent | string {
    const refused = this.cannotGoBack();
    if (refused) return refused;
    const sim = this.sim;
    if (sim.steps === 0) return { reason: 'history-start', oldestStep: 0 };
    // With a sequencer part an instruction's steps are counted apart (a jump or a loop makes the step number differ).
    const target = sim.plan.seqPart >= 0
      ? (sim.instructionSteps > 0 ? sim.steps - sim.instructionSteps : sim.steps - sim.lastInstructionSteps)
      : sim.step > 0 ? sim.steps - sim.step : sim.steps - (sim.lastRetireStep + 1);
    if (target < this.history.oldestStep || !this.goBackTo(target)) return { reason: 'history-start', oldestStep: this.history.oldestStep };
    return { reason: 'step' };
  }

  /** Back to the latest earlier moment a breakpoint would have stopped at, or the oldest step held. */
  reverseContinue(): StopEvent | string {
    const refused = this.cannotGoBack();
    if (refused) return refused;
    const now = this.sim.steps;
    const oldest = this.history.oldestStep;
    if (now <= oldest) return { reason: 'history-start', oldestStep: oldest };
    // Replay the history one step at a time from its start, noting every stop; then go to the last.
    this.goBackTo(oldest);
    let found: { step: number; ids: number[] } | null = null;
    while (this.sim.steps < now) {
      const here = this.sim.steps;
      const hit = (this.sim.step === 0 ? this.addressHit() : null) ?? (this.stepMarks ? this.stepHit() : null);
      if (hit && hit.reason === 'breakpoint') found = { step: here, ids: hit.ids };
      this.run.advance(1);
      if (this.run.ending) break;
    }
    if (!found) {
      this.goBackTo(oldest);
      return { reason: 'history-start', oldestStep: oldest };
    }
    this.goBackTo(found.step);
    return { reason: 'breakpoint', ids: found.ids };
  }

  // ---- Changing the machine.

  /** Sets register x`index` of the first register file (and the reference's, so lock-step agrees). */
  setRegister(index: number, value: number): string | null {
    if (index === 0 && !this.plan.x0Stored) return 'x0 is hardwired to zero on this machine';
    this.sim.regs[index] = value | 0;
    if (this.run.reference) this.run.reference.x[index] = value | 0;
    this.edited();
    return null;
  }

  /** Writes bytes into memory (and the reference's). */
  writeMemory(address: number, bytes: Uint8Array): void {
    this.sim.memory.writeBytes(address >>> 0, bytes);
    if (this.run.reference && this.run.reference.memory !== this.sim.memory) this.run.reference.memory.writeBytes(address >>> 0, bytes);
    this.edited();
  }

  private edited(): void {
    // The past no longer leads to this state: going back starts from here.
    this.history.clear();
    this.history.snapshot();
    this.moved();
  }

  /** The symbol (function) an address lies in, with the offset into it. */
  symbolText(address: number): string | undefined {
    const symbol = symbolAt({ entry: 0, segments: [], symbols: this.symbols, warnings: [] }, address);
    if (!symbol) return undefined;
    const offset = address - symbol.address;
    return offset === 0 ? symbol.name : `${symbol.name}+${hex(offset, 1)}`;
  }
}

function hex(value: number, digits = 8): string {
  return `0x${(value >>> 0).toString(16).padStart(digits, '0')}`;
}
