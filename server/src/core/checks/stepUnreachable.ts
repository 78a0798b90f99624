// step-unreachable: on a machine with a sequencer part, a step a class writes that no
// instruction of the class ever reaches from step 0: nothing counts into it or jumps to it, so
// its word is never run (usually a jump target mistyped, or a loop's exit sent elsewhere). The
// graph is flow/stepGraph.ts's, over every instruction and flag value. Without a sequencer the
// steps only count on and step-gap / class-no-end cover the table. Steps placed by a phase are
// left to the classes that need them.
import { type Check } from './context';
import { hasSequencer } from '../model/sequencing';
import { instructionGraphs } from '../flow/stepGraph';

export const stepUnreachable: Check = {
  codes: ['step-unreachable'],
  run(ctx) {
    const machine = ctx.machine;
    if (!hasSequencer(machine)) return;
    for (const cls of machine.classes) {
      const graphs = instructionGraphs(machine, cls);
      if (!graphs) continue;
      const reached = new Set(graphs.flatMap((g) => g.graph.reached));
      for (const [step, alts] of cls.steps) {
        if (reached.has(step)) continue;
        for (const alt of alts) {
          if (alt.phase) continue;
          ctx.report(
            'step-unreachable',
            alt.numberSpan,
            `step ${step} of class ${cls.name} is never reached: no instruction of the class counts into it or jumps to it from step 0, so its word never runs; jump to it where it is meant to run, or remove it`,
          );
          break;
        }
      }
    }
  },
};
