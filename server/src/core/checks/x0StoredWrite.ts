// x0-stored-write: the register file keeps x0 in a real register (x0=stored) and some class
// writes rd without suppression. RV32I instructions with rd = x0 are common (the canonical
// NOP `addi x0, x0, 0`, plain jumps `jal x0, ...`), and each would store into x0.
import { type Check, classAlternatives, strobeOf } from './context';
import type { RelatedInfo } from '../text/diagnostic';

export const x0StoredWrite: Check = {
  codes: ['x0-stored-write'],
  run(ctx) {
    for (const part of ctx.machine.parts.values()) {
      if (part.kind !== 'regfile' || part.x0 !== 'stored') continue;
      const writes: RelatedInfo[] = [];
      const seen = new Set<number>();
      for (const { cls, alt } of classAlternatives(ctx.machine)) {
        for (const action of alt.actions) {
          const strobe = strobeOf(ctx.machine, action);
          if (!strobe || strobe.part !== part.name || strobe.kind !== 'clock' || strobe.port !== 'rd') continue;
          if (seen.has(action.span.start)) continue;
          seen.add(action.span.start);
          writes.push({ span: action.span, message: `class ${cls.name} writes rd here` });
        }
      }
      if (writes.length === 0) continue;
      ctx.report(
        'x0-stored-write',
        part.symbol.span,
        `register file \`${part.name}\` stores x0 in a real register and ${writes.length} step(s) write rd with nothing to stop rd = x0: \`addi x0, x0, 0\` (the canonical NOP) would store into x0; declare \`x0=hardwired\` or \`x0=guarded\``,
        writes.slice(0, 20),
      );
    }
  },
};
