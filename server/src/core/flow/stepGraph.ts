// The step graph of one instruction on a machine with a sequencer part: from step 0, every step
// its word (an alternative some flag value selects, or the fill word where none applies) sends
// the sequencer to (model/sequencing.ts), with the flag values that take each edge. An edge to
// step 0 is the end of the instruction and is not followed. The instruction's bits are fixed;
// a flag is unknown at every step (it may change at any closing edge), so every alternative some
// flag value selects is an edge. The cycle counts (cycleCounts.ts) and the control-flow checks
// (checks/microLoop.ts, loopExit.ts, stepUnreachable.ts) share it, and on a sequencer machine
// the walk of what an instruction reaches (checks/reach.ts) and guard coverage follow it.
//
// Deliberately not here: what a loop's steps do to its flags (checks/loopExit.ts decides), and
// machines without a sequencer (their steps only count on: checks/reach.ts walks them).
import { type Cube, bitsOf, describeScenario, guardInputs, instructionCube, instructionsOfClass, matchingAlternatives, maxWalkInputs, scenarios } from '../checks/inputSpace';
import { nextStepOf } from '../model/sequencing';
import type { ClassDef, Machine, StepAlt } from '../model/types';

/** One way out of a step: the alternative (undefined: the fill word), where it goes, and under which flag values. */
export interface StepEdge {
  from: number;
  to: number;
  alt?: StepAlt;
  /** The flag values (of the flags the step's guards test) that select it. */
  flags: Map<string, number>[];
}

export interface StepGraph {
  /** The steps reached from step 0, in breadth-first order (step 0 first). */
  reached: number[];
  /** The edges out of each reached step. */
  out: Map<number, StepEdge[]>;
  /** Reached steps whose next step the word does not fix (a field from a decode map): the graph is incomplete. */
  unknown: Set<number>;
}

const cache = new WeakMap<ClassDef, Map<string, StepGraph>>();

/** The step graph of the instruction words `ir` (every bit the class's guards test fixed) through `cls`. */
export function stepGraph(machine: Machine, cls: ClassDef, ir: Cube): StepGraph {
  let byIr = cache.get(cls);
  if (!byIr) cache.set(cls, (byIr = new Map()));
  const key = `${ir.mask}:${ir.value}`;
  let graph = byIr.get(key);
  if (!graph) byIr.set(key, (graph = buildGraph(machine, cls, ir)));
  return graph;
}

function buildGraph(machine: Machine, cls: ClassDef, ir: Cube): StepGraph {
  const reached = [0];
  const seen = new Set<number>([0]);
  const out = new Map<number, StepEdge[]>();
  const unknown = new Set<number>();
  for (let i = 0; i < reached.length; i++) {
    const step = reached[i];
    const alts = cls.steps.get(step) ?? [];
    const { flags } = guardInputs(alts);
    const edges: StepEdge[] = [];
    out.set(step, edges);
    for (const scenario of scenarios(ir, [], flags)) {
      const matching = matchingAlternatives(alts, scenario);
      for (const alt of matching.length ? matching : [undefined]) {
        const to = nextStepOf(machine, alt, step);
        if (to === undefined) {
          unknown.add(step);
          continue;
        }
        const edge = edges.find((e) => e.alt === alt && e.to === to);
        if (edge) edge.flags.push(scenario.flags);
        else edges.push({ from: step, to, alt, flags: [scenario.flags] });
        if (to !== 0 && !seen.has(to)) {
          seen.add(to);
          reached.push(to);
        }
      }
    }
  }
  return { reached, out, unknown };
}

/** The steps of `within` (default: every reached step) reachable from `from` along edges that `keep` lets through, not through step 0. */
export function reachableFrom(graph: StepGraph, from: number, keep: (edge: StepEdge) => boolean = () => true, within?: ReadonlySet<number>): Set<number> {
  const found = new Set<number>();
  const stack = [from];
  while (stack.length) {
    const step = stack.pop()!;
    for (const edge of graph.out.get(step) ?? []) {
      if (edge.to === 0 || found.has(edge.to) || !keep(edge) || (within && !within.has(edge.to))) continue;
      found.add(edge.to);
      stack.push(edge.to);
    }
  }
  return found;
}

/** The reached steps from which some path returns to step 0 (ends the instruction). */
export function endingSteps(graph: StepGraph): Set<number> {
  const ending = new Set<number>();
  let changed = true;
  while (changed) {
    changed = false;
    for (const step of graph.reached) {
      if (ending.has(step)) continue;
      if ((graph.out.get(step) ?? []).some((e) => e.to === 0 || ending.has(e.to))) {
        ending.add(step);
        changed = true;
      }
    }
  }
  return ending;
}

/**
 * The loops of the graph: its strongly connected sets of reached steps that can repeat (more
 * than one step, or one with an edge to itself), each sorted. Step 0 is never on one: going
 * back to it is the end.
 */
export function loopsOf(graph: StepGraph): number[][] {
  const reach = new Map(graph.reached.map((s) => [s, reachableFrom(graph, s)] as const));
  const placed = new Set<number>();
  const loops: number[][] = [];
  for (const step of graph.reached) {
    if (placed.has(step) || !reach.get(step)!.has(step)) continue;
    const loop = graph.reached.filter((t) => t === step || (reach.get(step)!.has(t) && reach.get(t)!.has(step))).sort((a, b) => a - b);
    for (const t of loop) placed.add(t);
    loops.push(loop);
  }
  return loops;
}

/** `step 4` or `steps 3, 4`. */
export function stepsText(steps: readonly number[]): string {
  return `step${steps.length > 1 ? 's' : ''} ${steps.join(', ')}`;
}

/** One instruction's graph: its name for messages (`sll (funct3=001 f7b5=0)`) and the graph. */
export interface InstructionGraph {
  name: string;
  /** The RV32I mnemonic (undefined for a class's opcode when no RV32I instruction has it). */
  mnemonic?: string;
  /** The instruction words it stands for: the instruction's cube with every bit the guards test fixed. */
  ir: Cube;
  graph: StepGraph;
}

/**
 * The graphs of every RV32I instruction of a class (of its opcode when none is RV32I), one per
 * combination of the instruction bits its guards test. Undefined when they test more inputs
 * than a walk enumerates (reach.ts's bound), or when a next step is not known from a word.
 */
export function instructionGraphs(machine: Machine, cls: ClassDef): InstructionGraph[] | undefined {
  const { irMask, flags } = guardInputs([...cls.steps.values()].flat());
  const specs = instructionsOfClass(cls);
  const cubes = specs.length
    ? specs.map((s) => ({ name: s.mnemonic, mnemonic: s.mnemonic as string | undefined, cube: instructionCube(s) }))
    : [{ name: `class ${cls.name}`, mnemonic: undefined, cube: cls.opcode === undefined ? { mask: 0, value: 0 } : { mask: 0x7f, value: cls.opcode } }];
  const result: InstructionGraph[] = [];
  for (const { name, mnemonic, cube } of cubes) {
    const freeMask = (irMask & ~cube.mask) >>> 0;
    const free = bitsOf(freeMask);
    if (free.length + flags.length > maxWalkInputs) return undefined;
    for (const irScenario of scenarios(cube, free, [])) {
      const graph = stepGraph(machine, cls, irScenario.ir);
      if (graph.unknown.size) return undefined;
      const detail = describeScenario(irScenario, freeMask, []);
      result.push({ name: detail ? `${name} (${detail})` : name, mnemonic, ir: irScenario.ir, graph });
    }
  }
  return result;
}
