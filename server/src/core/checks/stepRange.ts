// step-overflow / step-gap: step numbers must fit the step counter (as wide as the `step`
// address lines), and a class should not skip numbers between 0 and its last step (the ROM
// holds the fill word there: an idle cycle).
import { type Check } from './context';

export const stepRange: Check = {
  codes: ['step-overflow', 'step-gap'],
  run(ctx) {
    const stepBits = ctx.machine.stepBits;
    const reported = new Set<number>();
    for (const cls of ctx.machine.classes) {
      const steps = [...cls.steps.keys()].sort((a, b) => a - b);
      if (stepBits !== undefined) {
        const limit = 2 ** stepBits;
        for (const step of steps) {
          if (step < limit) continue;
          for (const alt of cls.steps.get(step)!) {
            const at = alt.phase ? alt.phase.useSpan : alt.numberSpan;
            if (reported.has(at.start)) continue;
            reported.add(at.start);
            ctx.report(
              'step-overflow',
              at,
              `step ${step} of class ${cls.name}${alt.phase ? ` (from phase ${alt.phase.name})` : ''} does not fit the ${stepBits}-bit step counter (steps 0 to ${limit - 1}); widen \`step\` in the address layout or use fewer steps`,
            );
          }
        }
      }
      // With a sequencer part a step may be jumped over on purpose, so the gap check is silent;
      // a written step nothing reaches is step-unreachable (stepUnreachable.ts).
      if (ctx.machine.sequencer !== undefined) continue;
      const last = steps[steps.length - 1] ?? 0;
      for (let step = 0; step < last; step++) {
        if (cls.steps.has(step)) continue;
        const next = steps.find((s) => s > step)!;
        const alt = cls.steps.get(next)![0];
        ctx.report(
          'step-gap',
          alt.phase ? alt.phase.useSpan : alt.numberSpan,
          `class ${cls.name} has no step ${step}: the ROM holds the fill word there, so one cycle passes with every strobe idle; renumber the steps or fill the gap`,
        );
        break;
      }
    }
  },
};
