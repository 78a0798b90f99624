// placement-width: a one-bit strobe takes one word bit, a field exactly its width; an address
// source takes as many lines as its input has bits (a flag 1, funct3 3, opcode 5; the step
// counter any number, which sets its width; another store's field exactly its width).
import { type Check } from './context';

export const placementWidth: Check = {
  codes: ['placement-width'],
  run(ctx) {
    for (const store of ctx.machine.stores) {
      for (const p of store.word?.placements ?? []) {
        const signal = ctx.machine.signals.get(p.signal);
        if (!signal) continue;
        const bits = p.hi - p.lo + 1;
        const want = signal.type === 'field' ? signal.width : 1;
        if (bits !== want) {
          ctx.report(
            'placement-width',
            p.span,
            signal.type === 'field'
              ? `\`${p.signal}\` is ${want} bits wide but placed on ${bits} bit(s); write \`${p.signal} ${p.lo}..${p.lo + want - 1}\``
              : `\`${p.signal}\` is a one-bit strobe but placed on ${bits} bits; give it one bit, e.g. \`${p.signal} ${p.lo}\``,
          );
        }
      }
      for (const s of store.address?.sources ?? []) {
        const lines = s.hi - s.lo + 1;
        let want: number | undefined;
        if (s.input.kind === 'ir') want = s.input.hi - s.input.lo + 1;
        else if (s.input.kind === 'flag') want = 1;
        else if (s.input.kind === 'field') {
          const field = ctx.machine.signals.get(s.input.name);
          want = field?.type === 'field' ? field.width : undefined;
        }
        if (want !== undefined && lines !== want) {
          ctx.report('placement-width', s.span, `\`${s.label}\` has ${want} bit(s) but takes ${lines} address line(s); write \`${s.label} ${s.lo}${want > 1 ? `..${s.lo + want - 1}` : ''}\``);
        }
      }
    }
  },
};
