// bus-contention: two or more enables (or memory reads) drive one bus in the same step
// alternative. Each alternative is what the ROM produces for the address inputs its guard
// matches, so this covers every reachable guard combination. In hardware the drivers fight:
// heat and damaged chips, which is why the message carries a caution.
import { busContentionCaution } from './catalogue';
import { type Check, driversByBus, writtenAlternatives } from './context';
import { removeActionEdit } from './fixes';

export const busContention: Check = {
  codes: ['bus-contention'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      if (alt.actions.length < 2) continue;
      for (const [bus, actions] of driversByBus(ctx.machine, alt)) {
        if (actions.length < 2) continue;
        const distinct = [...new Map(actions.map((a) => [a.signal, a])).values()];
        if (distinct.length < 2) continue;
        const names = distinct.map((a) => `\`${a.signal}\``).join(' and ');
        const guard = alt.guard?.length ? ` when ${alt.guard.map((g) => g.label + '=' + g.bits).join(' & ')}` : alt.isElse ? ' (else alternative)' : '';
        ctx.report(
          'bus-contention',
          distinct[1].span,
          `${names} both drive bus \`${bus}\` in step ${alt.step} of ${owner}${guard}; keep one driver. ${busContentionCaution}`,
          distinct.map((a) => ({ span: a.span, message: `\`${a.signal}\` drives \`${bus}\`` })),
          distinct.map((a) => ({
            title: `Remove \`${a.signal}\` from this step`,
            edits: [removeActionEdit(ctx.text, alt, a)],
          })),
        );
      }
    }
  },
};
