// Cycle counts from a class's control flow: for every RV32I instruction that selects a class,
// how many steps it takes from step 0 to the step whose word asserts an `end` strobe, as the
// step counter of today's sequencing runs (each step goes on to the next one or ends the
// instruction). The instruction's bits stay fixed; a flag (`taken`) is unknown, so at each
// step every alternative whose guard some flag value lets hold is followed, and the flag values
// that decide whether the instruction ends there are kept to say why a count differs ("3 not
// taken, 4 taken"). Counts are steps: the simulator's step counter value at the end plus one,
// the fetch steps included.
//
// On a machine with a sequencer part (model/sequencing.ts) each step goes where the sequencer's
// definition sends it with the codes its word gives (on, a jump, a hold, back to 0): the steps
// form a graph that may loop. Then the fewest steps to the end are counted, and a loop on the
// way makes the most unbounded: the count reads `4 + n`, n being how often the loop's steps
// repeat (a shift by n places, a wait of n steps). Where loopBounds.ts derives the count from
// the loop counter's definition and what loads it, it reads as a formula of the operand
// (`4 + shamt`, `4 + x[rs2][4:0]`); min and max keep their meaning.
//
// Deliberately not here: reporting a path that runs off the last step without `end` (the
// class-end check does; this only says "does not end"), guard evaluation of its own (the
// checks' inputSpace.ts decides which alternatives hold), and what bounds a loop (loopBounds.ts).
import { altEnds, maxWalkInputs } from '../checks/reach';
import { hasSequencer } from '../model/sequencing';
import { endingSteps, loopsOf, mergeGraphs, sequencerMapMask, stepGraph, stepsOfNodes } from './stepGraph';
import { type LoopCount, loopCountOf } from './loopBounds';
import { type Cube, bitsOf, guardInputs, instructionCube, instructionsOfClass, matchingAlternatives, scenarios } from '../checks/inputSpace';
import type { ClassDef, Machine, StepAlt } from '../model/types';

/** One count of steps and the flag conditions under which an instruction takes it. */
export interface StepCount {
  steps: number;
  /** The flag values that decide it, one text per way (`not taken`); empty when nothing decides it. */
  conditions: string[];
}

/** The counts of one instruction (or of a class's opcode when no RV32I instruction selects it). */
export interface InstructionCycles {
  /** RV32I mnemonic, or undefined for the class's opcode as a whole. */
  mnemonic?: string;
  /** Undefined when the class's guards test too many inputs to walk. */
  counts?: StepCount[];
  min?: number;
  max?: number;
  /** Some path runs past the class's last step without `end` (the flag conditions, as above). */
  doesNotEnd?: string[];
  /** On a sequencer machine: steps that repeat on the way to the end, so `max` is unbounded (`min + n`) unless `loopCount` bounds it. */
  loopSteps?: number[];
  /**
   * With `loopSteps`: the steps as a formula of the operand where it is derived (loopBounds.ts:
   * `4 + shamt`). `min` and `max` are then the formula's fewest and most over the operand's values.
   */
  loopCount?: LoopCount;
}

export interface ClassCycles {
  className: string;
  instructions: InstructionCycles[];
  /** Over all its instructions. */
  min?: number;
  max?: number;
  doesNotEnd: boolean;
  /** The guards test more inputs than a walk enumerates. */
  tooManyInputs: boolean;
  /** Some instruction runs a loop whose count is not derived (a sequencer machine): `max` is then the most of the others. */
  loops: boolean;
}

/** Most distinct condition sets kept per step; beyond, paths lose their conditions (counts stay exact). */
const maxStates = 64;

const cache = new WeakMap<Machine, ClassCycles[]>();

/** The cycle counts of every class of a machine, computed once per model. */
export function cycleCountsOf(machine: Machine): ClassCycles[] {
  let counts = cache.get(machine);
  if (!counts) cache.set(machine, (counts = machine.classes.map((cls) => classCycles(machine, cls))));
  return counts;
}

export function classCycles(machine: Machine, cls: ClassDef): ClassCycles {
  const specs = instructionsOfClass(cls);
  const instructions: InstructionCycles[] = specs.length
    ? specs.map((spec) => ({ mnemonic: spec.mnemonic, ...instructionCycles(machine, cls, instructionCube(spec)) }))
    : [instructionCycles(machine, cls, cls.opcode === undefined ? { mask: 0, value: 0 } : { mask: 0x7f, value: cls.opcode })];
  const mins = instructions.flatMap((i) => (i.min === undefined ? [] : [i.min]));
  const maxes = instructions.flatMap((i) => (i.max === undefined ? [] : [i.max]));
  return {
    className: cls.name,
    instructions,
    min: mins.length ? Math.min(...mins) : undefined,
    max: maxes.length ? Math.max(...maxes) : undefined,
    doesNotEnd: instructions.some((i) => i.doesNotEnd !== undefined),
    tooManyInputs: instructions.some((i) => i.counts === undefined),
    loops: instructions.some((i) => i.loopSteps !== undefined && i.loopCount === undefined),
  };
}

/** The counts of the instructions in `cube` through `cls` (union over the bits the guards test that `cube` leaves free). */
export function instructionCycles(machine: Machine, cls: ClassDef, cube: Cube): InstructionCycles {
  const all = [...cls.steps.values()].flat();
  const { irMask: guardMask, flags: classFlags } = guardInputs(all);
  // On a sequencer machine the bits a dispatch map reads decide the next step too.
  const irMask = hasSequencer(machine) ? (guardMask | sequencerMapMask(machine, cls)) >>> 0 : guardMask;
  const free = bitsOf((irMask & ~cube.mask) >>> 0);
  // The same bound as the checks' walk (reach.ts): instruction bits and flags together.
  if (free.length + classFlags.length > maxWalkInputs) return {};
  if (hasSequencer(machine)) return sequencedCycles(machine, cls, cube, free);
  const lastStep = Math.max(-1, ...cls.steps.keys());
  const ends = new Map<number, Set<string>>();
  const offEnd = new Set<string>();
  for (const irScenario of scenarios(cube, free, [])) {
    // The paths still running at this step, by the conditions that brought them here.
    let running = new Map<string, string[]>([['', []]]);
    for (let step = 0; step <= lastStep && running.size; step++) {
      const alts = cls.steps.get(step) ?? [];
      const { flags } = guardInputs(alts);
      const flagScenarios = [...scenarios(irScenario.ir, [], flags)];
      // What each flag combination does here: ends, goes on, or both (two matching alternatives).
      const outcomes = flagScenarios.map((scenario) => {
        const matching: StepAlt[] = matchingAlternatives(alts, scenario);
        return { scenario, ends: matching.some((a) => altEnds(machine, a)), goesOn: matching.length === 0 || matching.some((a) => !altEnds(machine, a)) };
      });
      // A flag decides the count only where the combinations do not all do the same.
      const decides = outcomes.some((o) => o.ends !== outcomes[0].ends || o.goesOn !== outcomes[0].goesOn);
      const next = new Map<string, string[]>();
      for (const conditions of running.values()) {
        for (const o of outcomes) {
          const here = decides ? addConditions(conditions, flags.map((f) => flagText(f, o.scenario.flags.get(f)!))) : conditions;
          if (o.ends) (ends.get(step + 1) ?? ends.set(step + 1, new Set()).get(step + 1)!).add(here.join(', '));
          if (o.goesOn) {
            const kept = next.size >= maxStates ? [] : here;
            next.set(kept.join(', '), kept);
          }
        }
      }
      running = next;
    }
    for (const conditions of running.values()) offEnd.add(conditions.join(', '));
  }
  const counts: StepCount[] = [...ends]
    .sort((a, b) => a[0] - b[0])
    .map(([steps, conditions]) => ({ steps, conditions: conditions.has('') ? [] : [...conditions].sort() }));
  const result: InstructionCycles = { counts };
  if (counts.length) {
    result.min = counts[0].steps;
    result.max = counts[counts.length - 1].steps;
  }
  if (offEnd.size) result.doesNotEnd = offEnd.has('') ? [] : [...offEnd].sort();
  return result;
}

/**
 * The counts on a sequencer machine: the step graph (stepGraph.ts) of each combination of the
 * instruction bits, merged, the fewest steps from step 0 to
 * the end (a next step of 0), and the steps on a cycle that can still reach the end (the max is
 * then unbounded). A next step the word does not fix (a sequencer input from a bus) is not counted.
 */
function sequencedCycles(machine: Machine, cls: ClassDef, cube: Cube, free: number[]): InstructionCycles {
  // One graph over every combination of the free instruction bits (their edges together).
  const merged = mergeGraphs([...scenarios(cube, free, [])].map((irScenario) => stepGraph(machine, cls, irScenario.ir)));
  if (merged.unknown.size) return {};
  const nextOf = (step: number) => (merged.out.get(step) ?? []).map((e) => e.to);
  // Fewest steps to the end: a breadth-first walk, one step per edge, the end after a step whose next is 0.
  const depth = new Map<number, number>([[0, 1]]);
  const order = [0];
  let min: number | undefined;
  for (let i = 0; i < order.length; i++) {
    const step = order[i];
    for (const to of nextOf(step)) {
      if (to === 0) min = min === undefined ? depth.get(step)! : Math.min(min, depth.get(step)!);
      else if (!depth.has(to)) {
        depth.set(to, depth.get(step)! + 1);
        order.push(to);
      }
    }
  }
  if (min === undefined) return { counts: [], doesNotEnd: [] };
  const ending = endingSteps(merged);
  // The loops on the way to the end (a loop one of whose steps ends ends from all of them).
  const loopSteps = stepsOfNodes(
    merged,
    loopsOf(merged)
      .filter((loop) => loop.some((node) => ending.has(node)))
      .flat(),
  );
  // A reached step from which no path returns to 0 (a micro-loop, the flow checks report it): some path does not end.
  const stuck = merged.reached.some((step) => !ending.has(step));
  // Without a loop that ends the most is the longest path to the end; a cycle that never ends
  // (a step met again on the path) leads nowhere and counts for nothing.
  let max = min;
  if (!loopSteps.length) {
    const longest = new Map<number, number>();
    const onPath = new Set<number>();
    const visit = (step: number): number => {
      if (longest.has(step)) return longest.get(step)!;
      if (onPath.has(step)) return -Infinity;
      onPath.add(step);
      let best = -Infinity;
      for (const to of nextOf(step)) best = Math.max(best, to === 0 ? 1 : 1 + visit(to));
      onPath.delete(step);
      longest.set(step, best);
      return best;
    };
    max = Math.max(min, visit(0));
  }
  const counts: StepCount[] = loopSteps.length || max === min ? [{ steps: min, conditions: [] }] : [{ steps: min, conditions: [] }, { steps: max, conditions: [] }];
  const loopCount = loopSteps.length && !stuck ? loopCountOf(machine, cls, cube, free, loopSteps) : undefined;
  // A loop whose count is a formula of the operand is bounded: its most steps are the formula's at the operand's widest value.
  return { counts, min: loopCount ? loopCount.least : min, max: loopSteps.length ? loopCount?.most : max, ...(loopSteps.length && { loopSteps }), ...(loopCount && { loopCount }), ...(stuck && { doesNotEnd: [] }) };
}

function addConditions(conditions: string[], added: string[]): string[] {
  const result = [...conditions];
  for (const c of added) if (!result.includes(c)) result.push(c);
  return result;
}

function flagText(flag: string, value: number): string {
  return value ? flag : `not ${flag}`;
}

/** `3–4`, or `4` when both are the same; `?` when unknown; with a loop `4 + n`, or its formula (`4 + shamt`). */
export function rangeText(min: number | undefined, max: number | undefined, loopSteps?: number[], loopCount?: LoopCount): string {
  if (loopCount) return loopCount.operand.kind === 'constant' ? String(loopCount.least) : loopCount.formula;
  if (min !== undefined && loopSteps?.length) return `${min} + n`;
  if (min === undefined || max === undefined) return '?';
  return min === max ? String(min) : `${min}–${max}`;
}

/** The counts of one instruction in words: `3 not taken, 4 taken`, `4`, `4, or does not end (taken)`. */
export function countsText(cycles: InstructionCycles): string {
  if (!cycles.counts) return 'not counted (its guards test too many inputs, or a next step the table does not fix)';
  if (cycles.loopCount) return loopCountText(cycles.loopCount);
  if (cycles.loopSteps?.length) return `${cycles.min} + n (n: repeats of step${cycles.loopSteps.length > 1 ? 's' : ''} ${cycles.loopSteps.join(', ')})`;
  const parts = cycles.counts.map((c) => (cycles.counts!.length > 1 && c.conditions.length ? `${c.steps} ${c.conditions.join(' or ')}` : String(c.steps)));
  if (cycles.counts.length > 1 && cycles.counts.every((c) => !c.conditions.length)) parts.splice(0, parts.length, rangeText(cycles.min, cycles.max));
  if (cycles.doesNotEnd) parts.push(`does not end${cycles.doesNotEnd.length ? ` (${cycles.doesNotEnd.join(' or ')})` : ''}`);
  return parts.join(', ') || 'does not end';
}

/** A loop's count in words: `4 + shamt`; a count the word fixes, `7 (4 + 3: a fixed count)`. */
export function loopCountText(count: LoopCount): string {
  return count.operand.kind === 'constant' ? `${count.least} (${count.formula}: a fixed count)` : count.formula;
}

/** Instructions with the same counts, in the class's order: the groups a lens or a hover lists. */
export function groupsOf(cycles: ClassCycles): { names: string[]; cycles: InstructionCycles }[] {
  const groups = new Map<string, { names: string[]; cycles: InstructionCycles }>();
  for (const i of cycles.instructions) {
    const key = countsText(i);
    const group = groups.get(key);
    if (group) group.names.push(i.mnemonic ?? cycles.className);
    else groups.set(key, { names: [i.mnemonic ?? cycles.className], cycles: i });
  }
  return [...groups.values()];
}

/** Names of a group for a short line: `BEQ..BGEU` for a run of three or more of the class's instructions in order. */
export function groupNames(names: string[], all: string[]): string {
  const upper = names.map((n) => n.toUpperCase());
  const first = all.indexOf(names[0]);
  const contiguous = names.length >= 3 && names.every((n, i) => all[first + i] === n);
  return contiguous ? `${upper[0]}..${upper[upper.length - 1]}` : upper.join(', ');
}

/** The class's counts in one short line: `4 steps`, `3–4 steps (BEQ..BGEU: 3 not taken, 4 taken)`. */
export function cyclesSummary(cycles: ClassCycles): string {
  if (cycles.tooManyInputs) return 'steps not counted (guards test too many inputs)';
  const groups = groupsOf(cycles);
  const all = cycles.instructions.map((i) => i.mnemonic ?? cycles.className);
  const head = cycles.min === undefined ? 'does not end' : cycles.loops ? `${cycles.min} or more steps` : `${rangeText(cycles.min, cycles.max)} ${cycles.min === cycles.max && cycles.min === 1 ? 'step' : 'steps'}`;
  const only = groups.length === 1 ? groups[0].cycles : undefined;
  if (only && !cycles.loops && (cycles.min === undefined || (only.counts!.length <= 1 && !only.doesNotEnd))) return head;
  const detail = groups.map((g) => (all.length > 1 ? `${groupNames(g.names, all)}: ${countsText(g.cycles)}` : countsText(g.cycles))).join('; ');
  return `${head} (${detail})`;
}
