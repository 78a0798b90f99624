// field-conflict: one field given two different values in one step alternative. A field is a
// group of ROM bits holding one code at a time, so such a step cannot be encoded.
import { type Check, writtenAlternatives } from './context';
import { removeActionEdit } from './fixes';

export const fieldConflict: Check = {
  codes: ['field-conflict'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      // Two values need at least two actions with `=`.
      let valued = 0;
      for (const action of alt.actions) if (action.value) valued++;
      if (valued < 2) continue;
      const seen = new Map<string, (typeof alt.actions)[number]>();
      for (const action of alt.actions) {
        if (!action.value) continue;
        const first = seen.get(action.signal);
        if (!first) {
          seen.set(action.signal, action);
          continue;
        }
        const describe = (a: typeof action) => (a.value!.kind === 'code' ? a.value!.name : `map ${a.value!.map}`);
        if (describe(first) === describe(action)) continue;
        ctx.report(
          'field-conflict',
          action.span,
          `\`${action.signal}\` is set to ${describe(first)} and to ${describe(action)} in step ${alt.step} of ${owner}; a field holds one value per step: keep one`,
          [{ span: first.span, message: `first value of \`${action.signal}\`` }],
          [{ title: `Remove \`${action.signal}=${describe(action).replace('map ', '')}\``, edits: [removeActionEdit(ctx.text, alt, action)] }],
        );
      }
    }
  },
};
