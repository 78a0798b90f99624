// jump-outside: on a machine with a sequencer part, a step whose word sends the sequencer to a
// step the class has no word for (neither written in the class nor placed there by a phase),
// other than counting on to the next step (class-no-end's "runs off its steps") or returning to
// 0. The ROM holds the fill word at that address, so the instruction runs it instead of a step.
// Each alternative is read once where it stands, from its own word (model/sequencing.ts).
import { type Check } from './context';
import { hasSequencer, nextStepOf, sequencerFields, sequencerMove } from '../model/sequencing';
import type { MapRow, Machine, StepAlt } from '../model/types';

export const jumpOutside: Check = {
  codes: ['jump-outside'],
  run(ctx) {
    const machine = ctx.machine;
    if (!hasSequencer(machine)) return;
    const mask = machine.stepBits === undefined ? undefined : 2 ** machine.stepBits - 1;
    const reported = new Set<string>();
    for (const cls of machine.classes) {
      for (const alts of cls.steps.values()) {
        for (const alt of alts) {
          for (const { to, row } of targetsOf(machine, alt)) {
            if (to === undefined || to === 0 || to === alt.step || cls.steps.has(to)) continue;
            if (mask !== undefined && to === ((alt.step + 1) & mask)) continue; // counting on
            const at = row ? row.span : alt.phase ? alt.phase.useSpan : alt.numberSpan;
            const key = `${at.start}:${to}`;
            if (reported.has(key)) continue;
            reported.add(key);
            ctx.report(
              'jump-outside',
              at,
              `step ${alt.step} of class ${cls.name}${alt.phase ? ` (from phase ${alt.phase.name})` : ''} jumps to step ${to}${row ? ` for the instructions of the row \`${row.patterns.join(' ')}\` of its jump table` : ''}, which the class does not write and no phase places there: the ROM holds the fill word at that address, so the instruction runs it; jump to a step of the class, or write step ${to}`,
              row ? [{ span: alt.span, message: `the jump in step ${alt.step}` }] : alt.phase ? [{ span: alt.span, message: `the jump in phase ${alt.phase.name}` }] : undefined,
            );
          }
        }
      }
    }
  },
};

/**
 * Where an alternative's word sends the sequencer: one target, or where it sets a sequencer
 * field from a decode map (a jump table), one per row of the map, with the row.
 */
function targetsOf(machine: Machine, alt: StepAlt): { to: number | undefined; row?: MapRow }[] {
  const fields = sequencerFields(machine);
  const mapAction = alt.actions.find((a) => a.value?.kind === 'map' && fields.has(a.signal));
  const map = mapAction?.value?.kind === 'map' ? machine.maps.get(mapAction.value.map) : undefined;
  if (!map) return [{ to: nextStepOf(machine, alt, alt.step) }];
  return map.rows.map((row) => {
    const move = sequencerMove(machine, alt, alt.step, undefined, (name) => (name === map.name ? row.code : undefined));
    return { to: move?.returnOf !== undefined ? undefined : move?.to, row };
  });
}
