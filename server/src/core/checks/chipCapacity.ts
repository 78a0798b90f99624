// chip-capacity: the chips of a store must hold the whole word (their widths add up to at
// least the word width, and each matches the declared chip type) and every address the
// address lines can form (depth >= 2^address lines).
import { type Check } from './context';

export const chipCapacity: Check = {
  codes: ['chip-capacity'],
  run(ctx) {
    for (const store of ctx.machine.stores) {
      const word = store.word;
      if (!word) continue;
      const total = word.chipWidths.reduce((a, b) => a + b, 0);
      if (total < word.width) {
        ctx.report('chip-capacity', word.span, `the chips of store ${store.name} hold ${total} data bits but the word has ${word.width}; add chips or narrow the word`);
      }
      if (word.chip) {
        const mismatched = word.chipWidths.find((w) => w !== word.chip!.width);
        if (mismatched !== undefined) {
          ctx.report('chip-capacity', word.span, `a ${word.chip.name} has ${word.chip.width} data lines, but the word is split into ${mismatched}-bit chips; split it as ${Math.ceil(word.width / word.chip.width)} x ${word.chip.width}`);
        }
        if (store.address && 2 ** store.address.width > word.chip.depth) {
          const lines = Math.log2(word.chip.depth);
          ctx.report(
            'chip-capacity',
            store.address.span,
            `store ${store.name} uses ${store.address.width} address lines (${2 ** store.address.width} words) but a ${word.chip.name} holds ${word.chip.depth} words (${Number.isInteger(lines) ? lines : lines.toFixed(1)} lines); choose a bigger chip or fewer address lines`,
          );
        }
      }
    }
  },
};
