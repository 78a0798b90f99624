// loop-exit-unchanged: on a machine with a sequencer part, a loop (steps an instruction can
// repeat) whose ways out depend on flags that none of the loop's steps can change. Entered with
// those flags set the way that keeps it going, the loop never ends. A latched flag changes only
// at a closing edge where an edge port of its part (or of a part it reads) acts: a strobe of
// the loop's steps, a connection, or an `always` port; a combinational flag also changes when a
// loop step drives a bus it reads or it reads a control (model/flagFacts.ts). A flag not
// understood here counts as changed (no false alarm). The graph is flow/stepGraph.ts's; loops
// with no way out at all are micro-loop's.
import { type Check, driversByBus } from './context';
import { guardInputs, scenarios } from './inputSpace';
import { hasSequencer } from '../model/sequencing';
import { flagFacts } from '../model/flagFacts';
import { driverNamed } from '../model/busDrivers';
import { type StepEdge, endingSteps, instructionGraphs, loopsOf, reachableFrom, stepsOfNodes, stepsText } from '../flow/stepGraph';
import type { Machine, StepAlt } from '../model/types';

export const loopExit: Check = {
  codes: ['loop-exit-unchanged'],
  run(ctx) {
    const machine = ctx.machine;
    if (!hasSequencer(machine)) return;
    for (const cls of machine.classes) {
      const reported = new Set<string>();
      for (const { name, graph } of instructionGraphs(machine, cls) ?? []) {
        const ending = endingSteps(graph);
        for (const loop of loopsOf(graph)) {
          if (!ending.has(loop[0])) continue; // no way out at all: micro-loop
          const inLoop = new Set(loop);
          const loopSteps = stepsOfNodes(graph, loop);
          const loopAlts = loopSteps.flatMap((s) => cls.steps.get(s) ?? []);
          const fixed = guardInputs(loopAlts).flags.filter((flag) => !flagChangedIn(machine, flag, loopAlts));
          if (!fixed.length) continue;
          const entries = loop.filter((s) => graph.reached.some((from) => !inLoop.has(from) && graph.out.get(from)!.some((e) => e.to === s)));
          for (const { flags: held } of scenarios({ mask: 0, value: 0 }, [], fixed)) {
            // The edges the loop can take while the unchanged flags hold these values.
            const keep = (e: StepEdge) => e.flags.some((f) => fixed.every((n) => !f.has(n) || f.get(n) === held.get(n)));
            const exits = (s: number) => (graph.out.get(s) ?? []).some((e) => !inLoop.has(e.to) && keep(e));
            const inside = new Set<number>();
            for (const entry of entries) for (const s of [entry, ...reachableFrom(graph, entry, keep, inLoop)]) inside.add(s);
            const stuck = [...inside].filter((s) => !exits(s) && ![...reachableFrom(graph, s, keep, inLoop)].some(exits));
            if (!stuck.length) continue;
            const key = `${loopSteps.join()}|${fixed.join()}`;
            if (reported.has(key)) break;
            reported.add(key);
            const first = cls.steps.get(loopSteps.find((s) => cls.steps.has(s)) ?? -1)?.[0];
            if (!first) break;
            const values = fixed.map((n) => `${n}=${held.get(n)}`).join(' ');
            const names = fixed.map((n) => `\`${n}\``).join(', ');
            ctx.report(
              'loop-exit-unchanged',
              first.phase ? first.phase.useSpan : first.numberSpan,
              `${stepsText(loopSteps)} of class ${cls.name} ${loopSteps.length > 1 ? 'repeat' : 'repeats'} for ${name} until ${names} change${fixed.length > 1 ? '' : 's'}, but no step of the loop changes ${fixed.length > 1 ? 'them' : 'it'}: entered with ${values} the loop never ends; change the flag in the loop (clock or count its part, or drive the bus it reads) or exit on a flag the loop changes`,
              loopAlts.map((alt) => ({ span: alt.span, message: `step ${alt.step} of the loop${alt.phase ? ` (phase ${alt.phase.name})` : ''}` })),
            );
            break;
          }
        }
      }
    }
  },
};

/** Whether some step of a loop (its alternatives `alts`) can change `flag` (the timing diagram asks it of one step). */
export function flagChangedIn(machine: Machine, flag: string, alts: readonly StepAlt[]): boolean {
  const fact = flagFacts(machine).get(flag);
  if (!fact) return true;
  // The parts whose state it reads: its own, and those it reads through inputs.
  const parts = new Set([fact.part.name]);
  for (const source of fact.part.inputs.values()) {
    if (source.from === 'part') parts.add(source.name);
    if (source.from === 'instruction') for (const p of machine.parts.values()) if (p.def.holds.some((h) => h.role === 'instruction')) parts.add(p.name);
  }
  for (const name of parts) {
    const part = machine.parts.get(name);
    if (!part || part.def.edges.some((e) => e.always)) return true;
  }
  const acts = (signal: string) => {
    const strobe = driverNamed(machine, signal);
    return strobe?.part !== undefined && parts.has(strobe.part) && strobe.kind !== 'enable';
  };
  if (machine.connections.some((c) => acts(c.name))) return true;
  if (alts.some((alt) => alt.actions.some((a) => acts(a.signal)))) return true;
  if (fact.timing === 'combinational') {
    if (fact.controls.length) return true;
    if (fact.buses.some((bus) => alts.some((alt) => driversByBus(machine, alt).has(bus)))) return true;
  }
  return false;
}
