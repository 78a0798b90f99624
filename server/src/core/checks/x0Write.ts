// x0-write: a step clocks register x0 of the register file explicitly (a strobe wired to
// `x[0]`). RV32I requires x0 to read as zero; a write does nothing on a hard-wired x0 and
// corrupts a stored one. Which of the two the part is comes from its definition: whether its
// read ports give what element 0 holds, or a constant in its place (model/partFacts.ts).
import { registerArrayFacts } from '../model/partFacts';
import { type Check, strobeOf, writtenAlternatives } from './context';
import { removeActionEdit } from './fixes';

export const x0Write: Check = {
  codes: ['x0-write'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      for (const action of alt.actions) {
        const strobe = strobeOf(ctx.machine, action);
        if (!strobe || strobe.kind !== 'clock' || strobe.register !== 0) continue;
        const part = ctx.machine.parts.get(strobe.part!);
        const stored = part ? registerArrayFacts(ctx.machine, part).some((f) => f.elementZeroStored) : true;
        const effect = stored ? 'x0 is stored here, so every later read of x0 returns this value instead of zero' : 'x0 is hard-wired to zero, so this write does nothing and the value is lost';
        ctx.report(
          'x0-write',
          action.span,
          `\`${action.signal}\` writes register x0 in step ${alt.step} of ${owner}: ${effect}; remove the write`,
          [{ span: strobe.symbol.span, message: `\`${strobe.name}\` is wired to x[0]` }],
          [{ title: `Remove \`${action.signal}\``, edits: [removeActionEdit(ctx.text, alt, action)] }],
        );
      }
    }
  },
};
