// guard-gap / guard-overlap: the alternatives of each step must be disjoint (at most one
// applies to any address) and exhaustive for what RV32I instructions and flags can reach.
// Where two apply the control word is undefined; where none applies the ROM holds the fill
// word and the instruction silently does nothing at that step. Gaps that only illegal
// encodings reach are allowed: they fall to the fill word by design. On a machine with a
// sequencer part a gap counts only for the instructions whose step graph (flow/stepGraph.ts)
// reaches the step: a step only one instruction jumps to need not cover the others.
import type { StepAlt } from '../model/types';
import { type Check, type CheckContext } from './context';
import { hasSequencer } from '../model/sequencing';
import { instructionGraphs } from '../flow/stepGraph';
import { bitsOf, compiledGuards, compiledHolds, describeScenario, forEachScenario, guardInputs, instructionCube, instructionsOfClass, intersects } from './inputSpace';

export const guardCoverage: Check = {
  codes: ['guard-gap', 'guard-overlap'],
  run(ctx) {
    const reportedOverlaps = new Set<string>();
    for (const cls of ctx.machine.classes) {
      const legal = instructionsOfClass(cls);
      const graphs = hasSequencer(ctx.machine) ? instructionGraphs(ctx.machine, cls) : undefined;
      for (const [step, alts] of cls.steps) {
        if (alts.length === 1 && !alts[0].guard?.length && !alts[0].isElse) continue;
        const { irMask, flags } = guardInputs(alts);
        const free = bitsOf(irMask);
        if (free.length + flags.length > 16) continue;
        const nonElse = alts.filter((a) => !a.isElse);
        const elses = alts.filter((a) => a.isElse);
        if (elses.length > 1) overlap(ctx, reportedOverlaps, elses[0], elses[1], `step ${step} of class ${cls.name} has two \`else\` lines`);
        let gapExample: string | undefined;
        let gapCount = 0;
        const affected = new Set<string>();
        const guards = compiledGuards(nonElse);
        forEachScenario({ mask: 0, value: 0 }, free, flags, (scenario) => {
          // The first two lines that apply, and how many do.
          let matching = 0;
          let first: StepAlt | undefined;
          let second: StepAlt | undefined;
          for (let i = 0; i < nonElse.length; i++) {
            if (!compiledHolds(guards[i], scenario)) continue;
            const alt = nonElse[i];
            matching++;
            if (!first) first = alt;
            else second ??= alt;
          }
          if (matching > 1) {
            overlap(ctx, reportedOverlaps, first!, second!, `step ${step} of class ${cls.name}: both lines apply when ${describeScenario(scenario, irMask, flags) || 'always'}`);
          }
          if (matching === 0 && elses.length === 0) {
            const reached = legal.filter(
              (spec) =>
                intersects(instructionCube(spec), scenario.ir) &&
                (!graphs || graphs.some((g) => g.mnemonic === spec.mnemonic && intersects(g.ir, scenario.ir) && g.graph.steps.includes(step))),
            );
            if (reached.length === 0) return;
            gapCount++;
            gapExample ??= describeScenario(scenario, irMask, flags);
            for (const spec of reached) affected.add(spec.mnemonic);
          }
        });
        if (gapCount > 0) {
          const last = alts[alts.length - 1];
          ctx.report(
            'guard-gap',
            last.numberSpan,
            `no line of step ${step} of class ${cls.name} applies when ${gapExample}${gapCount > 1 ? ` (and ${gapCount - 1} more combination(s))` : ''}; ${[...affected].join(', ')} would run the fill word (every strobe idle) at this step; add the missing case or an \`${step} else:\` line`,
            alts.map((a) => ({ span: a.span, message: 'an alternative of this step' })),
          );
        }
      }
    }
  },
};

function overlap(ctx: CheckContext, reported: Set<string>, a: StepAlt, b: StepAlt, why: string): void {
  const [first, second] = a.span.start <= b.span.start ? [a, b] : [b, a];
  const key = `${first.span.start}:${second.span.start}`;
  if (reported.has(key)) return;
  reported.add(key);
  const origin = (alt: StepAlt) => (alt.phase ? ` (from phase ${alt.phase.name})` : '');
  const target = second.phase ? second.phase.useSpan : second.numberSpan;
  const simple = !first.guard?.length && !second.guard?.length && !first.isElse && !second.isElse;
  ctx.report(
    'guard-overlap',
    target,
    simple
      ? `step ${second.step} is defined twice${origin(first)}${origin(second)}: the control word at this step would be undefined; renumber one of them or give them disjoint guards`
      : `${why}; the control word there is undefined: make the guards disjoint`,
    [
      { span: first.span, message: `first line of step ${first.step}${origin(first)}` },
      { span: second.span, message: `second line of step ${second.step}${origin(second)}` },
    ],
  );
}
