// The debugger's bounded history, for stepping backwards: snapshots of the whole run (the table's
// machine, the lock-step reference, the captured output, how the run had ended) taken at
// instruction starts, and a journal of every memory write's old contents since the oldest
// snapshot. Going back to step T restores the latest snapshot at or before T, undoes the memory
// writes made after it, and the caller runs forward to T again: the machine is deterministic, so
// replaying gives the same state (output included, since the output is cut back to the
// snapshot's length first).
//
// The reference's memory is undone with the table's journal: up to the snapshot both machines
// agreed on every write (lock-step compares them), so the old contents are the same in both.
// After a divergence the two memories may differ; the debugger does not go back from there.
//
// Deliberately not here: when to snapshot, breakpoints, anything about the protocol.
import type { Memory } from '../isa/memory';
import type { RunEnding } from '../sim/lockstep';
import type { ProgramRun } from '../sim/lockstep';
import type { SimState } from '../sim/simulator';
import type { StopReason } from '../isa/interp';

/** Steps of history kept at least (the issue asks for 10 000). */
export const DEFAULT_HISTORY_STEPS = 20_000;

interface Snapshot {
  sim: SimState;
  refPc: number;
  refX: Int32Array;
  refRetired: number;
  refStop: StopReason | null;
  /** Index in the journal of the first write made after this snapshot. */
  journalAt: number;
  output: [number, number];
  refOutput: [number, number];
  ending: RunEnding | null;
}

export class DebugHistory {
  private snapshots: Snapshot[] = [];
  /** Old contents of memory writes, three numbers each (address, bytes, old value), from `journalBase` on. */
  private journal: number[] = [];
  private journalBase = 0;

  constructor(
    private readonly run: ProgramRun,
    readonly keepSteps = DEFAULT_HISTORY_STEPS,
  ) {
    run.sim.memoryJournal = (address, bytes, old) => {
      this.journal.push(address, bytes, old);
    };
  }

  /** The earliest step (total steps run) the history can go back to. */
  get oldestStep(): number {
    return this.snapshots.length ? this.snapshots[0].sim.numbers[2] : this.run.sim.steps;
  }

  /** Steps since the last snapshot, or Infinity when there is none. */
  stepsSinceSnapshot(): number {
    const last = this.snapshots[this.snapshots.length - 1];
    return last ? this.run.sim.steps - last.sim.numbers[2] : Infinity;
  }

  /** Snapshots the run as it is now (the caller does so between instructions). */
  snapshot(): void {
    const run = this.run;
    const sim = run.sim;
    const last = this.snapshots[this.snapshots.length - 1];
    if (last && last.sim.numbers[2] === sim.steps) return;
    // Reuse the arrays of a snapshot the trim drops below, when there is one.
    const reuse = this.snapshots.length > 1 && this.snapshots[1].sim.numbers[2] <= sim.steps - this.keepSteps ? this.snapshots.shift() : undefined;
    if (reuse) this.dropJournalBefore(this.snapshots[0].journalAt);
    const reference = run.reference;
    const snap: Snapshot = {
      sim: sim.captureState(reuse?.sim),
      refPc: reference?.pc ?? 0,
      refX: reuse?.refX ?? new Int32Array(32),
      refRetired: reference?.instructionsRetired ?? 0,
      refStop: reference?.stopReason ?? null,
      journalAt: this.journalBase + this.journal.length,
      output: sim.environment.outputLengths(),
      refOutput: reference ? reference.environment.outputLengths() : [0, 0],
      ending: run.ending,
    };
    if (reference) snap.refX.set(reference.x);
    this.snapshots.push(snap);
  }

  /**
   * Puts the run back to the latest snapshot at or before `step` (total steps run) and forgets
   * the later ones. Returns the step it went back to, or undefined when `step` is older than
   * the history.
   */
  restoreAtOrBefore(step: number): number | undefined {
    let index = this.snapshots.length - 1;
    while (index >= 0 && this.snapshots[index].sim.numbers[2] > step) index--;
    if (index < 0) return undefined;
    const snap = this.snapshots[index];
    this.snapshots.length = index + 1;
    const run = this.run;
    const memories: Memory[] = [run.sim.memory];
    if (run.reference && run.reference.memory !== run.sim.memory) memories.push(run.reference.memory);
    this.undoTo(snap.journalAt, memories);
    run.sim.restoreState(snap.sim);
    run.sim.environment.truncateOutput(snap.output[0], snap.output[1]);
    const reference = run.reference;
    if (reference) {
      reference.pc = snap.refPc;
      reference.x.set(snap.refX);
      reference.instructionsRetired = snap.refRetired;
      reference.stopReason = snap.refStop;
      reference.environment.truncateOutput(snap.refOutput[0], snap.refOutput[1]);
    }
    run.ending = snap.ending;
    return snap.sim.numbers[2];
  }

  /** Forgets everything (after the user changed a register or memory: the past no longer leads here). */
  clear(): void {
    this.snapshots = [];
    this.journal = [];
    this.journalBase = 0;
  }

  private undoTo(journalAt: number, memories: Memory[]): void {
    const journal = this.journal;
    for (let i = journal.length - 3; i >= journalAt - this.journalBase; i -= 3) {
      const address = journal[i];
      const bytes = journal[i + 1];
      const old = journal[i + 2];
      for (const memory of memories) {
        if (bytes === 1) memory.store8(address, old);
        else if (bytes === 2) memory.store16(address, old);
        else memory.store32(address, old);
      }
    }
    journal.length = Math.max(0, journalAt - this.journalBase);
  }

  private dropJournalBefore(journalAt: number): void {
    const drop = journalAt - this.journalBase;
    if (drop <= 0) return;
    // Cut in large pieces only: splicing the front of a long array on every snapshot would be quadratic.
    if (drop < 30_000 && drop * 2 < this.journal.length) return;
    this.journal.splice(0, drop);
    this.journalBase = journalAt;
  }
}
