// A value change dump (IEEE 1364-2005 clause 18, the VCD format) of a simulated run, as a
// logic analyser on the board would see it. One time unit is one step (the timescale says
// 1 us, a nominal 1 MHz microcycle clock); the values at time t are those during step t, before
// its closing edge, so a register loaded at the edge of step t shows its new value at t + 1.
// Signals, in scopes under one module named after the machine:
//   strobes   the ROM output line of every strobe (its level, so an active-low strobe reads 0
//             when asserted), exactly as the burned word holds it;
//   asserted  the same strobes as asserted (1) or not (0), whatever their polarity;
//   fields    every field's code;
//   buses     every bus's value; x when the value is undefined, z when the bus floats (nobody
//             drives it and it has no keepers);
//   state     the step counter, each store's address, every register and counter part (the
//             program counter and the instruction register among them) and every flag.
// Names keep letters, digits and `_`; other characters (the dots in `x.rs1.oe`) become `_`.
//
// Deliberately not here: writing files (the CLI does that atomically) and the clock: the date
// line comes from the caller.
import type { BusSimulator } from './simulator';
import { heldValue } from '../model/partFacts';
import { returnRegisters } from '../model/sequencing';

interface TracedSignal {
  id: string;
  width: number;
  /** The last value written, as its VCD text (without the identifier), or '' before the first. */
  last: string;
}

export interface VcdOptions {
  /** At most this many steps are dumped; later steps are left out (the dump says so). */
  maxSteps: number;
  /** Text for the $date section (the core has no clock). */
  date?: string;
  version?: string;
}

/** Identifier codes from printable ASCII 33..126 (IEEE 1364-2005 18.2.3.8), shortest first. */
function identifier(index: number): string {
  let id = '';
  let n = index;
  do {
    id += String.fromCharCode(33 + (n % 94));
    n = Math.floor(n / 94) - 1;
  } while (n >= 0);
  return id;
}

function cleanName(name: string): string {
  const clean = name.replace(/[^A-Za-z0-9_]/g, '_');
  return /^[A-Za-z_]/.test(clean) ? clean : `_${clean}`;
}

function binary(value: number, width: number): string {
  return (value >>> 0).toString(2).padStart(width, '0').slice(-width);
}

export class VcdTrace {
  /** Steps dumped so far. */
  steps = 0;
  /** True when the run went on after the dump was full. */
  truncated = false;
  private readonly chunks: string[] = [];
  private readonly header: string[] = [];
  private nextId = 0;
  private readonly strobeLines: { signal: TracedSignal; asserted: TracedSignal; store: number; bit: number; activeLow: boolean }[] = [];
  private readonly fieldSignals: { signal: TracedSignal; store: number; lo: number; width: number }[] = [];
  private readonly busSignals: TracedSignal[] = [];
  private readonly stepSignal: TracedSignal;
  private readonly addressSignals: TracedSignal[] = [];
  private readonly partSignals: { signal: TracedSignal; part: number }[] = [];
  private readonly flagSignals: TracedSignal[] = [];
  private readonly stateSignals: { signal: TracedSignal; slot: number }[] = [];

  constructor(
    sim: BusSimulator,
    private readonly options: VcdOptions,
  ) {
    const plan = sim.plan;
    const machine = plan.machine;
    const h = this.header;
    if (options.date) h.push('$date', `  ${options.date}`, '$end');
    h.push('$version', `  ${options.version ?? 'Phasewright bus-level simulator'}`, '$end');
    h.push('$comment', '  One time unit is one microcycle step. Values at time t are those during step t (before its closing edge).', '$end');
    h.push('$timescale 1 us $end');
    h.push(`$scope module ${cleanName(machine.title ?? 'machine')} $end`);
    const used = new Set<string>();
    const unique = (name: string) => {
      let candidate = cleanName(name);
      for (let n = 2; used.has(candidate); n++) candidate = `${cleanName(name)}_${n}`;
      used.add(candidate);
      return candidate;
    };
    const declare = (name: string, width: number): TracedSignal => {
      const signal = { id: identifier(this.nextId++), width, last: '' };
      h.push(`$var wire ${width} ${signal.id} ${unique(name)} $end`);
      return signal;
    };
    const placements: { name: string; store: number; lo: number; hi: number }[] = [];
    plan.stores.forEach((s, store) => {
      for (const p of s.store.word!.placements) placements.push({ name: p.signal, store, lo: p.lo, hi: p.hi });
    });
    const strobes = placements.filter((p) => machine.signals.get(p.name)?.type === 'strobe');
    h.push('$scope module strobes $end');
    used.clear();
    const levels = strobes.map((p) => declare(p.name, 1));
    h.push('$upscope $end', '$scope module asserted $end');
    used.clear();
    strobes.forEach((p, i) => {
      const strobe = machine.signals.get(p.name)!;
      const asserted = declare(p.name, 1);
      this.strobeLines.push({ signal: levels[i], asserted, store: p.store, bit: p.lo, activeLow: strobe.type === 'strobe' && strobe.active === 'low' });
    });
    h.push('$upscope $end', '$scope module fields $end');
    used.clear();
    for (const p of placements.filter((p) => machine.signals.get(p.name)?.type === 'field')) {
      const width = p.hi - p.lo + 1;
      this.fieldSignals.push({ signal: declare(p.name, width), store: p.store, lo: p.lo, width });
    }
    h.push('$upscope $end', '$scope module buses $end');
    used.clear();
    plan.busNames.forEach((name, b) => this.busSignals.push(declare(name, plan.busWidth[b])));
    h.push('$upscope $end', '$scope module state $end');
    used.clear();
    this.stepSignal = declare('step', Math.max(1, plan.stepBits));
    plan.stores.forEach((s) => this.addressSignals.push(declare(`address_${s.store.name}`, s.enc.addressBits)));
    plan.parts.forEach((part, i) => {
      if (heldValue(machine, part)) this.partSignals.push({ signal: declare(part.name, Math.min(32, part.width)), part: i });
    });
    plan.flagNames.forEach((flag) => this.flagSignals.push(declare(flag, 1)));
    // The sequencer's return registers (a call's saved step), where it has them.
    for (const name of returnRegisters(machine)) {
      const slot = plan.custom.stateSlot(machine.sequencer!, name);
      if (slot !== undefined) this.stateSignals.push({ signal: declare(`${machine.sequencer}.${name}`, Math.max(1, plan.stepBits)), slot });
    }
    h.push('$upscope $end', '$upscope $end', '$enddefinitions $end');
  }

  /** The simulator observer: records the step that has just settled. */
  readonly observe = (sim: BusSimulator, uop: number): void => {
    if (this.steps >= this.options.maxSteps) {
      this.truncated = true;
      return;
    }
    const plan = sim.plan;
    const changes: string[] = [];
    const put = (signal: TracedSignal, text: string) => {
      if (signal.last === text) return;
      signal.last = text;
      changes.push(signal.width === 1 ? `${text}${signal.id}` : `b${text} ${signal.id}`);
    };
    const nStores = plan.stores.length;
    const addresses = plan.stores.map((_, s) => sim.logAddress[sim.step * nStores + s]);
    const bitOf = (store: number, bit: number) => {
      const enc = plan.stores[store].enc;
      return (enc.words[addresses[store] * enc.lanes + (bit >>> 5)] >>> (bit & 31)) & 1;
    };
    for (const s of this.strobeLines) {
      const level = bitOf(s.store, s.bit);
      put(s.signal, String(level));
      put(s.asserted, String(s.activeLow ? 1 - level : level));
    }
    for (const f of this.fieldSignals) {
      let code = 0;
      for (let i = f.width - 1; i >= 0; i--) code = code * 2 + bitOf(f.store, f.lo + i);
      put(f.signal, binary(code, f.width));
    }
    const info = plan.microOps.info[uop];
    this.busSignals.forEach((signal, b) => {
      if (!info.driven[b] && !plan.busKeeper[b]) put(signal, 'z');
      else if (!sim.isBusDefined(b)) put(signal, 'x');
      else put(signal, binary(sim.busValue[b], signal.width));
    });
    put(this.stepSignal, binary(sim.step, this.stepSignal.width));
    this.addressSignals.forEach((signal, s) => put(signal, binary(addresses[s], signal.width)));
    for (const p of this.partSignals) put(p.signal, binary(sim.partValue[p.part], p.signal.width));
    this.flagSignals.forEach((signal, f) => put(signal, String(sim.flags[f] & 1)));
    for (const st of this.stateSignals) put(st.signal, binary(sim.customState[st.slot], st.signal.width));
    if (this.steps === 0) this.chunks.push('#0', '$dumpvars', ...changes, '$end');
    else if (changes.length) this.chunks.push(`#${this.steps}`, ...changes);
    this.steps++;
  };

  /** The whole dump as text (ASCII). A note in the header says when the run outlasted the dump. */
  text(): string {
    const header = [...this.header];
    if (this.truncated) {
      const at = header.indexOf('$timescale 1 us $end');
      header.splice(at, 0, '$comment', `  The run went on after ${this.options.maxSteps} steps; later steps are not in this dump.`, '$end');
    }
    return [...header, ...this.chunks, `#${this.steps}`].join('\n') + '\n';
  }
}
