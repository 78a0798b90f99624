// micro-loop: on a machine with a sequencer part, a set of steps an instruction reaches from
// which no path ever returns the sequencer to step 0. Whatever its flags do, the instruction
// never ends and the next one is never fetched. The graph is flow/stepGraph.ts's; a class none
// of whose alternatives returns to 0 at all is class-no-end's, not repeated here.
import { type Check } from './context';
import { altEnds } from './reach';
import { hasSequencer } from '../model/sequencing';
import { endingSteps, instructionGraphs, loopsOf, stepsOfNodes, stepsText } from '../flow/stepGraph';
import type { RelatedInfo } from '../text/diagnostic';

export const microLoop: Check = {
  codes: ['micro-loop'],
  run(ctx) {
    const machine = ctx.machine;
    if (!hasSequencer(machine)) return;
    for (const cls of machine.classes) {
      const alts = [...cls.steps.values()].flat();
      if (!alts.some((alt) => altEnds(machine, alt))) continue; // class-no-end
      const reported = new Set<string>();
      for (const { name, graph } of instructionGraphs(machine, cls) ?? []) {
        const ending = endingSteps(graph);
        // The steps that can repeat among those it can never leave: the loop it ends up in (the
        // steps leading there cannot end either, but they run once).
        const trapped = stepsOfNodes(graph, loopsOf(graph).filter((loop) => !ending.has(loop[0])).flat());
        const key = trapped.join();
        if (!trapped.length || reported.has(key)) continue;
        reported.add(key);
        const written = trapped.filter((s) => cls.steps.has(s));
        // Every trap holds a written step: a fill word counts on, and counting on only wraps to 0.
        if (!written.length) continue;
        const first = cls.steps.get(written[0])![0];
        const at = first.phase ? first.phase.useSpan : first.numberSpan;
        const related: RelatedInfo[] = written.flatMap((s) => cls.steps.get(s)!).map((alt) => ({ span: alt.span, message: `step ${alt.step}${alt.phase ? ` (phase ${alt.phase.name})` : ''}` }));
        ctx.report(
          'micro-loop',
          at,
          `${name} reaches ${stepsText(trapped)} of class ${cls.name}, from which no path returns the sequencer \`${machine.sequencer}\` to step 0: whatever the flags do, the instruction never ends and the next one is never fetched; give the loop a way out (an alternative that returns to 0 or leads to a step that does)`,
          related,
        );
      }
    }
  },
};
