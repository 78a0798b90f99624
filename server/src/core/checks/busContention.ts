// bus-contention: two or more enables (or memory reads) drive one bus in the same step
// alternative. Each alternative is what the ROM produces for the address inputs its guard
// matches, so this covers every reachable guard combination. In hardware the drivers fight:
// heat and damaged chips, which is why the message carries a caution.
import { busContentionCaution } from './catalogue';
import { type Check, writtenAlternatives } from './context';
import { contendedBuses } from '../model/busDrivers';
import { removeActionEdit } from './fixes';

export const busContention: Check = {
  codes: ['bus-contention'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      if (alt.actions.length < 2) continue;
      // The one rule of model/busDrivers.ts: drivers sharing a line of a bus fight.
      for (const contention of contendedBuses(ctx.machine, alt.actions.map((a) => a.signal))) {
        const bus = contention.bus;
        const distinct = contention.strobes.map((name) => alt.actions.find((a) => a.signal === name)!);
        const width = ctx.machine.buses.get(bus)?.width ?? 0;
        const { hi, lo } = contention.lines;
        const where = hi - lo + 1 === width ? `bus \`${bus}\`` : hi === lo ? `line ${hi} of bus \`${bus}\`` : `lines ${hi}..${lo} of bus \`${bus}\``;
        const names = distinct.map((a) => `\`${a.signal}\``).join(' and ');
        const guard = alt.guard?.length ? ` when ${alt.guard.map((g) => g.label + '=' + g.bits).join(' & ')}` : alt.isElse ? ' (else alternative)' : '';
        ctx.report(
          'bus-contention',
          distinct[1].span,
          `${names} both drive ${where} in step ${alt.step} of ${owner}${guard}; keep one driver. ${busContentionCaution}`,
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
