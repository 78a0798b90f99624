// unplaced-signal: a strobe or field that steps assert must have a bit in some store's word,
// or no ROM produces it and the step silently lacks it.
import { type Check, writtenAlternatives } from './context';

export const unplacedSignal: Check = {
  codes: ['unplaced-signal'],
  run(ctx) {
    const placed = new Set<string>();
    for (const store of ctx.machine.stores) for (const p of store.word?.placements ?? []) placed.add(p.signal);
    if (!ctx.machine.stores.some((s) => s.word)) return reportNoWord(ctx);
    const reported = new Set<string>();
    for (const { alt } of writtenAlternatives(ctx.machine)) {
      for (const action of alt.actions) {
        if (placed.has(action.signal) || reported.has(action.signal)) continue;
        reported.add(action.signal);
        const signal = ctx.machine.signals.get(action.signal)!;
        ctx.report(
          'unplaced-signal',
          signal.symbol.span,
          `\`${action.signal}\` is used in steps but has no bit in any control word, so no ROM produces it; place it in a word layout, e.g. \`${action.signal} ${signal.type === 'field' ? `N..${signal.width - 1}+N` : 'N'}\``,
          [{ span: action.span, message: 'used here' }],
        );
      }
    }
  },
};

function reportNoWord(ctx: Parameters<typeof unplacedSignal.run>[0]): void {
  const first = [...ctx.machine.signals.values()][0];
  if (!first || ctx.machine.classes.length === 0) return;
  ctx.report('unplaced-signal', first.symbol.span, 'the file declares no control word (`word 32 as 4 x 8` and the bit of each strobe), so no ROM produces any strobe; add a word layout');
}
