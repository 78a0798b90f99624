// The step graph of one instruction on a machine with a sequencer part: from step 0, every step
// its word (an alternative some flag value selects, or the fill word where none applies) sends
// the sequencer to (model/sequencing.ts), with the flag values that take each edge. An edge to
// step 0 is the end of the instruction and is not followed. The instruction's bits are fixed;
// a flag is unknown at every step (it may change at any closing edge), so every alternative some
// flag value selects is an edge. The cycle counts (cycleCounts.ts) and the control-flow checks
// (checks/microLoop.ts, loopExit.ts, stepUnreachable.ts, callReturn.ts, returnDepth.ts) share
// it, and on a sequencer machine the walk of what an instruction reaches (checks/reach.ts) and
// guard coverage follow it.
//
// A node of the graph is the sequencer's state: the step and, on a sequencer with return
// registers, what they hold and which calls are open (model/sequencing.ts ReturnContext). A
// routine called from two places is then two paths that return each to its own caller, never
// a loop between them. Without return registers (or before any call) a node's number is its
// step; other nodes get numbers from `firstContextNode` on, and `stepOf` says their step.
//
// Deliberately not here: what a loop's steps do to its flags (checks/loopExit.ts decides), and
// machines without a sequencer (their steps only count on: checks/reach.ts walks them).
import { type Cube, bitsOf, rowMatches, describeScenario, guardInputs, instructionCube, instructionsOfClass, matchingAlternatives, maxWalkInputs, scenarios } from '../checks/inputSpace';
import { type ReturnContext, contextKey, sequencerFields, sequencerMove, startContext } from '../model/sequencing';
import type { ClassDef, DecodeMap, Machine, StepAlt } from '../model/types';

/** One way out of a step: the alternative (undefined: the fill word), where it goes, and under which flag values. */
export interface StepEdge {
  /** The node it leaves and the node it goes to (0: the end of the instruction). */
  from: number;
  to: number;
  alt?: StepAlt;
  /** The flag values (of the flags the step's guards test) that select it. */
  flags: Map<string, number>[];
}

/** A call or return that goes wrong on some path (checks/callReturn.ts, returnDepth.ts report them). */
export interface CallProblem {
  /**
   * `no-return`: the instruction ends while the call at `call` is still open; `return-without-call`:
   * a return reads a register no call of this instruction set (or one already returned to);
   * `depth`: a call overwrote the step saved by the open call at `call` (more nested calls than registers).
   */
  kind: 'no-return' | 'return-without-call' | 'depth';
  /** The step whose word does it (the end, the return, the nested call). */
  step: number;
  alt?: StepAlt;
  /** The call it concerns (for `no-return` and `depth`). */
  call?: number;
}

export interface StepGraph {
  /** The nodes reached from step 0, in breadth-first order (node 0, step 0, first). */
  reached: number[];
  /** The distinct steps of the reached nodes, in the same order. */
  steps: number[];
  /** The edges out of each reached node. */
  out: Map<number, StepEdge[]>;
  /** Reached nodes whose next step the word does not fix (a sequencer input from a bus: next-step-unknown reports it): the graph is incomplete. */
  unknown: Set<number>;
  /** Calls and returns that go wrong (none on a sequencer without return registers). */
  callProblems: CallProblem[];
  /** The step of a node. */
  stepOf: (node: number) => number;
}

/** Node numbers from here on stand for a step with return registers that hold something. */
export const firstContextNode = 2 ** 24;

interface NodeTable {
  ids: Map<string, number>;
  steps: number[];
  contexts: ReturnContext[];
}

const nodeTables = new WeakMap<Machine, NodeTable>();

/** The node of a step with return registers `context`, numbered once per model so that graphs of one class can be merged. */
function nodeOf(machine: Machine, step: number, context: ReturnContext): number {
  const key = contextKey(context);
  if (key === '') return step;
  let table = nodeTables.get(machine);
  if (!table) nodeTables.set(machine, (table = { ids: new Map(), steps: [], contexts: [] }));
  const full = `${step}|${key}`;
  let id = table.ids.get(full);
  if (id === undefined) {
    id = firstContextNode + table.steps.length;
    table.ids.set(full, id);
    table.steps.push(step);
    table.contexts.push(context);
  }
  return id;
}

function stepOfNode(machine: Machine, node: number): number {
  return node < firstContextNode ? node : nodeTables.get(machine)!.steps[node - firstContextNode];
}

function contextOfNode(machine: Machine, node: number): ReturnContext {
  return node < firstContextNode ? startContext(machine) : nodeTables.get(machine)!.contexts[node - firstContextNode];
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
  const callProblems: CallProblem[] = [];
  const problemKeys = new Set<string>();
  const problem = (p: CallProblem) => {
    const key = `${p.kind}:${p.step}:${p.call}:${p.alt?.span.start}`;
    if (problemKeys.has(key)) return;
    problemKeys.add(key);
    callProblems.push(p);
  };
  for (let i = 0; i < reached.length; i++) {
    const node = reached[i];
    const step = stepOfNode(machine, node);
    const context = contextOfNode(machine, node);
    const alts = cls.steps.get(step) ?? [];
    const { flags: guardFlags } = guardInputs(alts);
    // A next step from a decode map (a dispatch on the instruction's bits): the map's inputs
    // are enumerated with the flags, so each edge has the code its row gives.
    const maps = sequencerMaps(machine, alts);
    const mapInputs = inputsOfMaps(maps);
    const flags = [...new Set([...guardFlags, ...mapInputs.flags])];
    const edges: StepEdge[] = [];
    out.set(node, edges);
    for (const scenario of scenarios(ir, bitsOf((mapInputs.irMask & ~ir.mask) >>> 0), flags)) {
      const matching = matchingAlternatives(alts, scenario);
      const mapCode = (name: string) => mapCodeFor(machine, name, scenario);
      for (const alt of matching.length ? matching : [undefined]) {
        const move = sequencerMove(machine, alt, step, context, mapCode);
        for (const call of move?.lost ?? []) problem({ kind: 'depth', step, alt, call });
        if (move?.returnOf === null) {
          // A return to a step no call of this instruction saved: not followed. After a call
          // overwrote an open one (reported as such) it is a consequence, not a second problem.
          if (!context.overflowed) problem({ kind: 'return-without-call', step, alt });
          continue;
        }
        if (move?.to === undefined) {
          unknown.add(node);
          continue;
        }
        if (move.to === 0) for (const call of new Set(move.context.calls)) if (call !== undefined) problem({ kind: 'no-return', step, alt, call });
        const to = move.to === 0 ? 0 : nodeOf(machine, move.to, move.context);
        const edge = edges.find((e) => e.alt === alt && e.to === to);
        if (edge) edge.flags.push(scenario.flags);
        else edges.push({ from: node, to, alt, flags: [scenario.flags] });
        if (to !== 0 && !seen.has(to)) {
          seen.add(to);
          reached.push(to);
        }
      }
    }
  }
  const stepOf = (node: number) => stepOfNode(machine, node);
  return { reached, steps: [...new Set(reached.map(stepOf))], out, unknown, callProblems, stepOf };
}

/** The decode maps the alternatives set a field of the sequencer from. */
function sequencerMaps(machine: Machine, alts: readonly StepAlt[]): DecodeMap[] {
  const fields = sequencerFields(machine);
  const names = new Set(alts.flatMap((alt) => alt.actions.flatMap((a) => (a.value?.kind === 'map' && fields.has(a.signal) ? [a.value.map] : []))));
  return [...names].flatMap((name) => machine.maps.get(name) ?? []);
}

/** The instruction bits and flags some decode maps read. */
function inputsOfMaps(maps: readonly DecodeMap[]): { irMask: number; flags: string[] } {
  let irMask = 0;
  const flags = new Set<string>();
  for (const map of maps) {
    for (const { input } of map.inputs) {
      if (input.kind === 'ir') for (let b = input.lo; b <= input.hi; b++) irMask = (irMask | (1 << b)) >>> 0;
      else if (input.kind === 'flag') flags.add(input.name);
    }
  }
  return { irMask, flags: [...flags] };
}

/**
 * The code a decode map gives where the scenario fixes every input it reads: its first matching
 * row's, or the output field's idle code where no row matches (as the encoder lays it).
 */
function mapCodeIn(machine: Machine, map: DecodeMap | undefined, scenario: { ir: Cube; flags: Map<string, number> }): number | undefined {
  if (!map) return undefined;
  const { irMask, flags } = inputsOfMaps([map]);
  if ((irMask & ~scenario.ir.mask) >>> 0 || flags.some((f) => !scenario.flags.has(f))) return undefined;
  const row = map.rows.find((r) => rowMatches(map, r.patterns, scenario));
  if (row) return row.code;
  const out = map.output ? machine.signals.get(map.output) : undefined;
  return out?.type === 'field' ? out.idle : undefined;
}

/** The code the decode map `name` gives where the scenario fixes its inputs (a jump table's row), else undefined. */
export function mapCodeFor(machine: Machine, name: string, scenario: { ir: Cube; flags: Map<string, number> }): number | undefined {
  return mapCodeIn(machine, machine.maps.get(name), scenario);
}

/** The instruction bits the decode maps read that set a field of the sequencer in the class (a dispatch). */
export function sequencerMapMask(machine: Machine, cls: ClassDef): number {
  return inputsOfMaps(sequencerMaps(machine, [...cls.steps.values()].flat())).irMask;
}

/**
 * One graph over several (the instruction's graphs for every combination of its free bits):
 * their nodes and edges together. Node numbers are shared within a model, so the same node in
 * two graphs is the same sequencer state.
 */
export function mergeGraphs(graphs: readonly StepGraph[]): StepGraph {
  const merged: StepGraph = { reached: [], steps: [], out: new Map(), unknown: new Set(), callProblems: [], stepOf: graphs[0]?.stepOf ?? ((n) => n) };
  for (const graph of graphs) {
    for (const node of graph.unknown) merged.unknown.add(node);
    merged.callProblems.push(...graph.callProblems);
    for (const node of graph.reached) {
      let edges = merged.out.get(node);
      if (!edges) {
        merged.reached.push(node);
        merged.out.set(node, (edges = []));
      }
      for (const edge of graph.out.get(node) ?? []) if (!edges.some((e) => e.to === edge.to)) edges.push(edge);
    }
  }
  merged.steps = [...new Set(merged.reached.map(merged.stepOf))];
  return merged;
}

/** The distinct steps of some nodes, sorted. */
export function stepsOfNodes(graph: StepGraph, nodes: Iterable<number>): number[] {
  return [...new Set([...nodes].map(graph.stepOf))].sort((a, b) => a - b);
}

/** The nodes of `within` (default: every reached node) reachable from `from` along edges that `keep` lets through, not through step 0. */
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

/** The reached nodes from which some path returns to step 0 (ends the instruction). */
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
 * The loops of the graph: its strongly connected sets of reached nodes that can repeat (more
 * than one node, or one with an edge to itself), each sorted. Step 0 is never on one: going
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
 * than a walk enumerates (reach.ts's bound), or (unless `incomplete`) when a next step is not
 * known from a word.
 */
export function instructionGraphs(machine: Machine, cls: ClassDef, incomplete = false): InstructionGraph[] | undefined {
  const { irMask: guardMask, flags } = guardInputs([...cls.steps.values()].flat());
  // The bits a dispatch map reads are fixed too, so each instruction's graph has its own targets.
  const irMask = (guardMask | sequencerMapMask(machine, cls)) >>> 0;
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
      if (graph.unknown.size && !incomplete) return undefined;
      const detail = describeScenario(irScenario, freeMask, []);
      result.push({ name: detail ? `${name} (${detail})` : name, mnemonic, ir: irScenario.ir, graph });
    }
  }
  return result;
}
