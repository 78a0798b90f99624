// The steps a timing diagram shows on a machine with a sequencer part, in the order the
// sequencer takes them: from step 0, each column's word (the encoder's point decoder picks it
// with the guard choice's bits and flags) sends the sequencer along the instruction's step
// graph (flow/stepGraph.ts: jumps, holds, a jump table's row, calls and returns, each node the
// step with what the return registers hold), until it returns to step 0. A loop is drawn for a chosen loop count: where a step's
// alternatives part ways between going round again and going on (the flags its guards test
// decide which), the first `loopCount` visits go round and the next one goes on, whatever the
// guard choice says of those flags. Going round is either staying at the step (a hold, or a
// jump to itself) or going to a node from which the walk can come back (the graph's
// reachability); a step with both and a way on first repeats itself, then goes round the larger
// loop, so nested loops are drawn each for the count. A path that never returns to step 0 is
// cut: at a bound of columns, or once a step no path leads back to 0 from has been drawn the
// loop count's times. Within a loop's run of columns a flag the loop count sets has, in the
// columns between two of its decisions, the earlier decision's value up to the last column
// whose closing edge can change it (checks/loopExit.ts says which can) and the later one's
// after it (a flag is taken to change no more often than its decisions say: once, at the last
// chance, as a count reaching zero does), so the addresses (and the words decode maps give) are
// those the board forms.
//
// Deliberately not here: drawing (timing.ts), the words (timingModel.ts), and machines without
// a sequencer (their steps count up in number order).
import { guardInputs } from '../checks/inputSpace';
import { flagChangedIn } from '../checks/loopExit';
import type { PointDecode, PointDecoder } from '../encode/decodePoint';
import type { PointInputs } from '../encode/universe';
import { type StepGraph, endingSteps, loopsOf, reachableFrom, stepGraph, stepsOfNodes } from '../flow/stepGraph';
import type { ClassDef, Machine, StepAlt } from '../model/types';
import { sequencerMove } from '../model/sequencing';

/** The loop count a diagram draws when none is asked for. */
export const defaultLoopCount = 2;
/** The most loop repetitions a diagram is asked to draw. */
export const maxLoopCount = 64;
/** The most columns a sequenced diagram draws; a longer path is cut. */
export const maxSequencedColumns = 64;

/** Why a loop count cannot be drawn (a whole number from 0 to maxLoopCount), or undefined when it can. */
export function loopCountProblem(count: unknown): string | undefined {
  if (typeof count === 'number' && Number.isInteger(count) && count >= 0 && count <= maxLoopCount) return undefined;
  return `the loop count is a whole number from 0 to ${maxLoopCount} (how many times each loop goes round before its way out)`;
}

export interface PathColumn {
  step: number;
  /** The step graph's node: the step, and what the return registers hold. */
  node: number;
  /** The node the sequencer goes to (0: the end); undefined when the word does not fix it. */
  nextNode?: number;
  /** True when the next node comes back to this one: a loop goes round (a hold, a jump back). */
  goesRound: boolean;
  point: PointInputs;
  decoded: PointDecode;
  /** The step the sequencer goes to after this column; undefined when the word does not fix it. */
  next?: number;
  /** The flags of the step's guards that the loop count set here (not the guard choice). */
  loopFlags: string[];
  /** The move is a call (it keeps a return step) or a return (its next step is a return register's). */
  call?: 'call' | 'return';
}

export interface PathLoop {
  /** The steps of the loop (a strongly connected set of the step graph), sorted. */
  steps: number[];
  /** The first and last column of its run. */
  first: number;
  last: number;
  /** The step the run starts at, and how often the run goes back to it. */
  entry: number;
  repeats: number;
  /** The flags the loop count set, with their values while going round and on the way out (when one value each). */
  flags: { name: string; round?: number; out?: number }[];
  /** True when no path from the loop returns to step 0: the run is cut. */
  forEver: boolean;
  /** True when the drawing stops within the run (before the loop's way out). */
  cut: boolean;
}

export type PathCut =
  | { kind: 'bound'; columns: number; canEnd: boolean }
  | { kind: 'for-ever'; step: number; times: number }
  | { kind: 'unknown-next'; step: number }
  | { kind: 'not-followed'; step: number };

export interface SequencedPath {
  columns: PathColumn[];
  loops: PathLoop[];
  cut?: PathCut;
}

interface Option {
  flags: Map<string, number>;
  decoded: PointDecode;
  next?: number;
  /** 0: stays at the step; 1: goes round (comes back to it); 2: goes on (never back). */
  level?: number;
}

/**
 * The columns of one class for one instruction word and flag choice. `base.flags` holds a value
 * for every flag on the address lines (the choice's, or 0); `base.step` is not read.
 */
export function sequencedPath(machine: Machine, cls: ClassDef, decoder: PointDecoder, base: PointInputs, loopCount: number): SequencedPath {
  const graph = stepGraph(machine, cls, { mask: 0xffffffff, value: base.ir >>> 0 });
  const ending = endingSteps(graph);
  const stepOf = (node: number) => (node === 0 ? 0 : graph.stepOf(node));
  const comesBack = new Map<number, Set<number>>();
  const reach = (from: number) => {
    let found = comesBack.get(from);
    if (!found) comesBack.set(from, (found = reachableFrom(graph, from)));
    return found;
  };
  const counters = new Map<number, [number, number]>();
  const visits = new Map<number, number>();
  const columns: PathColumn[] = [];
  let cut: PathCut | undefined;
  let node = 0;
  for (;;) {
    const step = stepOf(node);
    if (columns.length >= maxSequencedColumns) {
      cut = { kind: 'bound', columns: columns.length, canEnd: ending.has(node) };
      break;
    }
    const alts = cls.steps.get(step) ?? [];
    const tested = guardInputs(alts).flags.filter((f) => base.flags.has(f));
    const options: Option[] = [];
    for (let combo = 0; combo < 1 << tested.length; combo++) {
      const flags = new Map(base.flags);
      tested.forEach((f, i) => flags.set(f, (combo >> i) & 1));
      const decoded = decoder.decode({ ...base, step, flags });
      const next = nextNode(graph, node, decoded.cls === cls ? decoded.alt : undefined, flags);
      const level = next === undefined ? undefined : next === 0 ? 2 : next === node ? 0 : reach(next).has(node) ? 1 : 2;
      options.push({ flags, decoded, next, level });
    }
    const chosenIndex = options.findIndex((o) => tested.every((f) => o.flags.get(f) === base.flags.get(f)));
    let chosen = options[chosenIndex];
    let loopFlags: string[] = [];
    const levels = [...new Set(options.map((o) => o.level).filter((l): l is number => l !== undefined))].sort((a, b) => a - b);
    if (levels.length > 1 && options.every((o) => o.level !== undefined)) {
      const wanted = pickLevel(levels, counters, node, loopCount);
      chosen = closest(options.filter((o) => o.level === wanted), base.flags, tested);
      loopFlags = decidingFlags(options, tested);
    }
    const to = chosen.next;
    const move = chosen.decoded.cls === cls ? sequencerMove(machine, chosen.decoded.alt, step) : undefined;
    columns.push({
      step,
      node,
      nextNode: to,
      goesRound: chosen.level !== undefined && chosen.level < 2,
      point: { ...base, step, flags: chosen.flags },
      decoded: chosen.decoded,
      next: to === undefined ? undefined : stepOf(to),
      loopFlags,
      ...(move?.calls ? { call: 'call' as const } : move?.returnOf !== undefined ? { call: 'return' as const } : {}),
    });
    visits.set(node, (visits.get(node) ?? 0) + 1);
    if (to === undefined) {
      // A next step read from a bus (the graph marks it), or a return no call of the instruction saved.
      cut = graph.unknown.has(node) ? { kind: 'unknown-next', step } : { kind: 'not-followed', step };
      break;
    }
    if (to === 0) break;
    const times = Math.max(loopCount, 1);
    if (!ending.has(to) && (visits.get(to) ?? 0) >= times) {
      cut = { kind: 'for-ever', step: stepOf(to), times };
      break;
    }
    node = to;
  }
  const loops = drawnLoops(graph, columns, loopsOf(graph), ending);
  for (const loop of loops) loop.cut = cut !== undefined && loop.last === columns.length - 1;
  for (const loop of loops) holdLoopFlags(machine, cls, decoder, columns, loop);
  return { columns, loops, cut };
}

/**
 * Gives the flags a loop's decisions set their values in the run's other columns (see the top of
 * the file), where the column's guards do not test them (so its alternative stays), and decodes
 * those columns again with them.
 */
function holdLoopFlags(machine: Machine, cls: ClassDef, decoder: PointDecoder, columns: PathColumn[], loop: PathLoop): void {
  const changes = (i: number, flag: string) => {
    const alt = columns[i].decoded.cls === cls ? columns[i].decoded.alt : undefined;
    return flagChangedIn(machine, flag, alt ? [alt] : []);
  };
  for (const { name } of loop.flags) {
    const decisions = [];
    for (let i = loop.first; i <= loop.last; i++) if (columns[i].loopFlags.includes(name)) decisions.push(i);
    if (!decisions.length) continue;
    const valueAt = new Map<number, number>();
    // Before its first decision the flag is taken to have that decision's value already: the
    // diagram does not know what the columns before the loop left in the flag's part.
    let from = loop.first - 1;
    let before = columns[decisions[0]].point.flags.get(name)!;
    for (const d of [...decisions, loop.last + 1]) {
      const after = d <= loop.last ? columns[d].point.flags.get(name)! : before;
      let last = -1;
      if (before !== after) for (let i = Math.max(from, loop.first); i < d; i++) if (changes(i, name)) last = i;
      for (let i = from + 1; i < d; i++) valueAt.set(i, last >= 0 && i > last ? after : before);
      from = d;
      before = after;
    }
    for (const [i, value] of valueAt) {
      const c = columns[i];
      const tested = guardInputs(cls.steps.get(c.step) ?? []).flags.includes(name);
      if (tested || c.point.flags.get(name) === value) continue;
      const flags = new Map(c.point.flags).set(name, value);
      c.point = { ...c.point, flags };
      c.decoded = decoder.decode(c.point);
    }
  }
}

/** The node the edge of `alt` out of `node` goes to under the flag values (0: the end), if the graph has one. */
function nextNode(graph: StepGraph, node: number, alt: StepAlt | undefined, flags: Map<string, number>): number | undefined {
  const edges = (graph.out.get(node) ?? []).filter((e) => e.alt === alt);
  const taken = edges.find((e) => e.flags.some((f) => [...f].every(([name, value]) => flags.get(name) === value)));
  return (taken ?? (edges.length === 1 ? edges[0] : undefined))?.to;
}

/**
 * Which way a step that parts ways goes on this visit: the lowest level present that has gone
 * round fewer than `loopCount` times since the step last went a higher way (each such turn
 * resets the counts below it), else the highest level, which resets them all.
 */
function pickLevel(levels: number[], counters: Map<number, [number, number]>, node: number, loopCount: number): number {
  let count = counters.get(node);
  if (!count) counters.set(node, (count = [0, 0]));
  const top = levels[levels.length - 1];
  for (const level of levels) {
    if (level === top) break;
    if (count[level] < loopCount) {
      count[level]++;
      for (let lower = 0; lower < level; lower++) count[lower] = 0;
      return level;
    }
  }
  count[0] = 0;
  count[1] = 0;
  return top;
}

/** Of the options, the one whose tested flags differ least from the choice (the first such). */
function closest(options: Option[], choice: Map<string, number>, tested: string[]): Option {
  let best = options[0];
  let bestDistance = Infinity;
  for (const o of options) {
    const distance = tested.filter((f) => o.flags.get(f) !== choice.get(f)).length;
    if (distance < bestDistance) {
      best = o;
      bestDistance = distance;
    }
  }
  return best;
}

/** The tested flags whose value alone changes which way the step goes. */
function decidingFlags(options: Option[], tested: string[]): string[] {
  return tested.filter((_, i) => options.some((o, combo) => options[combo ^ (1 << i)].level !== o.level));
}

/** Runs of neighbouring columns whose nodes are on one loop of the graph, as drawn. */
function drawnLoops(graph: StepGraph, columns: PathColumn[], loops: number[][], ending: Set<number>): PathLoop[] {
  const loopOf = (node: number) => loops.find((l) => l.includes(node));
  const drawn: PathLoop[] = [];
  for (let i = 0; i < columns.length; ) {
    const loop = loopOf(columns[i].node);
    if (!loop) {
      i++;
      continue;
    }
    let last = i;
    while (last + 1 < columns.length && loop.includes(columns[last + 1].node)) last++;
    const entry = columns[i].node;
    let repeats = 0;
    for (let k = i + 1; k <= last; k++) if (columns[k].node === entry) repeats++;
    const names = [...new Set(columns.slice(i, last + 1).flatMap((c) => c.loopFlags))];
    const flags = names.map((name) => {
      const round = new Set<number>();
      const out = new Set<number>();
      for (let k = i; k <= last; k++) {
        const c = columns[k];
        if (!c.loopFlags.includes(name)) continue;
        (c.nextNode !== undefined && c.nextNode !== 0 && loop.includes(c.nextNode) ? round : out).add(c.point.flags.get(name)!);
      }
      return { name, round: round.size === 1 ? [...round][0] : undefined, out: out.size === 1 ? [...out][0] : undefined };
    });
    drawn.push({ steps: stepsOfNodes(graph, loop), first: i, last, entry: columns[i].step, repeats, flags, forEver: !loop.some((n) => ending.has(n)), cut: false });
    i = last + 1;
  }
  return drawn;
}
