// repeated-strobe: a strobe (or a field with the same value) listed twice in one step. Harmless
// electrically, but usually a different strobe was meant.
import { type Check, writtenAlternatives } from './context';
import { removeActionEdit } from './fixes';

export const repeatedStrobe: Check = {
  codes: ['repeated-strobe'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      if (alt.actions.length < 2) continue;
      const seen = new Map<string, (typeof alt.actions)[number]>();
      for (const action of alt.actions) {
        const key = action.signal + '=' + (action.value ? (action.value.kind === 'code' ? action.value.name : action.value.map) : '');
        const first = seen.get(key);
        if (!first) {
          seen.set(key, action);
          continue;
        }
        ctx.report(
          'repeated-strobe',
          action.span,
          `\`${action.signal}\` is listed twice in step ${alt.step} of ${owner}; once is enough (was another strobe meant?)`,
          [{ span: first.span, message: 'first mention' }],
          [{ title: 'Remove the repeated mention', edits: [removeActionEdit(ctx.text, alt, action)], preferred: true }],
        );
      }
    }
  },
};
