// An independent monitor for the outside fit tests: given a machine, its encoded store and the
// line level an outside tool computed for each fitted output at an address, it judges the
// word there without the project's own rule modules, straight from the declarations: every
// strobe declared `enable` or `read` with a bus drives that bus and a bus may have at most one
// driver asserted (common practice, no source: two tri-state drivers on one line fight); where
// the ROM holds the fill word (no step covers the address) every other strobe must be at its
// inactive level, as the fill word has it. Bits not fitted are read from the ROM image.
import type { EncodedStore } from '../../server/src/core/encode/encoder';
import type { Machine, Strobe } from '../../server/src/core/model/types';

export interface MonitorResult {
  checked: number;
  unsafe: number;
  /** First few findings, readable. */
  findings: string[];
}

export interface MonitoredStrobe {
  name: string;
  bit: number;
  /** Line level that asserts it. */
  active: 0 | 1;
  kind: Strobe['kind'];
  bus?: string;
}

/** The strobes of a store's word with their bits and polarity. */
export function monitoredStrobes(machine: Machine, enc: EncodedStore): MonitoredStrobe[] {
  const list: MonitoredStrobe[] = [];
  for (const p of enc.store.word!.placements) {
    const s = machine.signals.get(p.signal);
    if (s?.type !== 'strobe') continue;
    list.push({ name: s.name, bit: p.lo, active: s.active === 'high' ? 1 : 0, kind: s.kind, bus: s.kind === 'enable' || s.kind === 'read' ? s.bus : undefined });
  }
  return list;
}

/** Judges every address; `levelAt(address, bit)` gives a fitted output's level, or undefined for a bit left in the ROM. */
export function monitorWords(machine: Machine, enc: EncodedStore, levelAt: (address: number, bit: number) => 0 | 1 | undefined): MonitorResult {
  const strobes = monitoredStrobes(machine, enc);
  const findings: string[] = [];
  let unsafe = 0;
  const nAddresses = 2 ** enc.addressBits;
  for (let address = 0; address < nAddresses; address++) {
    const level = (bit: number) => levelAt(address, bit) ?? ((enc.words[address * enc.lanes + (bit >>> 5)] >>> (bit & 31)) & 1);
    const drivers = new Map<string, string[]>();
    const active: string[] = [];
    for (const s of strobes) {
      if (level(s.bit) !== s.active) continue;
      if (s.bus) drivers.set(s.bus, [...(drivers.get(s.bus) ?? []), s.name]);
      else if (enc.origin[address] < 0) active.push(s.name);
    }
    const fights = [...drivers].filter(([, d]) => d.length > 1);
    if (fights.length === 0 && active.length === 0) continue;
    unsafe++;
    if (findings.length < 5) findings.push(`address ${address}: ${fights.map(([bus, d]) => `${d.join('+')} on ${bus}`).join(', ')} ${active.join(' ')}`.trim());
  }
  return { checked: nAddresses, unsafe, findings };
}
