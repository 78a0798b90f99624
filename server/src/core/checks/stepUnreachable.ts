// step-unreachable: on a machine with a sequencer part, a step a class writes that no
// instruction of the class ever reaches from step 0: nothing counts into it or jumps to it, so
// its word is never run (usually a jump target mistyped, or a loop's exit sent elsewhere). The
// graph is flow/stepGraph.ts's, over every instruction and flag value. Without a sequencer the
// steps only count on and step-gap / class-no-end cover the table. Steps placed by a phase are
// left to the classes that need them.
import { type Check } from './context';
import { hasSequencer, sequencerMove } from '../model/sequencing';
import { callAlt } from './callReturn';
import { instructionGraphs } from '../flow/stepGraph';

export const stepUnreachable: Check = {
  codes: ['step-unreachable'],
  run(ctx) {
    const machine = ctx.machine;
    if (!hasSequencer(machine)) return;
    for (const cls of machine.classes) {
      const graphs = instructionGraphs(machine, cls);
      if (!graphs) continue;
      const reached = new Set(graphs.flatMap((g) => g.graph.steps));
      // The step a call saves is reached when its routine returns: where a call never comes
      // back (call-without-return, return-depth say so), that step is not reported again.
      for (const { graph } of graphs) {
        for (const p of graph.callProblems) {
          if (p.kind === 'return-without-call') continue;
          const call = callAlt(machine, cls, p.call!);
          const saved = call ? sequencerMove(machine, call, p.call!)?.context.values[0] : undefined;
          if (saved !== undefined) reached.add(saved);
        }
      }
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
