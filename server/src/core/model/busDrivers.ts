// Who drives a bus, and the one rule about it: at most one driver may put a value on a bus at a
// time (two drivers fight: heat and damaged chips). The bus-contention check (over a step's
// actions), the simulator's micro-ops (over a burned word) and the fit verifier (over the word
// the fitted equations give at every address) all ask this module, so they can never disagree.
import type { Machine, Strobe } from './types';

/** The bus a strobe puts a value on when asserted: enables and memory reads drive; every other kind loads, counts or acts. */
export function drivenBus(strobe: Strobe): string | undefined {
  return strobe.bus !== undefined && (strobe.kind === 'enable' || strobe.kind === 'read') ? strobe.bus : undefined;
}

/** A bus two or more asserted strobes drive at once. */
export interface Contention {
  readonly bus: string;
  /** The drivers, in the order given. */
  readonly strobes: string[];
}

/** The buses that two or more of the (distinct) asserted strobes drive at once, in order of their first driver. */
export function contendedBuses(machine: Machine, asserted: Iterable<string>): Contention[] {
  const byBus = new Map<string, string[]>();
  for (const name of asserted) {
    const signal = machine.signals.get(name);
    const bus = signal?.type === 'strobe' ? drivenBus(signal) : undefined;
    if (bus === undefined) continue;
    const list = byBus.get(bus);
    if (!list) byBus.set(bus, [name]);
    else if (!list.includes(name)) list.push(name);
  }
  return [...byBus].filter(([, strobes]) => strobes.length > 1).map(([bus, strobes]) => ({ bus, strobes }));
}
