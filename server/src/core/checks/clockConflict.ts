// clock-conflict: a part loaded from two buses in one step, or a counter loaded and counted
// at the same edge. One edge can do one thing to a register; which wins depends on the chip.
// A part may hold several registers (states of its kind): two of its edge ports
// conflict only when they assign the same state; ports on different states (a result register
// and a carry flip-flop of one part) act side by side at one edge, as the simulator runs them.
import type { Machine, Strobe } from '../model/types';
import { type Check, strobeOf, writtenAlternatives } from './context';

interface Load {
  signal: string;
  bus?: string;
  kind: string;
  /** The edge port of the part's kind. */
  port?: string;
  span: { start: number; end: number };
}

export const clockConflict: Check = {
  codes: ['clock-conflict'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      if (alt.actions.length < 2) continue;
      const loads = new Map<string, { part: string; state?: string; list: Load[] }>();
      for (const action of alt.actions) {
        const strobe = strobeOf(ctx.machine, action);
        if (!strobe || !strobe.part || (strobe.kind !== 'clock' && strobe.kind !== 'count')) continue;
        // Register-file writes through rd and through x[n] select different registers only
        // when rd differs from n, so they are one target for this rule.
        for (const state of statesLoaded(ctx.machine, strobe)) {
          const key = state === undefined ? strobe.part : `${strobe.part}\u0000${state}`;
          const entry = loads.get(key) ?? { part: strobe.part, state, list: [] };
          if (entry.list.some((l) => l.signal === strobe.name)) continue;
          entry.list.push({ signal: strobe.name, bus: strobe.bus, kind: strobe.kind, port: strobe.kindPort, span: action.span });
          loads.set(key, entry);
        }
      }
      for (const { part, state, list } of loads.values()) {
        if (list.length < 2) continue;
        const what = list.map((l) => describeLoad(part, l)).join(' and ');
        // The state is named where the part holds several (a result register and a carry flip-flop).
        const several = (ctx.machine.parts.get(part)?.def.states.length ?? 0) > 1;
        const subject = state === undefined || !several ? `\`${part}\` is` : `state \`${state}\` of \`${part}\` is`;
        ctx.report(
          'clock-conflict',
          list[1].span,
          `${subject} ${what} in step ${alt.step} of ${owner}; a part takes one load per clock edge: keep one`,
          list.map((l) => ({ span: l.span, message: `\`${l.signal}\`` })),
        );
      }
    }
  },
};

/** The states a strobe's edge port assigns, or `[undefined]`: the whole part. */
function statesLoaded(machine: Machine, strobe: Strobe): (string | undefined)[] {
  const part = machine.parts.get(strobe.part!);
  if (!part || strobe.kindPort === undefined) return [undefined];
  const edge = part.def.edges.find((e) => e.name === strobe.kindPort);
  if (!edge) return [undefined];
  return [...new Set(edge.assigns.map((a) => a.target))];
}

function describeLoad(part: string, l: Load): string {
  if (l.kind === 'count') return `counted by \`${l.signal}\``;
  if (l.bus !== undefined) return `loaded from \`${l.bus}\` by \`${l.signal}\``;
  // An edge port that takes no bus (`clock mar.next`): it computes its new value itself.
  return l.port !== undefined ? `set through its port \`${l.port}\` by \`${l.signal}\`` : `clocked by \`${l.signal}\``;
}
