// bus-contention: two or more enables (or memory reads) drive one bus in the same step
// alternative. Each alternative is what the ROM produces for the address inputs its guard
// matches, so this covers every reachable guard combination. In hardware the drivers fight:
// heat and damaged chips, which is why the message carries a caution.
import { busContentionCaution } from './catalogue';
import { type Check, writtenAlternatives } from './context';
import { contendedBuses, driverNamed } from '../model/busDrivers';
import { removeActionEdit } from './fixes';

export const busContention: Check = {
  codes: ['bus-contention'],
  run(ctx) {
    const machine = ctx.machine;
    const lineText = (bus: string, lines: { hi: number; lo: number }) => {
      const width = machine.buses.get(bus)?.width ?? 0;
      return lines.hi - lines.lo + 1 === width ? `bus \`${bus}\`` : lines.hi === lines.lo ? `line ${lines.hi} of bus \`${bus}\`` : `lines ${lines.hi}..${lines.lo} of bus \`${bus}\``;
    };
    // Connections that fight each other fight in every step: reported once, where they are declared.
    for (const contention of contendedBuses(machine, [])) {
      const drivers = contention.strobes.map((name) => driverNamed(machine, name)!);
      ctx.report(
        'bus-contention',
        drivers[1].symbol.declSpan,
        `${drivers.map((d) => `\`${d.name}\``).join(' and ')} both drive ${lineText(contention.bus, contention.lines)} in every step; keep one driver. ${busContentionCaution}`,
        drivers.map((d) => ({ span: d.symbol.declSpan, message: `\`${d.name}\` drives \`${contention.bus}\`` })),
      );
    }
    for (const { alt, owner } of writtenAlternatives(machine)) {
      if (alt.actions.length < 2 && machine.connections.length === 0) continue;
      // The one rule of model/busDrivers.ts: drivers sharing a line of a bus fight. Connections
      // drive in every step, so a step that enables another driver on their lines fights them.
      for (const contention of contendedBuses(machine, alt.actions.map((a) => a.signal))) {
        const bus = contention.bus;
        const inStep = contention.strobes.map((name) => alt.actions.find((a) => a.signal === name)).filter((a) => a !== undefined);
        if (inStep.length === 0) continue; // only connections: reported above
        const always = contention.strobes.filter((name) => !alt.actions.some((a) => a.signal === name)).map((name) => driverNamed(machine, name)!);
        const names = [...always.map((d) => `\`${d.name}\` (always on)`), ...inStep.map((a) => `\`${a.signal}\``)].join(' and ');
        const guard = alt.guard?.length ? ` when ${alt.guard.map((g) => g.label + '=' + g.bits).join(' & ')}` : alt.isElse ? ' (else alternative)' : '';
        ctx.report(
          'bus-contention',
          inStep[inStep.length > 1 ? 1 : 0].span,
          `${names} both drive ${lineText(bus, contention.lines)} in step ${alt.step} of ${owner}${guard}; keep one driver. ${busContentionCaution}`,
          [...always.map((d) => ({ span: d.symbol.declSpan, message: `\`${d.name}\` drives \`${bus}\` in every step` })), ...inStep.map((a) => ({ span: a.span, message: `\`${a.signal}\` drives \`${bus}\`` }))],
          inStep.map((a) => ({
            title: `Remove \`${a.signal}\` from this step`,
            edits: [removeActionEdit(ctx.text, alt, a)],
          })),
        );
      }
    }
  },
};
