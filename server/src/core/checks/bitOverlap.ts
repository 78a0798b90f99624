// bit-overlap / bit-range: each control-word bit carries one signal bit and each address line
// one input bit, within the declared widths; a signal sits in one store only.
import type { Span } from '../text/span';
import { type Check } from './context';

export const bitOverlap: Check = {
  codes: ['bit-overlap', 'bit-range'],
  run(ctx) {
    const placedIn = new Map<string, { store: string; span: Span }>();
    for (const store of ctx.machine.stores) {
      if (store.word) {
        const owner: (string | undefined)[] = [];
        const ownerSpan: Span[] = [];
        for (const p of store.word.placements) {
          const earlier = placedIn.get(p.signal);
          if (earlier) {
            ctx.report('bit-overlap', p.span, `\`${p.signal}\` is already placed${earlier.store === store.name ? '' : ` in store ${earlier.store}`}; a signal has one place in one word`, [{ span: earlier.span, message: 'first placement' }]);
            continue;
          }
          placedIn.set(p.signal, { store: store.name, span: p.span });
          if (p.hi >= store.word.width) {
            ctx.report('bit-range', p.span, `bit ${p.hi} is outside the ${store.word.width}-bit word (bits 0 to ${store.word.width - 1}); widen the word or move \`${p.signal}\``);
            continue;
          }
          for (let bit = p.lo; bit <= p.hi; bit++) {
            if (owner[bit] !== undefined) {
              ctx.report('bit-overlap', p.span, `bit ${bit} of the word of store ${store.name} already carries \`${owner[bit]}\`; move \`${p.signal}\` to a free bit`, [{ span: ownerSpan[bit], message: `\`${owner[bit]}\` is placed here` }]);
              break;
            }
          }
          for (let bit = p.lo; bit <= p.hi; bit++) {
            owner[bit] ??= p.signal;
            ownerSpan[bit] ??= p.span;
          }
        }
      }
      if (store.address) {
        const owner: (string | undefined)[] = [];
        const ownerSpan: Span[] = [];
        for (const s of store.address.sources) {
          if (s.hi >= store.address.width) {
            ctx.report('bit-range', s.span, `address line ${s.hi} is outside the ${store.address.width} address lines (0 to ${store.address.width - 1}); widen the address or move \`${s.label}\``);
            continue;
          }
          for (let line = s.lo; line <= s.hi; line++) {
            if (owner[line] !== undefined) {
              ctx.report('bit-overlap', s.span, `address line ${line} of store ${store.name} already carries \`${owner[line]}\`; move \`${s.label}\` to a free line`, [{ span: ownerSpan[line], message: `\`${owner[line]}\` is placed here` }]);
              break;
            }
          }
          for (let line = s.lo; line <= s.hi; line++) {
            owner[line] ??= s.label;
            ownerSpan[line] ??= s.span;
          }
        }
      }
    }
  },
};
