// Time per instruction at a step clock: each class's step counts (flow/cycleCounts.ts) times
// the step period. The clock is the planned one (`clock_khz` on the machine line) when the
// table gives it, else the fastest safe clock the step timing allows (budget.ts), and the rows
// say which. Used by the `budget` command.
//
// Deliberately not here: counting steps (flow/) or the longest path of a step (budget.ts).
import { type ClassCycles, cycleCountsOf, cyclesSummary } from '../flow/cycleCounts';
import type { Machine } from '../model/types';
import { budgetOf } from './budget';

export interface InstructionTimeRow {
  className: string;
  minSteps?: number;
  maxSteps?: number;
  minNs?: number;
  maxNs?: number;
  /** The class's counts in words (`4–8 steps (BEQ..BGEU: 4 not taken, 8 taken)`). */
  detail: string;
}

export interface InstructionTimes {
  /** The step clock the times are at, in kHz, and where it comes from; undefined when neither is known. */
  clockKhz?: number;
  clockFrom?: 'planned' | 'fastest safe';
  periodNs?: number;
  rows: InstructionTimeRow[];
}

export function instructionTimes(machine: Machine): InstructionTimes {
  const budget = budgetOf(machine);
  const clockKhz = budget.plannedKhz ?? budget.maxClockKhz;
  const clockFrom = budget.plannedKhz !== undefined ? 'planned' : budget.maxClockKhz !== undefined ? 'fastest safe' : undefined;
  const periodNs = clockKhz !== undefined && clockKhz > 0 ? 1e6 / clockKhz : undefined;
  const rows = cycleCountsOf(machine).map((c: ClassCycles) => ({
    className: c.className,
    minSteps: c.min,
    // A loop leaves the most open: it is n more steps, n from the datapath (the detail says which steps repeat).
    maxSteps: c.loops ? undefined : c.max,
    minNs: c.min !== undefined && periodNs !== undefined ? c.min * periodNs : undefined,
    maxNs: !c.loops && c.max !== undefined && periodNs !== undefined ? c.max * periodNs : undefined,
    detail: cyclesSummary(c),
  }));
  return { clockKhz, clockFrom, periodNs, rows };
}
