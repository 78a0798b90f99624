// rd-without-field: a register-file write through the rd port in a class whose instruction
// format has no rd (S for stores, B for branches; RISC-V Unprivileged ISA 20191213 §2.2-2.3):
// bits 11..7 there are immediate bits, so the write lands in a register chosen by the offset.
import { majorOpcodeOf } from '../isa/rv32i';
import { type Check, classAlternatives, strobeOf, useSite } from './context';

export const rdWithoutField: Check = {
  codes: ['rd-without-field'],
  run(ctx) {
    for (const { cls, alt } of classAlternatives(ctx.machine)) {
      if (cls.opcode === undefined) continue;
      const major = majorOpcodeOf(cls.opcode);
      if (!major || (major.format !== 'S' && major.format !== 'B')) continue;
      for (const action of alt.actions) {
        const strobe = strobeOf(ctx.machine, action);
        if (!strobe || strobe.kind !== 'clock' || strobe.port !== 'rd') continue;
        ctx.report(
          'rd-without-field',
          action.span,
          `class ${cls.name} (${major.name}, ${major.format} format) has no rd field: instruction bits 11..7 are immediate bits, so \`${action.signal}\` in step ${alt.step} writes whichever register the offset names; remove it from this class`,
          useSite(alt, cls),
        );
      }
    }
  },
};
