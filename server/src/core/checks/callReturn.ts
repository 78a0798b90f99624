// call-without-return and return-without-call: on a machine whose sequencer has return
// registers (`holds return`), a routine entered by a call must come back by a return before the
// instruction ends, and a return must use a step a call of the same instruction saved. A call
// whose routine ends the instruction leaves the steps after the call unrun (the instruction's
// work after the routine is lost); a return with nothing saved sends the sequencer to whatever
// step an earlier instruction left in the register. The paths are flow/stepGraph.ts's, which
// carries the return registers along each path, so two calls of one routine never mix.
//
// Deliberately not here: more nested calls than return registers (returnDepth.ts).
import { type Check } from './context';
import { returnRegisters, sequencerMove } from '../model/sequencing';
import { instructionGraphs } from '../flow/stepGraph';
import type { ClassDef, Machine, StepAlt } from '../model/types';
import type { RelatedInfo } from '../text/diagnostic';
import type { Span } from '../text/span';

export const callReturn: Check = {
  codes: ['call-without-return', 'return-without-call'],
  run(ctx) {
    const machine = ctx.machine;
    const registers = returnRegisters(machine);
    if (!registers.length) return;
    for (const cls of machine.classes) {
      const reported = new Set<string>();
      for (const { name, graph } of instructionGraphs(machine, cls, true) ?? []) {
        for (const p of graph.callProblems) {
          if (p.kind === 'no-return') {
            const call = callAlt(machine, cls, p.call!);
            if (!call || reported.has(`no:${p.call}`)) continue;
            reported.add(`no:${p.call}`);
            const move = sequencerMove(machine, call, p.call!);
            const saved = move?.context.values[0];
            ctx.report(
              'call-without-return',
              placeOf(call),
              `step ${p.call} of class ${cls.name} calls the routine at step ${move?.to ?? '?'} for ${name} (the sequencer \`${machine.sequencer}\` keeps step ${saved ?? '?'} in \`${registers[0]}\` to come back to), but the routine ends the instruction at step ${p.step} without returning: step ${saved ?? '?'} and what follows never run; end the routine with \`return\`, or jump to it (\`goto\`) if it is meant to end the instruction`,
              related(p.alt, `step ${p.step} ends the instruction with the call still open`),
            );
          } else if (p.kind === 'return-without-call' && p.alt) {
            const at = placeOf(p.alt);
            if (reported.has(`ret:${at.start}`)) continue;
            reported.add(`ret:${at.start}`);
            ctx.report(
              'return-without-call',
              at,
              `step ${p.step} of class ${cls.name} returns (its next step is the sequencer's return register \`${registers[0]}\`), but on the way ${name} takes to it no call saved a step there: the register holds what an earlier instruction or return left, so the sequencer goes on at a step nobody chose; reach this step only through a call, or jump (\`goto\`) instead of returning`,
            );
          }
        }
      }
    }
  },
};

/** The alternative of `step` that calls (saves a return step), for the report's place. */
export function callAlt(machine: Machine, cls: ClassDef, step: number): StepAlt | undefined {
  return (cls.steps.get(step) ?? []).find((alt) => sequencerMove(machine, alt, step)?.calls);
}

/** Where a step's problem shows: the `use` line of a phase's step, else the step's number. */
export function placeOf(alt: StepAlt): Span {
  return alt.phase ? alt.phase.useSpan : alt.numberSpan;
}

function related(alt: StepAlt | undefined, message: string): RelatedInfo[] | undefined {
  return alt ? [{ span: alt.span, message: `${message}${alt.phase ? ` (phase ${alt.phase.name})` : ''}` }] : undefined;
}
