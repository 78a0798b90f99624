// next-step-unknown: on a machine with a sequencer part, a step whose next step the table does
// not fix: the sequencer reads it from something other than the word's fields and the decode
// maps on the instruction's bits and flags (a bus, a part's value). The checks cannot follow
// the instruction past it, so the control-flow checks, coverage along the control flow and the
// cycle counts of that instruction are not computed. Said as an error rather than skipped in
// silence: a table the tool cannot read must not look as if it checked clean.
import { type Check } from './context';
import { hasSequencer } from '../model/sequencing';
import { instructionGraphs } from '../flow/stepGraph';
import { placeOf } from './callReturn';

export const nextStepUnknown: Check = {
  codes: ['next-step-unknown'],
  run(ctx) {
    const machine = ctx.machine;
    if (!hasSequencer(machine)) return;
    const seq = machine.parts.get(machine.sequencer!);
    const unread = [...(seq?.inputs.entries() ?? [])].filter(([, source]) => source.from !== 'field').map(([name]) => `\`${name}\``);
    for (const cls of machine.classes) {
      const reported = new Set<number>();
      for (const { name, graph } of instructionGraphs(machine, cls, true) ?? []) {
        for (const node of graph.unknown) {
          const step = graph.stepOf(node);
          if (reported.has(step)) continue;
          reported.add(step);
          const alt = cls.steps.get(step)?.[0];
          if (!alt) continue;
          ctx.report(
            'next-step-unknown',
            placeOf(alt),
            `the next step after step ${step} of class ${cls.name} is not fixed by the table for ${name}: the sequencer \`${machine.sequencer}\` reads it ${unread.length ? `through ${unread.join(', ')}, which the word's fields do not set` : 'from something the word does not fix'}, so the control-flow checks, coverage and cycle counts cannot follow the instruction past this step; set the sequencer's inputs from number fields of the word or from decode maps`,
          );
        }
      }
    }
  },
};
