// Who drives a bus, and the one rule about it: at most one driver may put a value on a bus at a
// time (two drivers fight: heat and damaged chips). The bus-contention check (over a step's
// actions), the simulator's micro-ops (over a burned word) and the fit verifier (over the word
// the fitted equations give at every address) all ask this module, so they can never disagree.
import type { Machine, Strobe } from './types';

/** The bus a strobe puts a value on when asserted: enables and memory reads drive; every other kind loads, counts or acts. */
export function drivenBus(strobe: Strobe): string | undefined {
  return strobe.bus !== undefined && (strobe.kind === 'enable' || strobe.kind === 'read') ? strobe.bus : undefined;
}

/** A bus two or more asserted strobes drive at once, on at least one common line. */
export interface Contention {
  readonly bus: string;
  /** The drivers that share a line with another, in the order given. */
  readonly strobes: string[];
  /** The lines the first two of them both drive (high, low). */
  readonly lines: { hi: number; lo: number };
}

/** The lines of its bus a strobe drives or loads (the whole bus unless it names a range). */
export function linesOf(machine: Machine, strobe: Strobe): { hi: number; lo: number } {
  return strobe.lines ?? { hi: (machine.buses.get(strobe.bus ?? '')?.width ?? 1) - 1, lo: 0 };
}

/** A strobe by name, or a connection (`connect PART`), which drives in every step. */
export function driverNamed(machine: Machine, name: string): Strobe | undefined {
  const signal = machine.signals.get(name);
  if (signal) return signal.type === 'strobe' ? signal : undefined;
  return machine.connections.find((c) => c.name === name);
}

/** The asserted strobes and every connection: what drives in a step. */
export function withConnections(machine: Machine, asserted: Iterable<string>): string[] {
  const names = [...asserted];
  for (const c of machine.connections) if (!names.includes(c.name)) names.push(c.name);
  return names;
}

/**
 * The buses on which two or more of the (distinct) asserted strobes, or the connections that
 * drive in every step, drive a common line, in order of their first driver. Drivers of
 * different lines of one bus (byte lanes) do not fight.
 */
export function contendedBuses(machine: Machine, asserted: Iterable<string>): Contention[] {
  const byBus = new Map<string, Strobe[]>();
  for (const name of withConnections(machine, asserted)) {
    const signal = driverNamed(machine, name);
    const bus = signal?.type === 'strobe' ? drivenBus(signal) : undefined;
    if (bus === undefined || signal?.type !== 'strobe') continue;
    const list = byBus.get(bus);
    if (!list) byBus.set(bus, [signal]);
    else if (!list.includes(signal)) list.push(signal);
  }
  const out: Contention[] = [];
  for (const [bus, strobes] of byBus) {
    if (strobes.length < 2) continue;
    const fighting: string[] = [];
    let lines: { hi: number; lo: number } | undefined;
    for (let i = 0; i < strobes.length; i++) {
      const a = linesOf(machine, strobes[i]);
      for (let j = 0; j < strobes.length; j++) {
        if (i === j) continue;
        const b = linesOf(machine, strobes[j]);
        const hi = Math.min(a.hi, b.hi);
        const lo = Math.max(a.lo, b.lo);
        if (hi < lo) continue;
        if (!fighting.includes(strobes[i].name)) fighting.push(strobes[i].name);
        lines ??= { hi, lo };
      }
    }
    if (lines) out.push({ bus, strobes: fighting, lines });
  }
  return out;
}

/** The lines of a bus the asserted strobes drive together, as a mask (bit n = line n). */
export function drivenLines(machine: Machine, asserted: Iterable<string>, bus: string): number {
  let mask = 0;
  for (const name of withConnections(machine, asserted)) {
    const signal = driverNamed(machine, name);
    if (signal?.type !== 'strobe' || drivenBus(signal) !== bus) continue;
    const { hi, lo } = linesOf(machine, signal);
    mask |= lineMask(hi, lo);
  }
  return mask;
}

/** Lines hi..lo as a mask (up to 32 lines). */
export function lineMask(hi: number, lo: number): number {
  return hi - lo + 1 >= 32 ? -1 << lo : (((1 << (hi - lo + 1)) - 1) << lo) | 0;
}

/** Lines of a mask as ranges, highest first: `31..24, 7..0`. */
export function lineRanges(mask: number): string {
  const out: string[] = [];
  for (let hi = 31; hi >= 0; hi--) {
    if (((mask >>> hi) & 1) === 0) continue;
    let lo = hi;
    while (lo > 0 && ((mask >>> (lo - 1)) & 1) === 1) lo--;
    out.push(hi === lo ? `${hi}` : `${hi}..${lo}`);
    hi = lo;
  }
  return out.join(', ');
}
