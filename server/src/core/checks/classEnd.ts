// class-no-end: every RV32I instruction of a class, for every flag value at every step, must
// reach a step that asserts an end-of-instruction strobe before the step counter runs out.
// Otherwise the counter wraps and the processor never fetches the next instruction. The walk
// itself is reach.ts's. On a machine with a sequencer part an alternative ends by returning it
// to step 0; a loop that never exits is micro-loop's or loop-exit-unchanged's (microLoop.ts,
// loopExit.ts), a jump to a step the class does not write jump-outside's.
import type { ClassDef, Machine, StepAlt } from '../model/types';
import type { Fix } from '../text/diagnostic';
import { type Check, type CheckContext } from './context';
import { describeScenario, guardInputs, instructionCube, instructionsOfClass } from './inputSpace';
import { altEnds, instructionPaths } from './reach';
import { hasSequencer } from '../model/sequencing';

export const classEnd: Check = {
  codes: ['class-no-end'],
  run(ctx) {
    for (const cls of ctx.machine.classes) {
      if (cls.steps.size === 0) continue;
      const ends = (alt: StepAlt) => altEnds(ctx.machine, alt);
      const allAlts = [...cls.steps.values()].flat();
      if (!allAlts.some(ends)) {
        ctx.report(
          'class-no-end',
          cls.symbol.span,
          hasSequencer(ctx.machine)
            ? `class ${cls.name} never returns the sequencer \`${ctx.machine.sequencer}\` to step 0, so its instructions never end and the next instruction is never fetched; return it to 0 in the last step`
            : `class ${cls.name} never asserts an end-of-instruction strobe: the step counter wraps around and the next instruction is never fetched; assert it in the last step`,
          undefined,
          addEndFix(ctx, cls),
        );
        continue;
      }
      const stuck = firstStuckPath(ctx.machine, cls);
      if (stuck) {
        const lastStep = Math.max(...cls.steps.keys());
        const lastAlts = cls.steps.get(lastStep)!;
        ctx.report(
          'class-no-end',
          lastAlts[lastAlts.length - 1].numberSpan,
          `class ${cls.name} does not end for ${stuck}: after its last step the ${hasSequencer(ctx.machine) ? 'sequencer' : 'counter'} runs on through fill words and wraps; end every path`,
          lastAlts.map((a) => ({ span: a.span, message: 'last step' })),
        );
      }
    }
  },
};

/** Describes the first instruction and input combination that runs past the last step. */
function firstStuckPath(machine: Machine, cls: ClassDef): string | undefined {
  const { irMask } = guardInputs([...cls.steps.values()].flat());
  const specs = instructionsOfClass(cls);
  const cubes = specs.length ? specs.map((s) => ({ name: s.mnemonic, cube: instructionCube(s) })) : [{ name: 'its opcode', cube: { mask: 0, value: 0 } }];
  for (const { name, cube } of cubes) {
    const stuck = instructionPaths(machine, cls, cube)?.find((path) => path.lastStep === undefined);
    if (!stuck) continue;
    const detail = describeScenario({ ir: stuck.ir, flags: new Map() }, (irMask & ~cube.mask) >>> 0, []);
    return `${name}${detail ? ` (${detail})` : ''}`;
  }
  return undefined;
}

function addEndFix(ctx: CheckContext, cls: ClassDef): Fix[] | undefined {
  const endStrobe = [...ctx.machine.signals.values()].find((s) => s.type === 'strobe' && s.kind === 'end');
  if (!endStrobe) return undefined;
  const written = [...cls.steps.values()].flat().filter((a) => !a.phase);
  if (written.length === 0) return undefined;
  const last = written.reduce((a, b) => (b.step > a.step || (b.step === a.step && b.span.start > a.span.start) ? b : a));
  const separator = last.actions.length > 0 ? ', ' : ' ';
  return [{ title: `Add \`${endStrobe.name}\` to step ${last.step}`, edits: [{ span: { start: last.span.end, end: last.span.end }, newText: separator + endStrobe.name }], preferred: true }];
}
