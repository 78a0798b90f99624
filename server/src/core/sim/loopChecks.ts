// The loop formulas of a table (flow/loopBounds.ts: `4 + shamt`) held to a run: for every
// retired instruction whose steps one gives, the formula at its actual operand (the instruction
// word, and the registers as they were before it) beside the steps it took. The lock-step run
// (lockstep.ts) calls `observe` at each retirement with the reference's registers, which hold the
// state before the instruction until the reference executes it; the summary (summary.ts) prints
// the totals per class.
//
// Deliberately not here: deriving the formulas (flow/), running (simulator.ts).
import { cycleCountsOf } from '../flow/cycleCounts';
import { type LoopCount, loopStepsAt } from '../flow/loopBounds';
import { matchInstruction } from '../isa/rv32i';
import type { Machine } from '../model/types';
import { mnemonicKey } from './simulator';

/** One class's retired instructions whose steps a loop formula gives. */
export interface LoopCheck {
  instructions: number;
  /** Their steps by the formulas, and as measured. */
  formulaSteps: number;
  measuredSteps: number;
  /** How many took other steps than their formula gives, and the first of them. */
  differing: number;
  first?: { pc: number; word: number; formula: string; expected: number; measured: number };
}

export class LoopChecks {
  /** By class index (machine.classes). */
  readonly byClass = new Map<number, LoopCheck>();
  private readonly formulas = new Map<number, { cls: number; count: LoopCount } | null>();

  constructor(private readonly machine: Machine) {}

  /** Whether any instruction of the machine has a loop formula (else nothing is worth observing). */
  static wanted(machine: Machine): boolean {
    return cycleCountsOf(machine).some((c) => c.instructions.some((i) => i.loopCount !== undefined));
  }

  /** A retired instruction: its word and pc, the registers before it, the steps it took. */
  observe(word: number, pc: number, x: ArrayLike<number>, measured: number): void {
    const key = mnemonicKey(word);
    let found = this.formulas.get(key);
    if (found === undefined) this.formulas.set(key, (found = this.formulaOf(word)));
    if (!found) return;
    const expected = loopStepsAt(found.count, word, x);
    let check = this.byClass.get(found.cls);
    if (!check) this.byClass.set(found.cls, (check = { instructions: 0, formulaSteps: 0, measuredSteps: 0, differing: 0 }));
    check.instructions++;
    check.formulaSteps += expected;
    check.measuredSteps += measured;
    if (expected !== measured) {
      check.differing++;
      check.first ??= { pc, word: word >>> 0, formula: found.count.formula, expected, measured };
    }
  }

  private formulaOf(word: number): { cls: number; count: LoopCount } | null {
    const spec = matchInstruction(word);
    const cls = this.machine.classes.findIndex((c) => c.opcode === (word & 0x7f));
    if (!spec || cls < 0) return null;
    const count = cycleCountsOf(this.machine)[cls].instructions.find((i) => i.mnemonic === spec.mnemonic)?.loopCount;
    return count ? { cls, count } : null;
  }
}
