// The bus-level simulator: runs a machine step by step from its ENCODED control stores, the
// way the board would run with the chips burned from `phasewright build`. Each step
//   1. forms every store's address from the step counter, the instruction register's bits, the
//      flags and (for an entry-point decoder) other stores' fields, and reads its word;
//   2. lets the enabled drivers put their values on their buses (a bus nobody drives keeps its
//      last value if it has keepers, else floats and its value is undefined); combinational
//      parts (ALU, immediate generator, memory read data) settle from the bus values;
//   3. hands the instruction to the environment if the word traps (ecall: Linux write/exit
//      through the register file; ebreak: stop; anything else: illegal);
//   4. applies every closing-edge action from the values before the edge (edge-triggered):
//      memory writes, register-file writes, flag latches, counts, register clocks;
//   5. returns the step counter to 0 after a word with `end` (the instruction retires), else
//      counts it up; wrapping without `end` means the instruction has no (finished) class.
// Two drivers on one bus, a load of an undefined value, a combinational loop or a control code
// that names no operation stop the machine with a fault naming the step, strobes and values.
//
// Combinational flags on the address lines (model/flagFacts.ts: a flag that reads a bus or a
// control; docs/notation.md, "Timing model"): the address is first formed with the flags as
// they stand (from the previous step), the word's drivers settle, and then the word's
// combinational flags are computed. If they form another word, the step starts again with that
// word from the buses as they were at the step's start (nothing is stored yet); a word already
// tried in this step, or more than MAX_SETTLE_ROUNDS words, is an address that oscillates (a
// fault), and so is a word that depends on a flag computed from a bus with no defined value.
// Only the settled word's closing edge runs. Such machines run on this interpreter only.
//
// Reset state (as createReferenceMachine and qemu-riscv32 start a program): the program counter
// (see plan.ts for which part that is) holds the entry point, every other register and counter
// its `reset=` value (0 by default), the instruction register too (0 by default), the register
// file 0 except x2 (sp) = DEFAULT_STACK_POINTER, flags 0, step 0, every bus undefined (keepers
// hold nothing yet).
//
// Speed: the micro-ops are compiled into one Int32Array (microops.ts) and bus definedness is one
// bit per bus in an integer; this interpreter keeps the step counter and instruction register in
// locals, switches on literal operation numbers and allocates nothing per step. For one-store
// machines, chains of steps are also compiled to JavaScript (compile.ts) and run instead, handing
// back to this interpreter every step that is not plain (traps, faults, possibly undefined
// values); traces and bus recording always use the interpreter.
//
// Deliberately not here: comparing with the reference (lockstep.ts), text reports (describe.ts),
// VCD output (vcd.ts), loading programs (program.ts).
import { DEFAULT_STACK_POINTER } from '../isa/elf';
import { lineRanges } from '../model/busDrivers';
import { LinuxUserEnvironment, type MachineAccess } from '../isa/environment';
import type { SparseMemory } from '../isa/memory';
import { D_CUSTOM, DRIVER_WORDS, EDGE_WORDS, E_FAULT, HEADER_PARTIAL_LOAD, U_DRIVERS, U_INDEX, type MicroOpInfo } from './microops';
import type { CustomAccess } from './customParts';
import { FAST_BUDGET, FAST_RETIRED, FAST_SLOW_STEP, FAST_WRAP, canCompile, compileStepper, type FastStepper } from './compile';
import type { SimPlan } from './plan';

/** Something the table makes the hardware do that cannot work, found while running. */
export type MachineFault =
  | { kind: 'contention'; buses: { bus: string; drivers: { strobe: string; value: number | undefined }[] }[] }
  | { kind: 'combinational-loop'; message: string }
  /** The address lines carry a combinational flag that does not settle (it oscillates, or reads a bus with no defined value where the word depends on it). */
  | { kind: 'address-flag'; message: string }
  | { kind: 'undefined-value'; strobe: string; bus: string; why: string }
  | { kind: 'control-code'; strobe: string; message: string };

export type SimStop =
  | { kind: 'exit'; exitCode: number; status: number }
  | { kind: 'ebreak'; pc: number }
  | { kind: 'illegal-instruction'; pc: number; word: number; why: 'no-class' | 'no-end' | 'monitor' | 'no-fetch'; message: string }
  | { kind: 'unsupported-syscall'; pc: number; syscallNumber: number }
  | { kind: 'output-limit'; pc: number; outputLimitBytes: number }
  | { kind: 'fault'; pc: number; word: number; step: number; fault: MachineFault };

export type RunOutcome =
  /** An instruction retired (only when asked to stop at retirements). */
  | { kind: 'retired' }
  /** The machine stopped; `retired` says whether the last instruction retired first (exit does). */
  | { kind: 'stopped'; stop: SimStop; retired: boolean }
  /** The step budget ran out; the machine can continue. */
  | { kind: 'budget' };

export interface SimulatorOptions {
  /** Initial sp (default DEFAULT_STACK_POINTER). */
  stackPointer?: number;
  environment?: LinuxUserEnvironment;
  /** Record the bus values of every step of the current instruction (for divergence reports). */
  recordBuses?: boolean;
  /** Use the compiled stepping function where it applies (default true); false runs the interpreter only. */
  compiled?: boolean;
}

/** A captured machine state (see BusSimulator.captureState); `numbers` holds the counters. */
export interface SimState {
  regs: Int32Array;
  partValue: Int32Array;
  /** State of the parts of the table's own kinds. */
  customState: Int32Array;
  flags: Uint8Array;
  busValue: Int32Array;
  /** BusSimulator.definedLines. */
  definedLines: Int32Array;
  writes: Int32Array;
  /** The step log of the current instruction (addresses and micro-ops), so reports after a restore name the right steps. */
  log: Int32Array;
  numbers: Float64Array;
  stopReason: SimStop | null;
  pendingExit: { exitCode: number; status: number } | null;
}
const STATE_NUMBERS = 14;

/** Most memory writes one instruction's record keeps (RV32I makes at most one). */
const MAX_RECORDED_WRITES = 16;
/** Most words one step may try while its combinational flags settle (the first one included). */
export const MAX_SETTLE_ROUNDS = 4;
const SETTLED = 0;
const SETTLE_AGAIN = 1;
const SETTLE_FAULT = 2;

/** Steps per call of the stepping loops (see run()). */
const CHUNK_STEPS = 1 << 16;

export class BusSimulator implements MachineAccess {
  readonly busValue: Int32Array;
  /** Bit b set when bus b holds a defined value. */
  definedMask = 0;
  /**
   * Line by line, for drivers and loads of some lines of a bus (byte lanes): when bus b's bit in
   * `definedMask` is clear, the lines of it that hold defined values (a set bit means every line
   * does). Exact for every line a driver of some lines drove and for a bus with keepers; a load
   * of some lines of a bus without keepers is only run where all its lines are driven (microops.ts).
   */
  readonly definedLines: Int32Array;
  readonly partValue: Int32Array;
  /** Register files, 32 entries each: register r of file f at f * 32 + r (and one spare entry at the end). */
  readonly regs: Int32Array;
  readonly flags: Uint8Array;
  step = 0;
  /** Total steps run, and instructions retired. */
  steps = 0;
  instructionsRetired = 0;
  /** The program counter's value when the current instruction's step 0 began. */
  instructionPc = 0;
  /** The step counter's value in the `end` step of the instruction that retired last, and its word. */
  lastRetireStep = 0;
  /**
   * With a sequencer part: the steps the current instruction has run so far (a jump or a loop
   * makes this differ from the step number), and those of the instruction that retired last.
   */
  instructionSteps = 0;
  lastInstructionSteps = 0;
  lastRetiredWord = 0;
  stopReason: SimStop | null = null;
  /** Called after the buses settle in every step, before the closing edge (traces use it); gets the micro-op's number. */
  observer: ((sim: BusSimulator, uop: number) => void) | null = null;
  /** Told the old contents before every memory write (the debugger's history undoes writes with it). */
  memoryJournal: ((address: number, bytes: number, old: number) => void) | null = null;
  /** The environment that serves system calls (a scratch one while an instruction is replayed). */
  private env: LinuxUserEnvironment;
  /** Retired instructions and their steps per class (index in machine.classes; the last slot: no class). */
  readonly classInstructions: Float64Array;
  readonly classSteps: Float64Array;
  /** Retirements by (opcode, funct3, funct7, bit 20); see mnemonicKey(). */
  readonly retiredByKey = new Uint32Array(1 << 18);
  /** EBREAKs handed to the environment (they stop the machine and never retire). */
  ebreaks = 0;
  /** Steps run by the compiled code (the rest ran on the interpreter). */
  compiledSteps = 0;
  /** The step log of the current instruction, indexed by step: micro-op number, store addresses. */
  readonly logUop: Int32Array;
  /**
   * With a sequencer part: the serial number of the instruction that last ran each step (a jump
   * skips steps, so the log's other entries may be an earlier instruction's); reports keep the
   * steps of the instruction they are about.
   */
  readonly logSeen: Int32Array;
  private instructionSerial = 1;
  readonly logAddress: Int32Array;
  /** With recordBuses: every bus value and the definedness mask of each step of the current instruction. */
  readonly logBusValue: Int32Array;
  readonly logDefined: Int32Array;
  recordBuses: boolean;
  /** Memory writes of the instruction that retired last (valid right after a retirement). */
  readonly writeAddress = new Int32Array(MAX_RECORDED_WRITES);
  readonly writeSize = new Int32Array(MAX_RECORDED_WRITES);
  readonly writeValue = new Int32Array(MAX_RECORDED_WRITES);
  lastWriteCount = 0;
  /** Writes of the unfinished instruction so far (internal; the compiled stepper updates it). */
  writeCount = 0;
  /** Whether the instruction register has ever loaded (internal; for the wrap message). */
  instructionLoaded = false;
  /** Lock-step support: keep the state at each instruction's start so the instruction can be replayed with its bus values recorded. */
  checkpointing = false;
  /** Heard by the compiled loop at each retirement it would otherwise return for (compile.ts FastState); lock-step sets it. */
  retireHook: (() => boolean) | null = null;
  private checkpointValid = false;
  private readonly saved: { regs: Int32Array; partValue: Int32Array; flags: Uint8Array; busValue: Int32Array; customState: Int32Array; definedMask: number; definedLines: Int32Array; instructionPc: number; instructionLoaded: boolean };
  /** State of the parts of the table's own kinds (plan.custom's slots), what their ports read, and their staged edge values. */
  readonly customState: Int32Array;
  private readonly custom: CustomAccess;
  private readonly customStage: number[] = [];
  private readonly undoAddress = new Int32Array(MAX_RECORDED_WRITES);
  private readonly undoSize = new Int32Array(MAX_RECORDED_WRITES);
  private readonly undoOld = new Int32Array(MAX_RECORDED_WRITES);
  private undoCount = 0;
  private readonly staticParts: Int32Array;
  /** The combinational flags' settle: computed values, a trial flag vector, the buses at the step's start, the words tried. */
  private readonly settleOut: Uint8Array;
  private readonly settleFlags: Uint8Array;
  private readonly settleBusValue: Int32Array;
  private readonly settleDefinedLines: Int32Array;
  private settleDefined = 0;
  private readonly settleTried: { base: number; flags: Uint8Array }[] = [];
  private settleStop: SimStop | null = null;
  private pendingExit: { exitCode: number; status: number } | null = null;
  private readonly nStores: number;
  private useCompiled: boolean;
  private compiled: FastStepper | null = null;
  constructor(
    readonly plan: SimPlan,
    readonly memory: SparseMemory,
    entry: number,
    options: SimulatorOptions = {},
  ) {
    const nBuses = plan.busNames.length;
    this.busValue = new Int32Array(nBuses);
    this.definedLines = new Int32Array(nBuses);
    this.partValue = new Int32Array(plan.parts.length);
    // One spare entry after the register files takes the writes to x0 they ignore (compiled code).
    this.regs = new Int32Array(32 * Math.max(1, plan.regfiles.length) + 1);
    this.flags = new Uint8Array(plan.flagNames.length);
    this.customState = Int32Array.from(plan.custom.resetValues);
    this.env = options.environment ?? new LinuxUserEnvironment();
    this.recordBuses = options.recordBuses ?? false;
    this.useCompiled = (options.compiled ?? true) && canCompile(plan);
    this.nStores = plan.stores.length;
    this.staticParts = new Int32Array(this.nStores);
    this.settleOut = new Uint8Array(plan.custom.combinationalCount);
    this.settleFlags = new Uint8Array(plan.flagNames.length);
    this.settleBusValue = new Int32Array(nBuses);
    this.settleDefinedLines = new Int32Array(nBuses);
    const nClasses = plan.machine.classes.length;
    this.classInstructions = new Float64Array(nClasses + 1);
    this.classSteps = new Float64Array(nClasses + 1);
    this.logUop = new Int32Array(plan.nSteps);
    this.logSeen = new Int32Array(plan.nSteps);
    this.logAddress = new Int32Array(plan.nSteps * this.nStores);
    this.logBusValue = new Int32Array(plan.nSteps * nBuses);
    this.logDefined = new Int32Array(plan.nSteps);
    // Every part runs from its definition: a state kept in a part value takes its definition's reset.
    for (const { part, value } of plan.custom.partResets) this.partValue[part] = value;
    this.custom = { busValue: this.busValue, partValue: this.partValue, regs: this.regs, ir: this.partValue[plan.irPart], customState: this.customState, memory, store: (size, address, value) => this.storeMemory(size, address, value) };
    plan.custom.refresh(this.custom, this.flags);
    this.partValue[plan.pcPart] = entry & plan.partMask[plan.pcPart];
    this.instructionPc = this.partValue[plan.pcPart] >>> 0;
    for (let f = 0; f < plan.regfiles.length; f++) this.regs[f * 32 + 2] = options.stackPointer ?? DEFAULT_STACK_POINTER;
    this.refreshStaticParts();
    this.saved = { regs: this.regs.slice(), partValue: this.partValue.slice(), flags: this.flags.slice(), busValue: this.busValue.slice(), customState: this.customState.slice(), definedMask: 0, definedLines: this.definedLines.slice(), instructionPc: 0, instructionLoaded: false };
  }

  /** The environment serving this machine's system calls (its captured stdout and stderr). */
  get environment(): LinuxUserEnvironment {
    return this.env;
  }

  // ---- MachineAccess, for the environment's system calls (the first register file).
  readRegister(index: number): number {
    return this.regs[index & 31];
  }
  writeRegister(index: number, value: number): void {
    if (index !== 0 || this.plan.x0Stored) this.regs[index & 31] = value;
  }

  get pc(): number {
    return this.partValue[this.plan.pcPart] >>> 0;
  }
  get ir(): number {
    return this.partValue[this.plan.irPart] >>> 0;
  }
  isBusDefined(bus: number): boolean {
    return ((this.definedMask >>> bus) & 1) === 1;
  }
  /**
   * The micro-op that ran in `step` of the current instruction. With one store it follows from
   * the logged address (the compiled code logs only that); with several the log holds it.
   */
  uopAtStep(step: number): number {
    const plan = this.plan;
    return plan.stores.length === 1 ? plan.stores[0].wordOfAddress[this.logAddress[step]] : this.logUop[step];
  }

  /** The information of a micro-op by its number. */
  microOp(uop: number): MicroOpInfo {
    return this.plan.microOps.info[uop];
  }
  /** Whether an exit system call waits for its instruction to retire (internal, for the compiled stepper). */
  get pendingExitSet(): boolean {
    return this.pendingExit !== null;
  }

  private refreshStaticParts(): void {
    const ir = this.partValue[this.plan.irPart];
    for (let s = 0; s < this.nStores; s++) this.staticParts[s] = this.plan.staticPart(s, ir, this.flags);
  }

  /** The micro-op (its base in the code) of the current step with several stores: combined, compiled on first use. */
  private multiStoreUop(step: number): number {
    const stores = this.plan.stores;
    const microOps = this.plan.microOps;
    const words: number[] = [];
    let key = 0;
    for (let s = 0; s < stores.length; s++) {
      const sp = stores[s];
      let address = this.staticParts[s] + sp.stepPart[step];
      for (const f of sp.fieldSources) address += f.byWord[words[f.fromStore]];
      this.logAddress[step * this.nStores + s] = address;
      const w = sp.wordOfAddress[address];
      words.push(w);
      key += w * microOps.strides[s];
    }
    return microOps.lookup(key, words);
  }

  /** The buses as the step starts: every round of a settle starts from them. */
  private saveStepBuses(defined: number): void {
    this.settleBusValue.set(this.busValue);
    this.settleDefinedLines.set(this.definedLines);
    this.settleDefined = defined;
  }

  private restoreStepBuses(): number {
    this.busValue.set(this.settleBusValue);
    this.definedLines.set(this.settleDefinedLines);
    return this.settleDefined;
  }

  /** The micro-op (its base) the address lines select in `step` with the flags `flags` (nothing logged). */
  private uopBaseWith(step: number, ir: number, flags: Uint8Array): number {
    const plan = this.plan;
    const mo = plan.microOps;
    if (this.nStores === 1 && mo.byKey !== null) {
      const s0 = plan.stores[0];
      return mo.byKey[s0.wordOfAddress[plan.staticPart(0, ir, flags) + s0.stepPart[step]]];
    }
    const words: number[] = [];
    let key = 0;
    for (let s = 0; s < plan.stores.length; s++) {
      const sp = plan.stores[s];
      let address = plan.staticPart(s, ir, flags) + sp.stepPart[step];
      for (const f of sp.fieldSources) address += f.byWord[words[f.fromStore]];
      const w = sp.wordOfAddress[address];
      words.push(w);
      key += w * mo.strides[s];
    }
    return mo.lookup(key, words);
  }

  /** The addresses of the stores in `step` with the flags `flags`, as text for a fault message. */
  private addressesWith(step: number, ir: number, flags: Uint8Array): string {
    const plan = this.plan;
    const words: number[] = [];
    const out: string[] = [];
    for (let s = 0; s < plan.stores.length; s++) {
      const sp = plan.stores[s];
      let address = plan.staticPart(s, ir, flags) + sp.stepPart[step];
      for (const f of sp.fieldSources) address += f.byWord[words[f.fromStore]];
      words.push(sp.wordOfAddress[address]);
      out.push(`${plan.stores.length > 1 ? `${sp.store.name} ` : ''}0x${address.toString(16).padStart(4, '0')}`);
    }
    return out.join(', ');
  }

  /**
   * After the drivers of the word at `base` settled (round `round` of this step): computes the
   * word's combinational flags and says whether the address lines now select another word (the
   * flags are then set and the static address parts refreshed: run the step again), the word
   * stands (the flags keep their new values), or the address does not settle (settleStop).
   */
  private settle(base: number, step: number, ir: number, defined: number, round: number): number {
    const plan = this.plan;
    const settler = plan.custom.settlers[this.infoAt(base).settle];
    const out = this.settleOut;
    this.custom.ir = ir;
    settler.run(this.custom, out);
    const next = this.settleFlags;
    next.set(this.flags);
    // Flags whose value cannot be known here (a bus they read holds no defined value) keep theirs,
    // provided the word does not depend on them.
    const unknown: number[] = [];
    for (let k = 0; k < settler.flags.length; k++) {
      const f = settler.flags[k];
      if (f < 0) continue;
      if (settler.problems[k] !== '' || (settler.needs[k] & ~defined) !== 0) unknown.push(k);
      else next[f] = out[k];
    }
    const nextBase = this.uopBaseWith(step, ir, next);
    if (unknown.length > 0) {
      const flips = unknown.length > 8 ? 8 : unknown.length;
      for (let combo = 1; combo < 1 << flips; combo++) {
        for (let i = 0; i < flips; i++) if ((combo >>> i) & 1) next[settler.flags[unknown[i]]] ^= 1;
        const other = this.uopBaseWith(step, ir, next);
        for (let i = 0; i < flips; i++) if ((combo >>> i) & 1) next[settler.flags[unknown[i]]] ^= 1;
        if (other !== nextBase) {
          const k = unknown.find((_, i) => (combo >>> i) & 1)!;
          const name = plan.flagNames[settler.flags[k]];
          const busMask = settler.needs[k] & ~defined;
          const bus = plan.busNames.findIndex((_, b) => (busMask >>> b) & 1);
          const why = settler.problems[k] !== '' ? settler.problems[k] : `it reads bus \`${plan.busNames[bus]}\`, which holds no defined value: ${this.whyUndefined(base, bus)}`;
          this.settleStop = { kind: 'fault', pc: this.instructionPc, word: ir >>> 0, step, fault: { kind: 'address-flag', message: `the word of step ${step} depends on combinational flag \`${name}\` (address ${this.addressesWith(step, ir, next)}), but its value is not known: ${why}` } };
          this.settleTried.length = 0;
          return SETTLE_FAULT;
        }
      }
    }
    if (nextBase === base) {
      this.flags.set(next);
      this.settleTried.length = 0;
      return SETTLED;
    }
    if (round === 0) {
      this.settleTried.length = 0;
      this.settleTried.push({ base, flags: this.flags.slice() });
    }
    const again = this.settleTried.some((t) => t.base === nextBase);
    this.settleTried.push({ base: nextBase, flags: next.slice() });
    if (again || this.settleTried.length > MAX_SETTLE_ROUNDS) {
      this.settleStop = { kind: 'fault', pc: this.instructionPc, word: ir >>> 0, step, fault: { kind: 'address-flag', message: this.oscillation(step, ir, again) } };
      this.settleTried.length = 0;
      return SETTLE_FAULT;
    }
    this.flags.set(next);
    this.refreshStaticParts();
    return SETTLE_AGAIN;
  }

  /** The words a step tried while its combinational flags did not settle, as a fault message. */
  private oscillation(step: number, ir: number, again: boolean): string {
    const plan = this.plan;
    const tried = this.settleTried;
    const changed = new Set<number>();
    for (let i = 1; i < tried.length; i++) for (let f = 0; f < plan.flagNames.length; f++) if (tried[i].flags[f] !== tried[i - 1].flags[f]) changed.add(f);
    const names = [...changed].map((f) => `\`${plan.flagNames[f]}\``).join(', ');
    const words = tried.map((t, i) => {
      const values = [...changed].map((f) => `${plan.flagNames[f]}=${t.flags[f]}`).join(' ');
      const made = i + 1 < tried.length ? `, whose drivers make ${[...changed].map((f) => `${plan.flagNames[f]}=${tried[i + 1].flags[f]}`).join(' ')}` : '';
      return `address ${this.addressesWith(step, ir, t.flags)} (${values})${made}`;
    });
    const verdict = again ? 'back to a word already tried' : `still changing after ${MAX_SETTLE_ROUNDS} words`;
    return `the address of step ${step} oscillates through combinational flag ${names}: ${words.join('; ')}: ${verdict}, so the control word never settles`;
  }

  private stopWith(stop: SimStop, retired = false): RunOutcome {
    this.stopReason = stop;
    return { kind: 'stopped', stop, retired };
  }

  /**
   * Runs up to `maxSteps` steps. With `stopAtRetire`, returns after each retired instruction
   * (lock-step); otherwise runs until the machine stops or the budget is used up.
   */
  run(maxSteps: number, stopAtRetire = false): RunOutcome {
    // The interpreter runs in short calls: V8 then optimizes it as an ordinary function and
    // re-optimizes it after a rare path (a trap, a fault) deoptimizes it, which a single
    // long-running loop (on-stack replacement) stops doing after a few such events.
    let remaining = maxSteps;
    for (;;) {
      if (this.stopReason) return { kind: 'stopped', stop: this.stopReason, retired: false };
      const before = this.steps;
      const fast = this.fastStepper();
      let outcome: RunOutcome = { kind: 'budget' };
      if (fast) {
        const status = fast.run(remaining, stopAtRetire);
        this.compiledSteps += this.steps - before;
        const left = remaining - (this.steps - before);
        if (status === FAST_RETIRED) {
          outcome = this.pendingExit ? this.takeExit() : RETIRED;
        } else if (status === FAST_WRAP) {
          outcome = this.stopWith(this.wrapStop());
        } else if (status === FAST_SLOW_STEP && left > 0) {
          // The interpreter runs the step the compiled code handed back.
          outcome = this.runSteps(1, stopAtRetire);
        } else if (status === FAST_BUDGET && left > 0) {
          // Fewer steps are left than the next chain has: the interpreter runs them exactly.
          outcome = this.runSteps(left, stopAtRetire);
        }
      } else {
        outcome = this.runSteps(Math.min(remaining, CHUNK_STEPS), stopAtRetire);
      }
      remaining -= this.steps - before;
      if (outcome.kind !== 'budget' || remaining <= 0) return outcome;
    }
  }

  /** The compiled stepping loop, when it applies now (not while a trace observer or bus recording is on). */
  private fastStepper(): FastStepper | null {
    if (!this.useCompiled || this.observer !== null || this.recordBuses) return null;
    if (!this.compiled) {
      try {
        this.compiled = compileStepper(this.plan, this);
      } catch {
        // A host that forbids generating code (a content security policy) runs the interpreter.
        this.compiled = null;
      }
      if (!this.compiled) this.useCompiled = false;
    }
    return this.compiled;
  }

  /** Distinct chains of steps compiled so far (0 while everything ran on the interpreter). */
  get compiledChains(): number {
    return this.compiled?.chains() ?? 0;
  }

  private takeExit(): RunOutcome {
    const exit = this.pendingExit!;
    this.pendingExit = null;
    return this.stopWith({ kind: 'exit', exitCode: exit.exitCode, status: exit.status }, true);
  }

  private runSteps(maxSteps: number, stopAtRetire: boolean): RunOutcome {
    if (this.stopReason) return { kind: 'stopped', stop: this.stopReason, retired: false };
    const plan = this.plan;
    const mo = plan.microOps;
    const busValue = this.busValue;
    const busMask = plan.busMask;
    const partValue = this.partValue;
    const flags = this.flags;
    const irPart = plan.irPart;
    const pcPart = plan.pcPart;
    const seqPart = plan.seqPart;
    const nSteps = plan.nSteps;
    const nBuses = busValue.length;
    const classOfOpcode = plan.classOfOpcode;
    const noClass = plan.machine.classes.length;
    const logUop = this.logUop;
    const logAddress = this.logAddress;
    const recordBuses = this.recordBuses;
    const observer = this.observer;
    const byKey = mo.byKey;
    const single = this.nStores === 1 && byKey !== null;
    const wordOf0 = plan.stores[0].wordOfAddress;
    const stepPart0 = plan.stores[0].stepPart;
    // The compiled stepper keeps its own copy of the address's static part: start from the state.
    this.refreshStaticParts();
    let code = mo.code.data;
    let lines = mo.lines.data;
    let defined = this.definedMask;
    const definedLines = this.definedLines;
    let step = this.step;
    let ir = partValue[irPart];
    let static0 = this.staticParts[0];
    let stepsRun = 0;
    const settling = plan.custom.combinationalCount > 0;
    let round = 0;
    while (stepsRun < maxSteps) {
      stepsRun++;
      if (settling && round === 0) this.saveStepBuses(defined);
      // 1. Address and control word.
      let base: number;
      if (single) {
        const address = static0 + stepPart0[step];
        logAddress[step] = address;
        base = byKey[wordOf0[address]];
      } else {
        base = this.multiStoreUop(step);
        code = mo.code.data; // compiling a new micro-op may have grown the code
        lines = mo.lines.data;
      }
      const header = code[base];
      const uop = code[base + 1];
      logUop[step] = uop;
      if (seqPart >= 0) this.logSeen[step] = this.instructionSerial;
      if ((header & 1) !== 0) {
        this.step = step;
        this.steps += stepsRun;
        this.definedMask = defined;
        return this.stopWith(this.staticFault(base));
      }
      // 2. Buses: floating ones lose their value, then the drivers in settle order.
      defined &= ~code[base + 2];
      let p = base + 5;
      const driversEnd = p + code[base + 4] * 5;
      for (; p < driversEnd; p += 5) {
        const bus = code[p + 1];
        let value = 0;
        let ok = 1;
        // Operation numbers as in microops.ts (D_*).
        if (code[p] === 1) {
          // D_CUSTOM: a drive port of a part, from its kind's definition; every bus it reads must be defined.
          const custom = this.custom;
          custom.ir = ir;
          value = plan.custom.drivers[code[p + 2]](custom);
          ok = (defined & code[p + 3]) === code[p + 3] ? 1 : 0;
        } else ok = 0; // D_UNDEFINED
        const driven = lines[p];
        if (driven === 0) {
          busValue[bus] = value & busMask[bus];
          if (ok !== 0) defined |= 1 << bus;
          else {
            defined &= ~(1 << bus);
            definedLines[bus] = 0;
          }
        } else {
          // Some lines of the bus (a byte lane): the others keep what they hold. Its lines are
          // defined as this driver's value is; the others as they were (kept, or driven by
          // another driver in this step), or not at all for the first driver of a floating bus.
          busValue[bus] = (busValue[bus] & ~driven) | ((value << lines[p + 1]) & driven);
          const before = lines[p + 2] === 0 ? 0 : ((defined >>> bus) & 1) !== 0 ? busMask[bus] : definedLines[bus];
          const now = ok !== 0 ? before | driven : before & ~driven;
          definedLines[bus] = now;
          defined = (now & busMask[bus]) === busMask[bus] ? defined | (1 << bus) : defined & ~(1 << bus);
        }
      }
      // 2b. Combinational flags on the address lines: settle the word (see the top of the file).
      if (settling) {
        const verdict = this.settle(base, step, ir, defined, round);
        code = mo.code.data; // trying a word may have compiled a new micro-op
        lines = mo.lines.data;
        if (verdict === SETTLE_AGAIN) {
          round++;
          defined = this.restoreStepBuses();
          static0 = this.staticParts[0];
          stepsRun--;
          continue;
        }
        round = 0;
        if (verdict === SETTLE_FAULT) {
          this.step = step;
          this.steps += stepsRun;
          this.definedMask = defined;
          return this.stopWith(this.settleStop!);
        }
      }
      if (recordBuses) {
        const at = step * nBuses;
        for (let b = 0; b < nBuses; b++) this.logBusValue[at + b] = busValue[b];
        this.logDefined[step] = defined;
      }
      if (observer !== null) {
        this.step = step;
        this.definedMask = defined;
        observer(this, uop);
      }
      // 3. Trap: the environment serves the instruction before the closing edge.
      if ((header & 4) !== 0) {
        this.step = step;
        this.definedMask = defined;
        const stop = this.serviceTrap();
        if (stop !== null) {
          this.steps += stepsRun;
          return this.stopWith(stop);
        }
      }
      // 4. Closing edge. Every value loaded must be defined, and a fault entry (sorted first)
      // stops the step: both are checked before anything changes.
      const nEdges = code[p++];
      if ((code[base + 3] & ~defined) !== 0 || (nEdges !== 0 && code[p] === 0) || ((header & HEADER_PARTIAL_LOAD) !== 0 && this.undefinedLoad(p, nEdges, defined) >= 0)) {
        this.step = step;
        this.steps += stepsRun;
        this.definedMask = defined;
        return this.stopWith(this.edgeFault(base));
      }
      const edgesEnd = p + nEdges * 5;
      let inputsChanged = false;
      for (; p < edgesEnd; p += 5) {
        // E_CUSTOM (the only action past the faults): computes from the values before the edge; stored below.
        this.custom.ir = ir;
        plan.custom.edges[code[p + 2]](this.custom, this.customStage);
        if (code[p + 4] !== 0) this.instructionLoaded = true;
      }
      if ((header & 8) !== 0) {
        // HEADER_CUSTOM: store what the edge ports computed; their flags may feed the address.
        plan.custom.commit(this.custom, this.customStage, flags);
        inputsChanged = true;
      }
      // The instruction that retires in this step is the one whose bits were in place during it.
      const retiring = ir;
      if (inputsChanged) {
        ir = partValue[irPart];
        this.refreshStaticParts();
        static0 = this.staticParts[0];
      }
      // 5. Step counter. With a sequencer part the step is its state, just computed at the
      // closing edge from the values before it (a jump, a hold, a clear); the instruction retires
      // when it is back at 0. Without one: `end` returns the implicit counter to 0, else it counts.
      let retire = (header & 2) !== 0;
      let nextStep = step + 1;
      if (seqPart >= 0) {
        nextStep = partValue[seqPart] & (nSteps - 1);
        retire = nextStep === 0;
        this.instructionSteps++;
        // Back at 0 from a fill word (no step of the table wrote it): the instruction did not end,
        // the sequencer only ran out of steps (an illegal instruction, or a class with no way back).
        if (retire && this.isFillWord(step)) {
          this.step = 0;
          this.steps += stepsRun;
          this.definedMask = defined;
          return this.stopWith(this.wrapStop());
        }
      }
      if (retire) {
        const cls = classOfOpcode[retiring & 0x7f];
        const slot = cls < 0 ? noClass : cls;
        this.classInstructions[slot]++;
        this.classSteps[slot] += seqPart >= 0 ? this.instructionSteps : step + 1;
        this.lastInstructionSteps = seqPart >= 0 ? this.instructionSteps : step + 1;
        this.instructionSteps = 0;
        this.instructionSerial++;
        this.retiredByKey[mnemonicKey(retiring)]++;
        this.lastRetiredWord = retiring >>> 0;
        this.instructionsRetired++;
        this.lastWriteCount = this.writeCount;
        this.writeCount = 0;
        this.lastRetireStep = step;
        step = 0;
        this.instructionPc = partValue[pcPart] >>> 0;
        if (this.pendingExit !== null || stopAtRetire) {
          this.step = step;
          this.steps += stepsRun;
          this.definedMask = defined;
          return this.pendingExit === null ? RETIRED : this.takeExit();
        }
      } else if (seqPart >= 0) {
        step = nextStep;
      } else if (++step === nSteps) {
        this.step = 0;
        this.steps += stepsRun;
        this.definedMask = defined;
        return this.stopWith(this.wrapStop());
      }
    }
    this.step = step;
    this.steps += stepsRun;
    this.definedMask = defined;
    return { kind: 'budget' };
  }

  /** A memory write at a closing edge, recorded for the lock-step comparison (internal). */
  storeMemory(size: number, address: number, value: number): void {
    const bytes = sizeBytes(size);
    const at = address >>> 0;
    if (this.memoryJournal !== null) this.memoryJournal(at, bytes, bytes === 1 ? this.memory.load8(at) : bytes === 2 ? this.memory.load16(at) : this.memory.load32(at));
    if (this.checkpointing) {
      if (this.undoCount >= MAX_RECORDED_WRITES) this.checkpointValid = false;
      else {
        this.undoAddress[this.undoCount] = at;
        this.undoSize[this.undoCount] = bytes;
        this.undoOld[this.undoCount++] = bytes === 1 ? this.memory.load8(at) : bytes === 2 ? this.memory.load16(at) : this.memory.load32(at);
      }
    }
    if (bytes === 1) this.memory.store8(at, value);
    else if (bytes === 2) this.memory.store16(at, value);
    else this.memory.store32(at, value);
    if (this.writeCount < MAX_RECORDED_WRITES) {
      this.writeAddress[this.writeCount] = at;
      this.writeSize[this.writeCount] = bytes;
      this.writeValue[this.writeCount] = bytes === 4 ? value : value & (bytes === 1 ? 0xff : 0xffff);
    }
    this.writeCount++;
  }

  /** Memory writes of the last retired instruction (or, with `pending`, of the unfinished one), as the reference reports them. */
  writes(pending = false): { address: number; size: 1 | 2 | 4; value: number }[] {
    const out: { address: number; size: 1 | 2 | 4; value: number }[] = [];
    const count = pending ? this.writeCount : this.lastWriteCount;
    for (let i = 0; i < Math.min(count, MAX_RECORDED_WRITES); i++) {
      out.push({ address: this.writeAddress[i] >>> 0, size: this.writeSize[i] as 1 | 2 | 4, value: this.writeValue[i] >>> 0 });
    }
    return out;
  }

  /**
   * The machine's whole state between two steps (not memory, which the caller journals), for
   * the debugger's history. `into` is reused when given, so a ring of states allocates once.
   */
  captureState(into?: SimState): SimState {
    const state = into ?? { regs: new Int32Array(this.regs.length), partValue: new Int32Array(this.partValue.length), customState: new Int32Array(this.customState.length), flags: new Uint8Array(this.flags.length), busValue: new Int32Array(this.busValue.length), definedLines: new Int32Array(this.busValue.length), writes: new Int32Array(3 * MAX_RECORDED_WRITES), log: new Int32Array(this.logAddress.length + this.logUop.length + this.logSeen.length), numbers: new Float64Array(STATE_NUMBERS), stopReason: null, pendingExit: null };
    copyInto(state.regs, this.regs);
    copyInto(state.partValue, this.partValue);
    copyInto(state.customState, this.customState);
    copyInto(state.flags, this.flags);
    copyInto(state.busValue, this.busValue);
    copyInto(state.definedLines, this.definedLines);
    state.writes.set(this.writeAddress, 0);
    state.writes.set(this.writeSize, MAX_RECORDED_WRITES);
    state.writes.set(this.writeValue, 2 * MAX_RECORDED_WRITES);
    state.log.set(this.logAddress, 0);
    state.log.set(this.logUop, this.logAddress.length);
    state.log.set(this.logSeen, this.logAddress.length + this.logUop.length);
    const n = state.numbers;
    n[0] = this.definedMask;
    n[1] = this.step;
    n[2] = this.steps;
    n[3] = this.instructionsRetired;
    n[4] = this.instructionPc;
    n[5] = this.lastRetireStep;
    n[6] = this.lastRetiredWord;
    n[7] = this.lastWriteCount;
    n[8] = this.writeCount;
    n[9] = this.instructionLoaded ? 1 : 0;
    n[10] = this.ebreaks;
    n[11] = this.instructionSteps;
    n[12] = this.lastInstructionSteps;
    n[13] = this.instructionSerial;
    state.stopReason = this.stopReason;
    state.pendingExit = this.pendingExit;
    return state;
  }

  /** Puts back a state from captureState (memory is the caller's to restore). */
  restoreState(state: SimState): void {
    this.regs.set(state.regs);
    this.partValue.set(state.partValue);
    this.customState.set(state.customState);
    this.flags.set(state.flags);
    this.busValue.set(state.busValue);
    this.definedLines.set(state.definedLines);
    this.writeAddress.set(state.writes.subarray(0, MAX_RECORDED_WRITES));
    this.writeSize.set(state.writes.subarray(MAX_RECORDED_WRITES, 2 * MAX_RECORDED_WRITES));
    this.writeValue.set(state.writes.subarray(2 * MAX_RECORDED_WRITES));
    this.logAddress.set(state.log.subarray(0, this.logAddress.length));
    this.logUop.set(state.log.subarray(this.logAddress.length, this.logAddress.length + this.logUop.length));
    this.logSeen.set(state.log.subarray(this.logAddress.length + this.logUop.length));
    const n = state.numbers;
    this.definedMask = n[0] | 0;
    this.step = n[1];
    this.steps = n[2];
    this.instructionsRetired = n[3];
    this.instructionPc = n[4];
    this.lastRetireStep = n[5];
    this.lastRetiredWord = n[6];
    this.lastWriteCount = n[7];
    this.writeCount = n[8];
    this.instructionLoaded = n[9] === 1;
    this.ebreaks = n[10];
    this.instructionSteps = n[11];
    this.lastInstructionSteps = n[12];
    this.instructionSerial = n[13];
    this.stopReason = state.stopReason;
    this.pendingExit = state.pendingExit;
    this.checkpointValid = false;
    this.refreshStaticParts();
  }

  /**
   * Settles the buses as the next step will (its drivers in settle order, floating buses
   * undefined) without its trap or closing edge, so a stopped machine can show what that step
   * puts on every bus. Logs the step's store addresses and returns its micro-op number. Running
   * the step afterwards gives the same result: it settles from the same state.
   */
  settleNextStep(): number {
    const plan = this.plan;
    const mo = plan.microOps;
    const settling = plan.custom.combinationalCount > 0;
    this.refreshStaticParts();
    // With combinational flags on the address lines the word settles as in runSteps (a word that
    // does not settle is left as the last one tried: running on reports the fault).
    for (let round = 0; ; round++) {
      if (settling && round === 0) this.saveStepBuses(this.definedMask);
      let base: number;
      if (this.nStores === 1 && mo.byKey !== null) {
        const address = this.staticParts[0] + plan.stores[0].stepPart[this.step];
        this.logAddress[this.step] = address;
        base = mo.byKey[plan.stores[0].wordOfAddress[address]];
      } else {
        base = this.multiStoreUop(this.step);
      }
      const code = mo.code.data;
      const uop = code[base + 1];
      this.logUop[this.step] = uop;
      this.logSeen[this.step] = this.instructionSerial;
      const info = mo.info[uop];
      for (let bus = 0; bus < plan.busNames.length; bus++) if (!info.driven[bus] && !plan.busKeeper[bus]) this.definedMask &= ~(1 << bus);
      for (let k = 0; k < info.drivers.length; k++) {
        const { value, defined } = this.driverValue(base, k);
        this.putOnBus(base, k, value, defined);
      }
      if (!settling || (code[base] & 1) !== 0 || this.settle(base, this.step, this.partValue[plan.irPart], this.definedMask, round) !== SETTLE_AGAIN) return uop;
      this.definedMask = this.restoreStepBuses();
    }
  }

  /** Remembers the state at the start of an instruction (call with the step counter at 0). */
  checkpoint(): void {
    // Plain loops: these arrays are short, and this runs once per instruction in lock-step.
    const saved = this.saved;
    copyInto(saved.regs, this.regs);
    copyInto(saved.partValue, this.partValue);
    copyInto(saved.flags, this.flags);
    copyInto(saved.busValue, this.busValue);
    copyInto(saved.customState, this.customState);
    saved.definedMask = this.definedMask;
    copyInto(saved.definedLines, this.definedLines);
    saved.instructionPc = this.instructionPc;
    saved.instructionLoaded = this.instructionLoaded;
    this.undoCount = 0;
    this.checkpointValid = this.step === 0;
  }

  /**
   * Runs the instruction since the last checkpoint again, recording every step's bus values
   * (for a report), and ends in the same state as before. System calls go to a scratch
   * environment, so output is not written twice, and the run's figures are left as they were.
   * Returns false when there is no usable checkpoint.
   */
  replayInstruction(): boolean {
    if (!this.checkpointValid) return false;
    const counters = { instructionSteps: this.instructionSteps, lastInstructionSteps: this.lastInstructionSteps, step: this.step, steps: this.steps, retired: this.instructionsRetired, ebreaks: this.ebreaks, lastRetireStep: this.lastRetireStep, lastWriteCount: this.lastWriteCount, writeCount: this.writeCount, stop: this.stopReason, pendingExit: this.pendingExit };
    const classInstructions = this.classInstructions.slice();
    const classSteps = this.classSteps.slice();
    const writes = { address: this.writeAddress.slice(), size: this.writeSize.slice(), value: this.writeValue.slice() };
    for (let i = this.undoCount - 1; i >= 0; i--) {
      const at = this.undoAddress[i];
      const old = this.undoOld[i];
      if (this.undoSize[i] === 1) this.memory.store8(at, old);
      else if (this.undoSize[i] === 2) this.memory.store16(at, old);
      else this.memory.store32(at, old);
    }
    const saved = this.saved;
    this.regs.set(saved.regs);
    this.partValue.set(saved.partValue);
    this.flags.set(saved.flags);
    this.busValue.set(saved.busValue);
    this.customState.set(saved.customState);
    this.definedMask = saved.definedMask;
    this.definedLines.set(saved.definedLines);
    this.instructionPc = saved.instructionPc;
    this.instructionLoaded = saved.instructionLoaded;
    this.step = 0;
    this.instructionSteps = 0;
    this.instructionSerial++; // the replay's steps are the instruction's own
    this.stopReason = null;
    this.pendingExit = null;
    this.writeCount = 0;
    this.undoCount = 0;
    const env = this.env;
    const record = this.recordBuses;
    const observer = this.observer;
    this.env = new LinuxUserEnvironment({ outputLimitBytes: env.outputLimitBytes });
    this.recordBuses = true;
    this.observer = null;
    // With a sequencer an instruction may loop: replay until it retires or stops, within a bound.
    const outcome = this.runSteps(this.plan.seqPart >= 0 ? 1 << 20 : this.plan.nSteps + 1, true);
    if (outcome.kind === 'retired' || (outcome.kind === 'stopped' && outcome.retired)) this.retiredByKey[mnemonicKey(this.lastRetiredWord)]--;
    this.env = env;
    this.recordBuses = record;
    this.observer = observer;
    this.step = counters.step;
    this.instructionSteps = counters.instructionSteps;
    this.lastInstructionSteps = counters.lastInstructionSteps;
    this.steps = counters.steps;
    this.instructionsRetired = counters.retired;
    this.ebreaks = counters.ebreaks;
    this.lastRetireStep = counters.lastRetireStep;
    this.lastWriteCount = counters.lastWriteCount;
    this.writeCount = counters.writeCount;
    this.stopReason = counters.stop;
    this.pendingExit = counters.pendingExit;
    this.classInstructions.set(classInstructions);
    this.classSteps.set(classSteps);
    this.writeAddress.set(writes.address);
    this.writeSize.set(writes.size);
    this.writeValue.set(writes.value);
    return true;
  }

  private serviceTrap(): SimStop | null {
    const word = this.ir;
    const pc = this.instructionPc;
    if (word === 0x00000073) {
      const outcome = this.env.handleEcall(this);
      switch (outcome.kind) {
        case 'continue':
          return null;
        case 'exit':
          this.pendingExit = { exitCode: outcome.exitCode, status: outcome.status };
          return null;
        case 'unsupported-syscall':
          return { kind: 'unsupported-syscall', pc, syscallNumber: outcome.syscallNumber };
        case 'output-limit':
          return { kind: 'output-limit', pc, outputLimitBytes: outcome.outputLimitBytes };
      }
    }
    if (word === 0x00100073) {
      this.ebreaks++;
      return { kind: 'ebreak', pc };
    }
    return { kind: 'illegal-instruction', pc, word, why: 'monitor', message: 'the table traps this word, but the monitor serves only ecall (0x00000073) and ebreak (0x00100073)' };
  }

  /** Whether the word of `step` (as logged in this instruction) is the fill word of every store: no step of the table wrote it. */
  private isFillWord(step: number): boolean {
    const plan = this.plan;
    for (let s = 0; s < this.nStores; s++) {
      const address = this.logAddress[step * this.nStores + s];
      const point = plan.stores[s].enc.origin[address];
      if (point !== undefined && point >= 0) return false;
    }
    return true;
  }

  private wrapStop(): SimStop {
    const word = this.ir;
    const pc = this.instructionPc;
    const steps = this.plan.nSteps;
    if (!this.instructionLoaded) {
      return { kind: 'illegal-instruction', pc, word, why: 'no-fetch', message: `the machine never fetched an instruction: from reset (instruction register ${hex(word)}) the table ran all ${steps} steps without \`end\`; the steps at reset must fetch` };
    }
    const cls = this.plan.classOfOpcode[word & 0x7f];
    // With a sequencer part: it counted through the fill word back to step 0 (nothing cleared it).
    const counter = this.plan.seqPart >= 0 ? `the sequencer \`${this.plan.parts[this.plan.seqPart].name}\`` : 'the step counter';
    if (cls < 0) return { kind: 'illegal-instruction', pc, word, why: 'no-class', message: this.plan.seqPart >= 0 ? `illegal instruction (the table has no class for it): the fill word ran until ${counter} counted on to step 0` : `illegal instruction (the table has no class for it): the fill word ran for all ${steps} steps of the step counter` };
    return { kind: 'illegal-instruction', pc, word, why: 'no-end', message: this.plan.seqPart >= 0 ? `class ${this.plan.machine.classes[cls].name} ran into the fill word and ${counter} counted on to step 0 without the table returning it there for this word` : `class ${this.plan.machine.classes[cls].name} ran all ${steps} steps of the step counter without \`end\` for this word` };
  }

  /** The value (and whether it is defined) the k-th driver of the micro-op at `base` puts on its bus, from the buses as they are now. */
  driverValue(base: number, k: number): { value: number; defined: boolean } {
    const code = this.plan.microOps.code.data;
    const p = base + U_DRIVERS + 1 + k * DRIVER_WORDS;
    const [op, bus, a, b] = [code[p], code[p + 1], code[p + 2], code[p + 3]];
    let value = 0;
    let defined = false;
    if (op === D_CUSTOM) {
      this.custom.ir = this.partValue[this.plan.irPart];
      value = this.plan.custom.drivers[a](this.custom);
      defined = (this.definedMask & b) === b;
    }
    return { value: value & this.plan.busMask[bus], defined };
  }

  /**
   * Puts the k-th driver's value on its bus as the stepping loop does: the whole bus, or the
   * lines it drives (the others keep theirs), with their definedness (see `definedLines`).
   */
  private putOnBus(base: number, k: number, value: number, defined: boolean): void {
    const mo = this.plan.microOps;
    const p = base + U_DRIVERS + 1 + k * DRIVER_WORDS;
    const bus = mo.code.data[p + 1];
    const driven = mo.lines.data[p];
    const all = this.plan.busMask[bus];
    if (driven === 0) {
      this.busValue[bus] = value;
      if (!defined) this.definedLines[bus] = 0;
      this.definedMask = defined ? this.definedMask | (1 << bus) : this.definedMask & ~(1 << bus);
      return;
    }
    this.busValue[bus] = (this.busValue[bus] & ~driven) | ((value << mo.lines.data[p + 1]) & driven);
    const before = mo.lines.data[p + 2] === 0 ? 0 : this.isBusDefined(bus) ? all : this.definedLines[bus];
    const now = defined ? before | driven : before & ~driven;
    this.definedLines[bus] = now;
    this.definedMask = (now & all) === all ? this.definedMask | (1 << bus) : this.definedMask & ~(1 << bus);
  }

  /**
   * The first of the `count` edge actions from `p` that loads some lines of a bus not all of
   * which hold defined values (-1 when none does), with `defined` as the bus definedness.
   */
  private undefinedLoad(p: number, count: number, defined: number): number {
    const code = this.plan.microOps.code.data;
    const lines = this.plan.microOps.lines.data;
    for (let k = 0; k < count; k++) {
      const q = p + k * EDGE_WORDS;
      const mask = lines[q];
      if (mask === 0 || code[q] === E_FAULT) continue;
      const bus = code[q + 1];
      const have = ((defined >>> bus) & 1) !== 0 ? -1 : this.definedLines[bus];
      if ((have & mask) !== mask) return k;
    }
    return -1;
  }

  private infoAt(base: number): MicroOpInfo {
    return this.plan.microOps.info[this.plan.microOps.code.data[base + U_INDEX]];
  }

  private staticFault(base: number): SimStop {
    const plan = this.plan;
    const info = this.infoAt(base);
    const stopBase = { kind: 'fault' as const, pc: this.instructionPc, word: this.ir, step: this.step };
    if (info.contention.length === 0) return { ...stopBase, fault: { kind: 'combinational-loop', message: info.loop } };
    // Settle the buses as far as they settle, then ask each fighting driver what it drives.
    for (let bus = 0; bus < plan.busNames.length; bus++) if (!info.driven[bus] && !plan.busKeeper[bus]) this.definedMask &= ~(1 << bus);
    info.drivers.forEach((_, k) => {
      const { value, defined } = this.driverValue(base, k);
      this.putOnBus(base, k, value, defined);
    });
    const buses = info.contention.map(({ bus, strobes }) => ({
      bus: plan.busNames[bus],
      drivers: strobes.map((strobe) => {
        const k = info.drivers.findIndex((d) => d.strobe === strobe);
        const { value, defined } = this.driverValue(base, k);
        return { strobe, value: defined ? value >>> 0 : undefined };
      }),
    }));
    return { ...stopBase, fault: { kind: 'contention', buses } };
  }

  private edgeFault(base: number): SimStop {
    const plan = this.plan;
    const code = plan.microOps.code.data;
    const info = this.infoAt(base);
    const stopBase = { kind: 'fault' as const, pc: this.instructionPc, word: this.ir, step: this.step };
    const first = base + U_DRIVERS + 1 + info.drivers.length * DRIVER_WORDS + 1;
    for (let k = 0; k < info.edges.length; k++) {
      const p = first + k * EDGE_WORDS;
      const op = code[p];
      const strobe = info.edges[k].strobe;
      if (op === E_FAULT) return { ...stopBase, fault: { kind: 'control-code', strobe, message: info.edges[k].fault ?? 'the word asks for an operation the part cannot do' } };
      const loadMask = plan.microOps.lines.data[p];
      if (loadMask !== 0 && this.undefinedLoad(p, 1, this.definedMask) === 0) {
        // A load of some lines (`result[15:8]`): name them, and why the first of them is undefined.
        const bus = code[p + 1];
        const missing = loadMask & ~(this.isBusDefined(bus) ? -1 : this.definedLines[bus]);
        const low = plan.microOps.lines.data[p + 1];
        const width = 32 - Math.clz32(loadMask >>> low);
        return { ...stopBase, fault: { kind: 'undefined-value', strobe, bus: `${plan.busNames[bus]}[${width === 1 ? low : `${low + width - 1}:${low}`}]`, why: this.whyUndefined(base, bus, 0, missing) } };
      }
      const bad = info.edges[k].reads.find((bus) => !this.isBusDefined(bus));
      if (bad !== undefined) return { ...stopBase, fault: { kind: 'undefined-value', strobe, bus: plan.busNames[bad], why: this.whyUndefined(base, bad) } };
    }
    return { ...stopBase, fault: { kind: 'control-code', strobe: '', message: 'the closing edge could not be applied' } };
  }

  /**
   * Why bus `bus` (with `lines`, those of its lines) holds no defined value in the micro-op at
   * `base`, in words.
   */
  whyUndefined(base: number, bus: number, depth = 0, lines = 0): string {
    const plan = this.plan;
    const code = plan.microOps.code.data;
    const info = this.infoAt(base);
    const name = plan.busNames[bus];
    const driverAt = (k: number) => base + U_DRIVERS + 1 + k * DRIVER_WORDS;
    // For some lines: the driver of the highest of them, else none drives them in this step.
    const top = lines === 0 ? 0 : 1 << (31 - Math.clz32(lines));
    const k = info.drivers.findIndex((d, j) => d.bus === bus && (top === 0 || plan.microOps.lines.data[driverAt(j)] === 0 || (plan.microOps.lines.data[driverAt(j)] & top) !== 0));
    if (k < 0) {
      const what = lines === 0 ? `\`${name}\`` : `lines ${lineRanges(lines)} of \`${name}\``;
      if (!plan.busKeeper[bus]) return `nothing drives ${what} in this step and it has no keepers, so its lines float`;
      return lines === 0 ? `nothing drives ${what} in this step, and its keepers hold no value: nothing has driven it since reset` : `nothing drives ${what} in this step, and its keepers hold no value for them: nothing has driven them since reset`;
    }
    const driver = info.drivers[k];
    if (driver.note) return `\`${driver.strobe}\` drives \`${name}\`, but ${driver.note}`;
    const p = driverAt(k);
    const op = code[p];
    if (depth > 4) return `\`${driver.strobe}\` drives \`${name}\` from undefined inputs`;
    if (op === D_CUSTOM) {
      const reads = code[p + 3];
      const input = plan.busNames.findIndex((_, b) => (reads & (1 << b)) !== 0 && !this.isBusDefined(b));
      if (input >= 0) return `\`${driver.strobe}\` drives \`${name}\` from \`${driver.part}\`, whose input \`${plan.busNames[input]}\` is undefined: ${this.whyUndefined(base, input, depth + 1)}`;
    }
    return `\`${driver.strobe}\` drives \`${name}\` with an undefined value`;
  }
}

function copyInto<T extends Int32Array | Uint8Array>(target: T, source: T): void {
  for (let i = 0; i < source.length; i++) target[i] = source[i];
}

/** Bytes of a memory write by its size code (0 byte, 1 halfword, 2 word, as the parts' byte stage gives them). */
function sizeBytes(size: number): 1 | 2 | 4 {
  return size === 0 ? 1 : size === 1 ? 2 : 4;
}

/** The outcome of a retirement: one shared object, since lock-step sees one per instruction. */
const RETIRED: RunOutcome = Object.freeze({ kind: 'retired' });

/** The retirement-count key of a word: opcode, funct3, funct7 and bit 20 (which tells ebreak from ecall). */
export function mnemonicKey(word: number): number {
  return (word & 0x7f) | (((word >>> 12) & 7) << 7) | (((word >>> 25) & 0x7f) << 10) | (((word >>> 20) & 1) << 17);
}

/** A representative instruction word for a key (the other fields 0). */
export function wordOfMnemonicKey(key: number): number {
  return ((key & 0x7f) | (((key >>> 7) & 7) << 12) | (((key >>> 10) & 0x7f) << 25) | (((key >>> 17) & 1) << 20)) >>> 0;
}

function hex(value: number): string {
  return `0x${(value >>> 0).toString(16).padStart(8, '0')}`;
}
