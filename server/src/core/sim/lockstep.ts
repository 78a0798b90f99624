// Running a program through a table, optionally in lock-step with the RV32I reference
// interpreter (isa/interp.ts). After every instruction the table's machine retires (a step
// asserting `end`), the reference executes one instruction and the two are compared:
//   - the pc (the table's program counter part against the reference's pc),
//   - all 32 registers of the first register file (x0 included: the reference's x0 is 0, so a
//     table with `x0=stored` that writes x0 shows up at once),
//   - the memory writes since the last retirement (address, size in bytes, value).
// The first difference stops the run with a report naming the instruction (address, word,
// disassembly), its class, every step it ran (strobes, fields, bus values, the table line behind
// each word) and what differs; the step that made the difference (the one that loaded the
// register, moved the pc or wrote memory) is marked and its table line is the place to look.
// Stops are compared too: an EBREAK, an illegal instruction or an unsupported system call must
// stop both machines at the same pc. A machine fault (bus contention, an undefined value loaded,
// a combinational loop) is reported the same way, with or without the reference.
//
// Deliberately not here: reading files, clocks, printing (the CLI and the language server do
// that), the summary figures (summary.ts).
import { describeStop, Rv32iReference, type MemoryWrite, type StopReason } from '../isa/interp';
import { LinuxUserEnvironment } from '../isa/environment';
import { disassemble, disassembleParts } from '../isa/disasm';
import type { Machine, Strobe } from '../model/types';
import { registerArrayFacts } from '../model/partFacts';
import type { Span } from '../text/span';
import { collectSteps, faultText, formatStep, hex, instructionText, sourcePlace, stopText, type FormatOptions, type StepRecord } from './describe';
import type { SimPlan } from './plan';
import type { LoadedProgram } from './program';
import { BusSimulator, type MachineFault, type SimStop } from './simulator';
import { LoopChecks } from './loopChecks';

export interface Difference {
  what: 'pc' | 'register' | 'memory' | 'ending';
  /** The register, for `register` differences. */
  register?: number;
  expected: string;
  got: string;
  /** One line, e.g. "x10: expected 0x0000000f (reference), got 0x0000000d (table)". */
  text: string;
}

export interface ProblemReport {
  kind: 'divergence' | 'fault';
  /** One line: what went wrong, where. */
  headline: string;
  instruction: { pc: number; word: number; disassembly: string; mnemonic?: string; className?: string };
  /** Instructions both machines retired before this one. */
  retiredBefore: number;
  differences: Difference[];
  fault?: MachineFault;
  /** Every step this instruction ran, step 0 first. */
  steps: StepRecord[];
  /** Index in `steps` of the step that made the difference or faulted, when one can be named. */
  culprit?: number;
  /** The table line to look at (the culprit step's line, else the instruction's last step's). */
  source?: Span;
  /** The whole report as text. */
  text: string;
}

export type RunEnding =
  | { kind: 'exit'; exitCode: number; status: number }
  | { kind: 'ebreak'; pc: number }
  /** Illegal instruction, unsupported system call, output limit: the program cannot go on (both machines agree, or there is no reference). */
  | { kind: 'stopped'; stop: SimStop }
  | { kind: 'divergence'; report: ProblemReport }
  | { kind: 'fault'; report: ProblemReport };

export interface ProgramRunOptions {
  /** Compare every instruction with the reference interpreter (default true). */
  reference?: boolean;
  stackPointer?: number;
  outputLimitBytes?: number;
  /** How reports name table lines. */
  format?: FormatOptions;
  /** Run the interpreter only (no compiled stepper); for tests that compare the two. */
  compiled?: boolean;
  /** With the reference: hold every retired instruction's steps to its loop formula, if the table has one (`loopChecks`). */
  loopFormulas?: boolean;
}

/** A program running on a table's machine (and on the reference beside it). */
export class ProgramRun {
  readonly sim: BusSimulator;
  readonly reference: Rv32iReference | null;
  /** The retired instructions' steps beside their loop formulas (with the reference and `loopFormulas`, on a table that has one). */
  readonly loopChecks: LoopChecks | null;
  ending: RunEnding | null = null;
  private readonly format: FormatOptions;

  constructor(
    readonly plan: SimPlan,
    program: LoadedProgram,
    options: ProgramRunOptions = {},
  ) {
    const withReference = options.reference ?? true;
    const environment = new LinuxUserEnvironment({ outputLimitBytes: options.outputLimitBytes });
    // Each machine gets its own copy of the image and its own environment.
    const memory = withReference ? program.memory.clone() : program.memory;
    this.sim = new BusSimulator(plan, memory, program.entry, { stackPointer: options.stackPointer, environment, compiled: options.compiled });
    // With the reference, every instruction can be replayed with its bus values recorded for a report.
    this.sim.checkpointing = withReference;
    this.format = options.format ?? {};
    if (withReference) {
      const reference = new Rv32iReference(program.memory, new LinuxUserEnvironment({ outputLimitBytes: options.outputLimitBytes }));
      reference.pc = program.entry >>> 0;
      reference.x[2] = options.stackPointer ?? this.sim.regs[2];
      this.reference = reference;
    } else {
      this.reference = null;
    }
    this.loopChecks = withReference && options.loopFormulas && LoopChecks.wanted(plan.machine) ? new LoopChecks(plan.machine) : null;
  }

  /**
   * Runs up to `maxSteps` more steps; returns the ending once the run has ended, else null.
   * With `untilRetired`, returns after the first instruction that retires (the debugger checks
   * its breakpoints between instructions).
   */
  advance(maxSteps: number, untilRetired = false): RunEnding | null {
    if (this.ending) return this.ending;
    const sim = this.sim;
    let budget = maxSteps;
    // In lock-step the compiled loop compares each retired instruction itself, through the hook,
    // and goes on: no return to this loop per instruction (the debugger, which stops at every
    // retirement, takes them here).
    sim.retireHook = this.reference && !untilRetired ? this.compareInLoop : null;
    while (budget > 0) {
      const before = sim.steps;
      this.pcBefore = sim.instructionPc;
      if (this.reference && sim.step === 0) sim.checkpoint();
      const outcome = sim.run(budget, this.reference !== null || untilRetired);
      budget -= sim.steps - before;
      if (this.hookEnding) return (this.ending = this.hookEnding);
      if (outcome.kind === 'budget') return null;
      const pcBefore = this.pcBefore;
      if (outcome.kind === 'retired' || (outcome.kind === 'stopped' && outcome.retired)) {
        const report = this.compareRetired(pcBefore);
        if (report) return (this.ending = { kind: 'divergence', report });
        if (outcome.kind === 'retired') {
          if (untilRetired) return null;
          continue;
        }
      }
      if (outcome.kind === 'stopped') return (this.ending = this.endWith(outcome.stop, outcome.retired, pcBefore));
    }
    return null;
  }

  // ---- Comparison after a retirement.

  /** The pc the instruction being run started at. */
  private pcBefore = 0;
  /** A divergence the compiled loop's hook found (it stopped the loop). */
  private hookEnding: RunEnding | null = null;

  /** The retire hook: compares the instruction just retired; on agreement checkpoints the next one and goes on. */
  private readonly compareInLoop = (): boolean => {
    const report = this.compareRetired(this.pcBefore);
    if (report) {
      this.hookEnding = { kind: 'divergence', report };
      return false;
    }
    this.pcBefore = this.sim.instructionPc;
    this.sim.checkpoint();
    return true;
  };

  private compareRetired(pcBefore: number): ProblemReport | null {
    const reference = this.reference;
    if (!reference) return null;
    const sim = this.sim;
    // Before the reference executes it, its registers are those the instruction started with.
    this.loopChecks?.observe(sim.lastRetiredWord, pcBefore, reference.x, sim.lastInstructionSteps);
    const result = reference.step();
    // The common case first, without building anything: everything agrees.
    if (result.retired && sim.pc === reference.pc >>> 0 && sameRegisters(reference.x, sim.regs) && sameWrites(result.memoryWrites, sim) && !(result.stop?.kind === 'exit' && sim.stopReason?.kind === 'exit' && result.stop.exitCode !== sim.stopReason.exitCode)) {
      return null;
    }
    const differences: Difference[] = [];
    if (!result.retired) {
      const why = result.stop ? describeStop(result.stop) : 'it did not execute the instruction';
      differences.push({ what: 'ending', expected: `the reference stops: ${why}`, got: 'the table ran the instruction to its end', text: `the reference does not execute this instruction (${why}); the table ran it to its end` });
    } else {
      if (sim.pc !== reference.pc >>> 0) {
        differences.push({ what: 'pc', expected: hex(reference.pc), got: hex(sim.pc), text: `pc after the instruction: expected ${hex(reference.pc)} (reference), got ${hex(sim.pc)} (table)` });
      }
      for (let r = 0; r < 32; r++) {
        const expected = reference.x[r] >>> 0;
        const got = sim.regs[r] >>> 0;
        if (expected !== got) differences.push({ what: 'register', register: r, expected: hex(expected), got: hex(got), text: `x${r}: expected ${hex(expected)} (reference), got ${hex(got)} (table)` });
      }
      if (!sameWrites(result.memoryWrites, sim)) {
        const expectedWrites = result.memoryWrites.map(writeText);
        const gotWrites = sim.writes().map(writeText);
        const expected = expectedWrites.join(', ') || 'no memory write';
        const got = gotWrites.join(', ') || 'no memory write';
        differences.push({ what: 'memory', expected, got, text: `memory: expected ${expected} (reference), got ${got} (table)` });
      }
      if (result.stop?.kind === 'exit' && sim.stopReason?.kind === 'exit' && result.stop.exitCode !== sim.stopReason.exitCode) {
        differences.push({ what: 'ending', expected: `exit code ${result.stop.exitCode}`, got: `exit code ${sim.stopReason.exitCode}`, text: `exit code: expected ${result.stop.exitCode} (reference), got ${sim.stopReason.exitCode} (table)` });
      }
    }
    if (differences.length === 0) return null;
    return this.report('divergence', pcBefore, sim.lastRetiredWord, sim.lastRetireStep, differences, sim.instructionsRetired - 1);
  }

  // ---- Stops.

  private endWith(stop: SimStop, retired: boolean, pcBefore: number): RunEnding {
    const sim = this.sim;
    if (stop.kind === 'fault') {
      return { kind: 'fault', report: this.report('fault', stop.pc, stop.word, stop.step, [], sim.instructionsRetired, stop.fault) };
    }
    if (stop.kind === 'exit') return { kind: 'exit', exitCode: stop.exitCode, status: stop.status };
    const reference = this.reference;
    if (reference && !retired) {
      const result = reference.step();
      const agreed = !result.retired && result.stop !== null && sameStop(stop, result.stop);
      if (!agreed) {
        const expected = result.retired ? 'the reference executes it' : `the reference stops: ${result.stop ? describeStop(result.stop) : 'for no reason'}`;
        const difference: Difference = { what: 'ending', expected, got: `the table stops: ${stopText(stop)}`, text: `${expected}; but the table stops: ${stopText(stop)}` };
        // A word that ran the step counter round stopped after its last step; a trap in the step it is in.
        const wrapped = stop.kind === 'illegal-instruction' && stop.why !== 'monitor';
        return { kind: 'divergence', report: this.report('divergence', pcBefore, sim.ir, wrapped ? this.plan.nSteps - 1 : sim.step, [difference], sim.instructionsRetired) };
      }
    }
    if (stop.kind === 'ebreak') return { kind: 'ebreak', pc: stop.pc };
    return { kind: 'stopped', stop };
  }

  // ---- Reports.

  private report(kind: ProblemReport['kind'], pc: number, word: number, lastStep: number, differences: Difference[], retiredBefore: number, fault?: MachineFault): ProblemReport {
    const plan = this.plan;
    const sim = this.sim;
    const recorded = this.reference !== null && sim.replayInstruction();
    const steps = collectSteps(sim, lastStep, recorded, kind === 'fault');
    const parts = disassembleParts(word, pc);
    const cls = plan.classOfOpcode[word & 0x7f];
    const className = cls >= 0 ? plan.machine.classes[cls].name : undefined;
    const instruction = { pc, word, disassembly: disassemble(word, pc), mnemonic: parts.spec?.mnemonic, className };
    let culprit: number | undefined;
    let culpritWhy = '';
    if (kind === 'fault') {
      culprit = steps.length - 1;
      culpritWhy = 'faults';
    } else {
      const first = differences[0];
      const found = this.culpritOf(first, steps, word);
      culprit = found?.index;
      culpritWhy = found?.why ?? '';
    }
    const source = (culprit !== undefined ? steps[culprit]?.source : undefined) ?? steps[steps.length - 1]?.source;
    const where = `${instructionText(pc, word)}${className ? `  (class ${className}, ${steps.length} steps)` : '  (no class)'}`;
    const headline =
      kind === 'fault'
        ? `MACHINE FAULT in step ${lastStep} of ${instructionText(pc, word)}: ${faultText(fault!)}`
        : `DIVERGENCE at ${instructionText(pc, word)}: ${differences[0].text}`;
    const lines: string[] = [];
    if (kind === 'fault') {
      lines.push(`MACHINE FAULT after ${count(retiredBefore, 'instruction')} retired`);
      lines.push(`  instruction ${where}`);
      lines.push(`  ${faultText(fault!)}`);
    } else {
      lines.push(`DIVERGENCE after ${count(retiredBefore, 'instruction')}: the table's machine and the RV32I reference disagree`);
      lines.push(`  instruction ${where}`);
      for (const d of differences) lines.push(`  ${d.text}`);
    }
    if (culprit !== undefined) {
      const place = sourcePlace(steps[culprit].source, this.format);
      lines.push(`  look at: step ${steps[culprit].step}, ${steps[culprit].sourceLabel}${place ? ` at ${place}` : ''} (the step that ${culpritWhy})`);
    } else if (kind === 'divergence' && differences[0].what === 'register') {
      lines.push(`  no step of this instruction loads x${differences[0].register}: the table never writes the register the instruction needs`);
    }
    const withBuses = steps.filter((s) => s.buses).length;
    const busNote =
      withBuses === steps.length
        ? 'bus values before each closing edge'
        : withBuses > 0
          ? 'bus values of the last step only: the earlier steps\' were not recorded; with the reference on (the default) every step\'s are'
          : 'bus values were not recorded';
    lines.push(`steps of this instruction (${busNote}):`);
    steps.forEach((s, i) => lines.push(...formatStep(s, this.format, i === culprit ? culpritWhy : '')));
    if (steps.length > 0 && steps[0].className !== className) {
      lines.push(`  (steps before the instruction register loads run under the previous instruction's class: the address lines still see its bits)`);
    }
    return { kind, headline, instruction, retiredBefore, differences, fault, steps, culprit, source, text: lines.join('\n') + '\n' };
  }

  /** The step that loaded the differing register, moved the pc or wrote memory: the last such step. */
  private culpritOf(difference: Difference, steps: StepRecord[], word: number): { index: number; why: string } | undefined {
    const machine = this.plan.machine;
    const pcName = this.plan.parts[this.plan.pcPart].name;
    const strobeMatches = (test: (s: Strobe) => boolean) => (record: StepRecord) =>
      record.asserted.some((name) => {
        const signal = machine.signals.get(name);
        return signal?.type === 'strobe' && test(signal);
      });
    let match: ((record: StepRecord) => boolean) | undefined;
    let why = '';
    if (difference.what === 'register') {
      const r = difference.register!;
      const rd = (word >>> 7) & 31;
      // A clock of the register file (the part whose kind `holds registers`): its numbered port
      // `x[r]`, or a port that stores the register the instruction's rd field selects.
      const holdsRegisters = (s: Strobe) => machine.parts.get(s.part ?? '')?.def.holds.some((h) => h.role === 'registers') ?? false;
      match = strobeMatches((s) => s.kind === 'clock' && holdsRegisters(s) && (s.register === r || (s.register === undefined && rd === r && writesRdRegister(machine, s))));
      why = `loads x${r}`;
    } else if (difference.what === 'pc') {
      match = strobeMatches((s) => (s.kind === 'clock' || s.kind === 'count') && s.part === pcName);
      why = `changes ${pcName}`;
    } else if (difference.what === 'memory') {
      match = strobeMatches((s) => s.kind === 'write');
      why = 'writes memory';
    }
    if (!match) return undefined;
    for (let i = steps.length - 1; i >= 0; i--) if (match(steps[i])) return { index: i, why };
    return undefined;
  }
}

/** Whether the strobe's port stores into the register the instruction's rd field (bits 11..7, spec 2.2) selects. */
function writesRdRegister(machine: Machine, strobe: Strobe): boolean {
  const part = machine.parts.get(strobe.part ?? '');
  if (!part || strobe.kindPort === undefined) return false;
  return registerArrayFacts(machine, part).some((f) => f.writes.some((w) => w.port === strobe.kindPort && w.indexBits?.hi === 11 && w.indexBits.lo === 7));
}

/** Whether x0..x31 agree (the first 32 entries: the table's first register file). */
function sameRegisters(expected: Int32Array, got: Int32Array): boolean {
  for (let r = 0; r < 32; r++) if (expected[r] !== got[r]) return false;
  return true;
}

function count(n: number, noun: string): string {
  return `${n} ${noun}${n === 1 ? '' : 's'}`;
}

function writeText(w: { address: number; size: number; value: number }): string {
  return `${w.size}-byte write of ${hex(w.value, w.size * 2)} at ${hex(w.address)}`;
}

/** Whether the table's machine made exactly the reference's memory writes (without building arrays on the common path). */
/**
 * Whether the instruction wrote the same bytes as the reference: the same memory effect, byte
 * by byte, whatever the grouping. A machine whose memory takes one byte per step (or a word in
 * lanes) writes what one RV32I store writes in several writes; the address and value of every
 * byte, and which bytes, must agree (RISC-V Unprivileged ISA 20191213, section 2.6: a store
 * writes its 1, 2 or 4 bytes little-endian).
 */
function sameWrites(expected: readonly MemoryWrite[], sim: BusSimulator): boolean {
  const got = sim.lastWriteCount;
  if (expected.length === got) {
    let same = true;
    for (let i = 0; i < got && same; i++) {
      const w = expected[i];
      same = w.address >>> 0 === sim.writeAddress[i] >>> 0 && w.size === sim.writeSize[i] && w.value >>> 0 === sim.writeValue[i] >>> 0;
    }
    if (same) return true;
  }
  if (got > MAX_COMPARED_WRITES) return false;
  const bytes = (list: { address: number; size: number; value: number }[]) => {
    const out = new Map<number, number>();
    for (const w of list) for (let k = 0; k < w.size; k++) out.set((w.address + k) >>> 0, (w.value >>> (8 * k)) & 0xff);
    return out;
  };
  const ours: { address: number; size: number; value: number }[] = [];
  for (let i = 0; i < got; i++) ours.push({ address: sim.writeAddress[i], size: sim.writeSize[i], value: sim.writeValue[i] });
  const a = bytes(expected as { address: number; size: number; value: number }[]);
  const b = bytes(ours);
  if (a.size !== b.size) return false;
  for (const [address, value] of a) if (b.get(address) !== value) return false;
  return true;
}

/** More writes than the simulator records for one instruction cannot be compared byte by byte. */
const MAX_COMPARED_WRITES = 16; // as many as the simulator records per instruction (MAX_RECORDED_WRITES)

/** Whether the table's stop and the reference's stop are the same event at the same pc. */
function sameStop(stop: SimStop, reference: StopReason): boolean {
  switch (stop.kind) {
    case 'ebreak':
      return reference.kind === 'ebreak' && reference.pc === stop.pc;
    case 'illegal-instruction':
      return reference.kind === 'illegal-instruction' && reference.pc === stop.pc;
    case 'unsupported-syscall':
      return reference.kind === 'unsupported-syscall' && reference.pc === stop.pc;
    case 'output-limit':
      return reference.kind === 'output-limit' && reference.pc === stop.pc;
    default:
      return false;
  }
}
