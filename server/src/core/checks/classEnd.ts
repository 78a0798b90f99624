// class-no-end: every RV32I instruction of a class, for every flag value at every step, must
// reach a step that asserts an end-of-instruction strobe before the step counter runs out.
// Otherwise the counter wraps and the processor never fetches the next instruction.
import type { ClassDef, Machine, StepAlt } from '../model/types';
import type { Fix } from '../text/diagnostic';
import { type Check, type CheckContext } from './context';
import { bitsOf, describeScenario, guardInputs, instructionCube, instructionsOfClass, matchingAlternatives, scenarios } from './inputSpace';

export const classEnd: Check = {
  codes: ['class-no-end'],
  run(ctx) {
    // The names of the end-of-instruction strobes (usually one): an action ends the
    // instruction exactly when it asserts one of them.
    const endStrobes = [...ctx.machine.signals.values()].filter((s) => s.type === 'strobe' && s.kind === 'end').map((s) => s.name);
    for (const cls of ctx.machine.classes) {
      if (cls.steps.size === 0) continue;
      const ends = (alt: StepAlt) => alt.actions.some((a) => endStrobes.includes(a.signal));
      const allAlts = [...cls.steps.values()].flat();
      if (!allAlts.some(ends)) {
        ctx.report(
          'class-no-end',
          cls.symbol.span,
          `class ${cls.name} never asserts an end-of-instruction strobe: the step counter wraps around and the next instruction is never fetched; assert it in the last step`,
          undefined,
          addEndFix(ctx, cls),
        );
        continue;
      }
      const stuck = firstStuckPath(ctx.machine, cls, ends);
      if (stuck) {
        const lastStep = Math.max(...cls.steps.keys());
        const lastAlts = cls.steps.get(lastStep)!;
        ctx.report(
          'class-no-end',
          lastAlts[lastAlts.length - 1].numberSpan,
          `class ${cls.name} does not end for ${stuck}: after its last step the counter runs on through fill words and wraps; end every path`,
          lastAlts.map((a) => ({ span: a.span, message: 'last step' })),
        );
      }
    }
  },
};

/** Describes the first instruction and input combination that runs past the last step. */
function firstStuckPath(machine: Machine, cls: ClassDef, ends: (alt: StepAlt) => boolean): string | undefined {
  // A step none of whose alternatives ends the instruction lets every path continue, so only
  // steps with an end strobe can stop a path; the others need no scenario at all.
  const steps = [...cls.steps.keys()].sort((a, b) => a - b).filter((step) => cls.steps.get(step)!.some(ends));
  const { irMask, flags } = guardInputs([...cls.steps.values()].flat());
  const free = bitsOf(irMask);
  if (free.length + flags.length > 16) return undefined;
  const specs = instructionsOfClass(cls);
  const cubes = specs.length ? specs.map((s) => ({ name: s.mnemonic, cube: instructionCube(s) })) : [{ name: 'its opcode', cube: { mask: 0, value: 0 } }];
  for (const { name, cube } of cubes) {
    const freeHere = free.filter((b) => !((cube.mask >>> b) & 1));
    // Instruction bits stay fixed for the whole instruction; flags may change at any step, so
    // a path survives a step if any flag value lets it continue.
    for (const irScenario of scenarios(cube, freeHere, [])) {
      let alive = true;
      const flagScenarios = [...scenarios(irScenario.ir, [], flags)];
      for (const step of steps) {
        const alts = cls.steps.get(step)!;
        let continues = false;
        for (const scenario of flagScenarios) {
          const matching = matchingAlternatives(alts, scenario);
          if (matching.length === 0 || !matching.every(ends)) continues = true;
        }
        if (!continues) {
          alive = false;
          break;
        }
      }
      if (alive) {
        const detail = describeScenario(irScenario, (irMask & ~cube.mask) >>> 0, []);
        return `${name}${detail ? ` (${detail})` : ''}`;
      }
    }
  }
  void machine;
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
