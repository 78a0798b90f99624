// undriven-latch / stale-latch: a part loads (clock, memory write, comparator clock) from a bus
// that nothing drives in that step, directly or through a part whose port computes from an
// undriven bus (an ALU's operand); which buses a port reads comes from the part's definition
// (model/buildPart.ts portBusReads), with the controls the step sets.
// Line by line: a load of some lines (`clock result[7:0] -> acc`) needs just those driven, by
// any mix of enables and connections, and only their drivers' own inputs are followed.
// Without keepers the bus floats and the part stores noise (error); with keepers it stores the
// last value some earlier step drove, which is rarely what was meant (warning).
import type { Action, Machine, Part, StepAlt } from '../model/types';
import { portBusReads } from '../model/buildPart';
import { portOfStrobe } from '../model/partFacts';
import { drivenLines, lineMask, lineRanges, linesOf } from '../model/busDrivers';
import { type Check, type CheckContext, driversByBus, strobeOf, writtenAlternatives } from './context';

export const undrivenLatch: Check = {
  codes: ['undriven-latch', 'stale-latch'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      const drivers = driversByBus(ctx.machine, alt);
      let reported: Set<string> | undefined;
      // `what` is a function so the message is only written when there is a problem.
      const need = (bus: string, action: Action, what: () => string, lines?: { hi: number; lo: number }) => {
        const problem = undrivenReason(ctx.machine, alt, drivers, bus, new Set(), lines);
        if (!problem) return;
        const key = `${action.signal}:${problem.bus}`;
        reported ??= new Set();
        if (reported.has(key)) return;
        reported.add(key);
        report(ctx, alt, owner, action, what(), problem);
      };
      for (const action of alt.actions) {
        const strobe = strobeOf(ctx.machine, action);
        if (!strobe) continue;
        const part = strobe.part ? ctx.machine.parts.get(strobe.part) : undefined;
        if ((strobe.kind === 'clock' || strobe.kind === 'write') && strobe.bus) {
          need(strobe.bus, action, () => (strobe.kind === 'write' ? `\`${action.signal}\` writes bus \`${strobe.bus}\` to memory` : `\`${action.signal}\` loads \`${strobe.part}\` from bus \`${strobe.bus}\``), strobe.lines);
        }
        if (!part || strobe.kindPort === undefined) continue;
        const port = portOfStrobe(ctx.machine, part, strobe);
        if (port?.role === 'read' || port?.role === 'write') {
          // A memory access needs its address (and whatever else the port reads) driven, even
          // when nothing loads what a read gives.
          for (const bus of readsIn(ctx.machine, alt, part, strobe.kindPort)) {
            need(bus, action, () => `\`${action.signal}\` makes \`${part.name}\` access its memory with bus \`${bus}\` as an input`);
          }
        } else if (strobe.kind !== 'enable' && strobe.kind !== 'read') {
          for (const bus of readsIn(ctx.machine, alt, part, strobe.kindPort)) {
            need(bus, action, () => `\`${action.signal}\` makes \`${part.name}\` compute from bus \`${bus}\` at the closing edge`);
          }
        }
      }
    }
  },
};

interface Undriven {
  bus: string;
  keeper: boolean;
  /** The lines nobody drives when other lines of the bus are driven, e.g. `15..8`. */
  lines?: string;
  /** Set when the bus is driven by a part's port (an ALU's) that computes from a bus nothing drives. */
  via?: string;
}

function undrivenReason(machine: Machine, alt: StepAlt, drivers: Map<string, Action[]>, bus: string, seen = new Set<string>(), needed?: { hi: number; lo: number }): Undriven | undefined {
  const busInfo = machine.buses.get(bus);
  const driving = drivers.get(bus);
  // A load of some lines (`clock result[7:0] -> acc`) names them even when nothing drives the bus.
  if (!driving || driving.length === 0) return { bus, keeper: !!busInfo?.keeper, lines: needed ? lineRanges(lineMask(needed.hi, needed.lo)) : undefined };
  // Drivers of some lines only (byte lanes): every line the reader takes must be driven.
  // (Buses wider than 32 lines are only ever driven whole: the model refuses ranges on them.)
  const want = needed ?? { hi: Math.min(busInfo?.width ?? 1, 32) - 1, lo: 0 };
  const wanted = lineMask(want.hi, want.lo);
  const missing = wanted & ~drivenLines(machine, driving.map((a) => a.signal), bus);
  if (missing !== 0) return { bus, keeper: !!busInfo?.keeper, lines: lineRanges(missing) };
  // A driver that computes from other buses (an ALU, a multiplexer) needs
  // them driven too, through any number of such parts (a loop is the settle check's business).
  // Only the drivers of the lines the reader takes matter: another byte lane may float.
  const key = needed ? `${bus}[${want.hi}:${want.lo}]` : bus;
  if (seen.has(key)) return undefined;
  seen.add(key);
  for (const action of driving) {
    const strobe = strobeOf(machine, action);
    const lines = strobe && linesOf(machine, strobe);
    if (lines && (lineMask(lines.hi, lines.lo) & wanted) === 0) continue;
    const part = strobe?.part ? machine.parts.get(strobe.part) : undefined;
    if (!part || strobe!.kindPort === undefined) continue;
    const reads = readsIn(machine, alt, part, strobe!.kindPort);
    const output = `the output \`${part.name}.${strobe!.kindPort}\``;
    for (const operand of reads) {
      if (!drivers.get(operand)?.length) return { bus: operand, keeper: !!machine.buses.get(operand)?.keeper, via: `${output} on \`${bus}\`` };
      const deeper = undrivenReason(machine, alt, drivers, operand, seen);
      if (deeper) return deeper;
    }
  }
  return undefined;
}

/**
 * Buses a port of the part reads in this step: a control the step sets to
 * a value reads only the arm that value selects; one set from a map, or unset (its idle code),
 * counts every value it may hold.
 */
function readsIn(machine: Machine, alt: StepAlt, part: Part, port: string): string[] {
  const known = new Map<string, number>();
  for (const [control, fieldName] of part.controlFields) {
    const field = machine.signals.get(fieldName);
    if (field?.type !== 'field') continue;
    const action = alt.actions.find((a) => a.signal === fieldName && a.value);
    if (!action) known.set(control, field.idle);
    else if (action.value!.kind === 'code') known.set(control, action.value!.code);
  }
  // A control set from a map: the union over every value the map may give (a map of shifts by
  // one place reads only operand a, so operand b's bus need not be driven). With two or more
  // controls from maps each stays unknown, which counts every arm.
  const mapped = [...part.controlFields].flatMap(([control, fieldName]) => {
    const action = alt.actions.find((a) => a.signal === fieldName && a.value?.kind === 'map');
    return action?.value?.kind === 'map' ? [{ control, map: action.value.map }] : [];
  });
  if (mapped.length !== 1) return portBusReads(part, port, known);
  const reads = new Set<string>();
  for (const row of machine.maps.get(mapped[0].map)?.rows ?? []) {
    for (const bus of portBusReads(part, port, new Map([...known, [mapped[0].control, row.code]]))) reads.add(bus);
  }
  return [...reads];
}

function report(ctx: CheckContext, alt: StepAlt, owner: string, action: Action, what: string, problem: Undriven): void {
  const where = `step ${alt.step} of ${owner}`;
  const subject = problem.via ? `${what}, which is ${problem.via} computed from bus \`${problem.bus}\`` : what;
  const nobody = problem.lines ? `nothing drives lines ${problem.lines} of \`${problem.bus}\`` : `nothing drives \`${problem.bus}\``;
  if (problem.keeper) {
    ctx.report(
      'stale-latch',
      action.span,
      `${subject}, but ${nobody} in ${where}: its keepers hold the value of an earlier step, which is stored instead; drive \`${problem.bus}\` in this step`,
    );
  } else {
    ctx.report(
      'undriven-latch',
      action.span,
      `${subject}, but ${nobody} in ${where} and it has no keepers: the lines float and noise is stored; enable a driver on \`${problem.bus}\` in this step`,
    );
  }
}
