// clock-conflict: a part loaded from two buses in one step, or a counter loaded and counted
// at the same edge. One edge can do one thing to a register; which wins depends on the chip.
import { type Check, strobeOf, writtenAlternatives } from './context';

export const clockConflict: Check = {
  codes: ['clock-conflict'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      if (alt.actions.length < 2) continue;
      const loads = new Map<string, { signal: string; bus?: string; kind: string; span: typeof alt.span }[]>();
      for (const action of alt.actions) {
        const strobe = strobeOf(ctx.machine, action);
        if (!strobe || !strobe.part || (strobe.kind !== 'clock' && strobe.kind !== 'count')) continue;
        // Register-file writes through rd and through x[n] select different registers only
        // when rd differs from n, so they are one target for this rule.
        const target = strobe.part;
        const list = loads.get(target) ?? [];
        if (list.some((l) => l.signal === strobe.name)) continue;
        list.push({ signal: strobe.name, bus: strobe.bus, kind: strobe.kind, span: action.span });
        loads.set(target, list);
      }
      for (const [part, list] of loads) {
        if (list.length < 2) continue;
        const what = list.map((l) => (l.kind === 'count' ? `counted by \`${l.signal}\`` : `loaded from \`${l.bus ?? part}\` by \`${l.signal}\``)).join(' and ');
        ctx.report(
          'clock-conflict',
          list[1].span,
          `\`${part}\` is ${what} in step ${alt.step} of ${owner}; a part takes one load per clock edge: keep one`,
          list.map((l) => ({ span: l.span, message: `\`${l.signal}\`` })),
        );
      }
    }
  },
};
