// Which steps an instruction reaches: its walk through its class from step 0, as the step
// counter and the address lines take it. The instruction's bits stay fixed for the whole
// instruction; flags may change at any step, so a path goes on past a step when some flag
// value lets it (an alternative that does not end, or none that applies, which is the fill
// word and never ends). Every step before the first one that ends for all flag values is
// reached; the steps after it are not. The checks that ask "what does this instruction run"
// (coverage, class end, stored x0 writes) share this one walk. On a machine with a sequencer
// part the alternatives an instruction reaches are those of the steps its step graph reaches
// (flow/stepGraph.ts: jumps and loops followed), where every next step is known.
//
// Deliberately not here: what an instruction does in the steps it reaches (the checks decide),
// and the encoded images (this reasons on the table; checks/entryReach.ts on the images).
import type { ClassDef, Machine, StepAlt } from '../model/types';
import { type Cube, type Scenario, bitsOf, guardInputs, matchingAlternatives, maxWalkInputs, scenarios } from './inputSpace';
import { sequencerMapMask, stepGraph } from '../flow/stepGraph';
import { hasSequencer, nextStepOf } from '../model/sequencing';

/** One way through a class: the instruction bits its guards test fixed, and where it stops. */
export interface InstructionPath {
  /** The instruction's cube with every bit the class's guards test fixed. */
  ir: Cube;
  /** The step that ends the instruction for every flag value, or undefined: it runs off the last step. */
  lastStep: number | undefined;
}

/** An alternative an instruction reaches, with the flag values under which it applies. */
export interface ReachedAlt {
  alt: StepAlt;
  path: InstructionPath;
  flagValues: Map<string, number>[];
  /** The flag values as text, for caches keyed on them. */
  flagKey: string;
}

const endStrobeCache = new WeakMap<Machine, ReadonlySet<string>>();

/** The names of the end-of-instruction strobes (usually one). */
export function endStrobes(machine: Machine): ReadonlySet<string> {
  let names = endStrobeCache.get(machine);
  if (!names) {
    names = new Set([...machine.signals.values()].filter((s) => s.type === 'strobe' && s.kind === 'end').map((s) => s.name));
    endStrobeCache.set(machine, names);
  }
  return names;
}

/**
 * Whether an alternative ends the instruction: it asserts an end strobe, or on a machine with a
 * sequencer part (`holds step`) it returns the sequencer to step 0 (model/sequencing.ts).
 */
export function altEnds(machine: Machine, alt: StepAlt): boolean {
  if (hasSequencer(machine)) return nextStepOf(machine, alt, alt.step) === 0;
  const names = endStrobes(machine);
  return alt.actions.some((a) => names.has(a.signal));
}

/**
 * On a sequencer machine, whether the word at `step` (an alternative, or the fill word where
 * none applies) lets the walk go past `step`: it counts on or jumps forward, or its next step is
 * not known from the word. One that ends, holds or jumps back keeps the instruction within the
 * steps already reached. (Whether such a loop ever ends is the control-flow checks' question,
 * over flow/stepGraph.ts: this walk only bounds which steps are reached.)
 */
function goesPast(machine: Machine, alt: StepAlt | undefined, step: number): boolean {
  const next = nextStepOf(machine, alt, step);
  return next === undefined || next > step;
}

export { maxWalkInputs } from './inputSpace';

/**
 * The paths of the instructions in `cube` through `cls`: one per combination of the
 * instruction bits the class's guards test (those `cube` leaves free). Undefined when there
 * are more than `maxWalkInputs` of them and flags together.
 */
export function instructionPaths(machine: Machine, cls: ClassDef, cube: Cube): InstructionPath[] | undefined {
  // Several checks walk the same instructions through the same class: walk each once per model.
  let byCube = pathCache.get(cls);
  if (!byCube) pathCache.set(cls, (byCube = new Map()));
  const key = `${cube.mask}:${cube.value}`;
  if (byCube.has(key)) return byCube.get(key);
  const paths = walkPaths(machine, cls, cube);
  byCube.set(key, paths);
  return paths;
}

const pathCache = new WeakMap<ClassDef, Map<string, InstructionPath[] | undefined>>();

function walkPaths(machine: Machine, cls: ClassDef, cube: Cube): InstructionPath[] | undefined {
  const all = [...cls.steps.values()].flat();
  const { irMask: guardMask, flags } = guardInputs(all);
  // On a sequencer machine the bits a dispatch map reads decide where the instruction goes too.
  const irMask = hasSequencer(machine) ? (guardMask | sequencerMapMask(machine, cls)) >>> 0 : guardMask;
  const free = bitsOf((irMask & ~cube.mask) >>> 0);
  if (free.length + flags.length > maxWalkInputs) return undefined;
  // A step none of whose alternatives ends lets every path on: only the others can stop one.
  // With a sequencer a step that loops back or holds stops the walk too (see goesPast).
  const sequencer = hasSequencer(machine);
  const stopping = [...cls.steps.keys()].sort((a, b) => a - b).filter((step) => sequencer || cls.steps.get(step)!.some((alt) => altEnds(machine, alt)));
  const paths: InstructionPath[] = [];
  for (const irScenario of scenarios(cube, free, [])) {
    const flagScenarios = [...scenarios(irScenario.ir, [], flags)];
    let lastStep: number | undefined;
    for (const step of stopping) {
      const alts = cls.steps.get(step)!;
      const goesOn = flagScenarios.some((scenario) => {
        const matching = matchingAlternatives(alts, scenario);
        if (sequencer) return matching.length === 0 ? goesPast(machine, undefined, step) : matching.some((alt) => goesPast(machine, alt, step));
        return matching.length === 0 || !matching.every((alt) => altEnds(machine, alt));
      });
      if (!goesOn) {
        lastStep = step;
        break;
      }
    }
    paths.push({ ir: irScenario.ir, lastStep });
  }
  return paths;
}

/** Whether a path reaches a step. */
export function reaches(path: InstructionPath, step: number): boolean {
  return path.lastStep === undefined || step <= path.lastStep;
}

/**
 * Every alternative the instructions in `cube` reach in `cls`, once per path, with the flag
 * values under which it applies there. Undefined when the walk has too many inputs.
 */
export function reachedAlternatives(machine: Machine, cls: ClassDef, cube: Cube): ReachedAlt[] | undefined {
  const paths = instructionPaths(machine, cls, cube);
  if (!paths) return undefined;
  const { flags } = guardInputs([...cls.steps.values()].flat());
  const reached: ReachedAlt[] = [];
  const sequencer = hasSequencer(machine);
  for (const path of paths) {
    const flagScenarios: Scenario[] = [...scenarios(path.ir, [], flags)];
    // On a sequencer machine the steps the instruction's graph reaches (jumps, loops), unless a
    // next step is not known from a word: then the walk's bound.
    const graph = sequencer ? stepGraph(machine, cls, path.ir) : undefined;
    const graphReached = graph && !graph.unknown.size ? new Set(graph.steps) : undefined;
    for (const [step, alts] of cls.steps) {
      if (graphReached ? !graphReached.has(step) : !reaches(path, step)) continue;
      const byAlt = new Map<StepAlt, Map<string, number>[]>();
      for (const scenario of flagScenarios) {
        for (const alt of matchingAlternatives(alts, scenario)) {
          const list = byAlt.get(alt);
          if (list) list.push(scenario.flags);
          else byAlt.set(alt, [scenario.flags]);
        }
      }
      for (const [alt, flagValues] of byAlt) reached.push({ alt, path, flagValues, flagKey: flagValues.map((f) => [...f].join()).join('|') });
    }
  }
  return reached;
}
