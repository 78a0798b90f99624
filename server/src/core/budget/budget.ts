// The electrical and timing budget of a table, from the figures the user entered: the load on
// every control line and bus line against its driver's rating, the LED current (each
// indicator and all lit at once) against the supply budget, and for every step the longest
// path from the control word changing to the closing clock edge, which bounds the step clock
// (on a machine with a sequencer part its next step is one of the loads: the word's fields
// that drive it must reach its state input before its setup).
// These are estimates from entered figures; real boards need margin and measurement.
import { portBusReads } from '../model/buildPart';
import { combinationalFlags, type FlagFact } from '../model/flagFacts';
import { inputWiring, isCombinationalPort, portOfStrobe } from '../model/partFacts';
import type { Bus, Figures, Machine, Part, StepAlt, Strobe } from '../model/types';
import type { Span } from '../text/span';
import type { KindDef } from '../parts/kinds';

export interface LineLoad {
  /** Strobe name, or `bus name` for a bus row. */
  name: string;
  kind: 'strobe' | 'bus';
  /** Chip inputs the line reaches (for a bus: per bus line). */
  inputs: number;
  /** Input current of those inputs, plus keeper and LED current, in mA. */
  loadMa?: number;
  ledMa: number;
  /** What drives the line: `store main` for a strobe, the driving part for a bus. */
  driver: string;
  driveMa?: number;
  marginMa?: number;
  /** Where to report: the strobe or bus declaration (for a bus row: the driver's enable strobe). */
  span: Span;
  /** Parts whose inputs the line reaches. */
  reaches: string[];
  /** Figures needed for this row that the table does not give. */
  missing: string[];
}

export interface LedGroup {
  where: string;
  count: number;
  perLedMa: number;
  totalMa: number;
  span: Span;
  /** Set when the supply voltage does not exceed the LED's forward voltage. */
  dark?: boolean;
}

export interface PathSegment {
  what: string;
  ns: number;
}

export interface StepPath {
  owner: string;
  step: number;
  guard: string;
  /** The load whose path is longest in this step, e.g. `x.rd.ck`. */
  endpoint: string;
  segments: PathSegment[];
  totalNs: number;
  span: Span;
}

export interface Budget {
  strobes: LineLoad[];
  buses: LineLoad[];
  leds: LedGroup[];
  ledTotalMa: number;
  supplyMa?: number;
  supplyV?: number;
  paths: StepPath[];
  limiting?: StepPath;
  /** Fastest step clock the longest path allows, in kHz. */
  maxClockKhz?: number;
  plannedKhz?: number;
  /** Figures the table would need for a complete budget, in plain words. */
  missing: string[];
}

const fig = (figures: Figures | undefined, name: string): number | undefined => figures?.get(name)?.value;

/** LED current in mA by Ohm's law: I = (Vsupply - Vf) / R. */
export function ledCurrentMa(supplyV: number, forwardV: number, ohms: number): number {
  if (ohms <= 0 || supplyV <= forwardV) return 0;
  return ((supplyV - forwardV) / ohms) * 1000;
}

const cache = new WeakMap<Machine, Budget>();

/** The budget of a machine, computed once per model (the checks and hover share it). */
export function budgetOf(machine: Machine): Budget {
  let budget = cache.get(machine);
  if (!budget) cache.set(machine, (budget = computeBudget(machine)));
  return budget;
}

export function computeBudget(machine: Machine): Budget {
  const supplyV = fig(machine.figures, 'supply_v');
  const missing = new Set<string>();
  const leds: LedGroup[] = [];
  /** Records an LED group and returns the current of one of its LEDs. */
  const ledOf = (figures: Figures, where: string, span: Span): number => {
    const count = fig(figures, 'leds') ?? 0;
    if (!count) return 0;
    const vf = fig(figures, 'led_vf');
    const ohm = fig(figures, 'led_ohm');
    if (supplyV === undefined || vf === undefined || ohm === undefined) {
      missing.add(`LED figures for ${where} (supply_v on the machine line, led_vf and led_ohm)`);
      return 0;
    }
    const perLed = ledCurrentMa(supplyV, vf, ohm);
    leds.push({ where, count, perLedMa: perLed, totalMa: perLed * count, span, dark: supplyV <= vf });
    return perLed;
  };

  const storeOf = new Map<string, { name: string; figures: Figures }>();
  for (const store of machine.stores) for (const p of store.word?.placements ?? []) if (store.word) storeOf.set(p.signal, { name: store.name, figures: store.word.figures });

  const strobes: LineLoad[] = [];
  for (const signal of machine.signals.values()) {
    if (signal.type !== 'strobe') continue;
    strobes.push(strobeLoad(machine, signal, storeOf.get(signal.name), ledOf(signal.figures, `strobe ${signal.name}`, signal.symbol.span)));
  }
  const buses: LineLoad[] = [];
  for (const bus of machine.buses.values()) {
    const ledMa = ledOf(bus.figures, `bus ${bus.name}`, bus.symbol.span);
    buses.push(...busLoads(machine, bus, ledMa));
  }
  for (const part of machine.parts.values()) ledOf(part.figures, `part ${part.name}`, part.symbol.span);
  for (const row of [...strobes, ...buses]) for (const m of row.missing) missing.add(m);

  const paths = stepPaths(machine, missing);
  const limiting = paths.reduce<StepPath | undefined>((a, b) => (!a || b.totalNs > a.totalNs ? b : a), undefined);
  const ledTotalMa = leds.reduce((a, l) => a + l.totalMa, 0);
  return {
    strobes,
    buses,
    leds,
    ledTotalMa,
    supplyMa: fig(machine.figures, 'supply_ma'),
    supplyV,
    paths,
    limiting,
    maxClockKhz: limiting && limiting.totalNs > 0 ? 1e6 / limiting.totalNs : undefined,
    plannedKhz: fig(machine.figures, 'clock_khz'),
    missing: [...missing],
  };
}

/** Inputs one control line of a part reaches: `loads` per card, times its `cards` (a register file built of cards). */
function inputsOfPart(part: Part): number {
  const loads = fig(part.figures, 'loads') ?? 1;
  return loads * (fig(part.figures, 'cards') ?? 1);
}

function strobeLoad(machine: Machine, strobe: Strobe, store: { name: string; figures: Figures } | undefined, ledMa: number): LineLoad {
  const part = strobe.part ? machine.parts.get(strobe.part) : undefined;
  const inputs = fig(strobe.figures, 'loads') ?? (part ? inputsOfPart(part) : 1);
  const inUa = fig(strobe.figures, 'in_ua') ?? (part ? fig(part.figures, 'in_ua') : undefined);
  const driveMa = store ? fig(store.figures, 'drive_ma') : undefined;
  const rowMissing: string[] = [];
  if (inUa === undefined) rowMissing.push(`input current (in_ua) for ${part ? `part ${part.name}` : `strobe ${strobe.name}`}`);
  if (store && driveMa === undefined) rowMissing.push(`control-store output drive (drive_ma on the word of store ${store.name})`);
  const loadMa = inUa === undefined ? undefined : (inputs * inUa) / 1000 + ledMa;
  return {
    name: strobe.name,
    kind: 'strobe',
    inputs,
    loadMa,
    ledMa,
    driver: store ? `store ${store.name}` : 'no store',
    driveMa,
    marginMa: loadMa !== undefined && driveMa !== undefined ? driveMa - loadMa : undefined,
    span: strobe.symbol.span,
    reaches: part ? [part.name] : [],
    missing: rowMissing,
  };
}

/** One row per driver of the bus: the per-line load every driver must carry. */
function busLoads(machine: Machine, bus: Bus, ledMa: number): LineLoad[] {
  const readers = new Map<string, Part>();
  const drivers = new Map<string, { part: Part; strobe: Strobe }>();
  for (const signal of machine.signals.values()) {
    if (signal.type !== 'strobe' || signal.bus !== bus.name || !signal.part) continue;
    const part = machine.parts.get(signal.part);
    if (!part) continue;
    if (signal.kind === 'enable' || signal.kind === 'read') {
      if (!drivers.has(part.name)) drivers.set(part.name, { part, strobe: signal });
    } else readers.set(part.name, part);
  }
  // A part loads every bus an input of its definition is wired to.
  for (const part of machine.parts.values()) if (inputWiring(machine, part).buses.includes(bus.name)) readers.set(part.name, part);
  // A connection drives its bus like an enable that is always on.
  for (const c of machine.connections) {
    const part = c.bus === bus.name && c.part ? machine.parts.get(c.part) : undefined;
    if (part && !drivers.has(part.name)) drivers.set(part.name, { part, strobe: c });
  }
  const rows: LineLoad[] = [];
  for (const { part: driver, strobe } of drivers.values()) {
    // Every other part on the bus loads the line: readers with their inputs, idle drivers
    // with their off-state leakage, and the keeper needs its overdrive current.
    const loaded = [...readers.values(), ...[...drivers.values()].map((d) => d.part)].filter((p, i, all) => p !== driver && all.indexOf(p) === i);
    const rowMissing: string[] = [];
    let loadUa = 0;
    let inputs = 0;
    for (const p of loaded) {
      const inUa = fig(p.figures, 'in_ua');
      const n = inputsOfPart(p);
      inputs += n;
      if (inUa === undefined) rowMissing.push(`input current (in_ua) for part ${p.name}`);
      else loadUa += n * inUa;
    }
    const holdUa = bus.keeper ? fig(bus.figures, 'hold_ua') : 0;
    if (bus.keeper && holdUa === undefined) rowMissing.push(`keeper overdrive current (hold_ua) for bus ${bus.name}`);
    const driveMa = fig(driver.figures, 'drive_ma');
    if (driveMa === undefined) rowMissing.push(`output drive (drive_ma) for part ${driver.name}`);
    const complete = rowMissing.filter((m) => !m.startsWith('output drive')).length === 0;
    const loadMa = complete ? (loadUa + (holdUa ?? 0)) / 1000 + ledMa : undefined;
    rows.push({
      name: bus.name,
      kind: 'bus',
      inputs,
      loadMa,
      ledMa,
      driver: driver.name,
      driveMa,
      marginMa: loadMa !== undefined && driveMa !== undefined ? driveMa - loadMa : undefined,
      span: strobe.symbol.span,
      reaches: loaded.map((p) => p.name),
      missing: rowMissing,
    });
  }
  return rows;
}

/**
 * When each store's outputs are valid, from the step's start: its own access time after its
 * address is valid, and an address fed by another store's field (an entry-point decoder) is
 * valid only when that store's outputs are. Chained stores add their access times in series.
 */
function storeArrivals(machine: Machine, missing: Set<string>): Map<string, Arrival> {
  const arrivals = new Map<string, Arrival>();
  const stores = machine.stores.filter((s) => s.word);
  const holder = new Map<string, string>();
  for (const store of stores) for (const p of store.word!.placements) holder.set(p.signal, store.name);
  const label = (name: string) => (stores.length === 1 ? 'control store access' : `store ${name} access`);
  const visiting = new Set<string>();
  const arrive = (name: string): Arrival => {
    const known = arrivals.get(name);
    if (known) return known;
    const store = stores.find((s) => s.name === name)!;
    // A loop of stores feeding each other is the simulator's refusal; here it counts once.
    visiting.add(name);
    let base: Arrival = { ns: 0, segments: [] };
    for (const source of store.address?.sources ?? []) {
      const from = source.input.kind === 'field' ? holder.get(source.input.name) : undefined;
      if (!from || from === name || visiting.has(from)) continue;
      const fed = arrive(from);
      if (fed.ns > base.ns || base.segments.length === 0) base = fed;
    }
    visiting.delete(name);
    const access = fig(store.word!.figures, 'access_ns');
    if (access === undefined) missing.add(`control-store access time (access_ns on the word layout${stores.length > 1 ? ` of store ${name}` : ''})`);
    const arrival = { ns: base.ns + (access ?? 0), segments: [...base.segments, { what: label(name), ns: access ?? 0 }] };
    arrivals.set(name, arrival);
    return arrival;
  };
  for (const store of stores) arrive(store.name);
  return arrivals;
}

/** Longest path of every step alternative (phase steps once), from control word to clock edge. */
function stepPaths(machine: Machine, missing: Set<string>): StepPath[] {
  if (!machine.stores.some((s) => fig(s.word?.figures, 'access_ns') !== undefined)) {
    if (machine.stores.some((s) => s.word)) missing.add('control-store access time (access_ns on the word layout)');
    return [];
  }
  const byStore = storeArrivals(machine, missing);
  const latest = [...byStore.values()].reduce((a, b) => (b.ns > a.ns ? b : a));
  const bySignal = new Map<string, Arrival>();
  for (const store of machine.stores) for (const p of store.word?.placements ?? []) bySignal.set(p.signal, byStore.get(store.name) ?? latest);
  // A signal no store holds is reported elsewhere (unplaced-signal); the latest store stands in.
  const access = (signal: string | undefined): Arrival => (signal !== undefined ? bySignal.get(signal) : undefined) ?? latest;
  const paths: StepPath[] = [];
  const seen = new Set<number>();
  // Combinational flags the address lines carry: a step whose guards test one settles its word twice.
  const onLines = combinationalFlags(machine).filter((f) => machine.stores.some((s) => s.address?.sources.some((src) => src.input.kind === 'flag' && src.input.name === f.name)));
  const testedBy = (alts: readonly StepAlt[]) => onLines.filter((f) => alts.some((a) => a.guard?.some((g) => g.input.kind === 'flag' && g.input.name === f.name)));
  const visit = (alt: StepAlt, owner: string, siblings: readonly StepAlt[]) => {
    if (seen.has(alt.span.start)) return;
    seen.add(alt.span.start);
    const path = longestPath(machine, alt, access, missing, testedBy(siblings.filter((s) => s.step === alt.step)));
    if (path) paths.push({ owner, step: alt.step, guard: alt.isElse ? 'else' : (alt.guard ?? []).map((g) => `${g.label}=${g.bits}`).join(' & '), ...path, span: alt.numberSpan });
  };
  for (const phase of machine.phases.values()) for (const alt of phase.steps) visit(alt, `phase ${phase.name}`, phase.steps);
  for (const cls of machine.classes) for (const alts of cls.steps.values()) for (const alt of alts) if (!alt.phase) visit(alt, `class ${cls.name}`, alts);
  return paths;
}

/** What a part of the kind is called in a path: the start of its description (`ALU: ...`), else `(kind)`. */
function kindNoun(def: KindDef): string {
  const noun = def.description?.split(':')[0];
  return noun && noun !== def.description && noun.length <= 24 ? noun : `(${def.name})`;
}

interface Arrival {
  ns: number;
  segments: PathSegment[];
}

/** When a signal's value is valid: the outputs of the store that holds it. */
type SignalArrival = (signal: string | undefined) => Arrival;

function later(a: Arrival, b: Arrival): Arrival {
  return b.ns > a.ns ? b : a;
}

function longestPath(machine: Machine, alt: StepAlt, access: SignalArrival, missing: Set<string>, flags: readonly FlagFact[] = []): Omit<StepPath, 'owner' | 'step' | 'guard' | 'span'> | undefined {
  const strobes = alt.actions.map((a) => machine.signals.get(a.signal)).filter((s): s is Strobe => s?.type === 'strobe');
  const need = (part: Part, name: string): number => {
    const v = fig(part.figures, name);
    if (v === undefined) missing.add(`${name} for part ${part.name}`);
    return v ?? 0;
  };
  // The step's control word is complete when its slowest store's outputs are; each path starts
  // from the store holding its strobe, and a part with a control field from that field's store.
  const start = alt.actions.map((a) => access(a.signal)).reduce(later, access(undefined));
  const control = (s: Strobe, part: Part) => [...part.controlFields.values()].reduce((a, f) => later(a, access(f)), access(s.name));
  /**
   * Through the part: the latest of the buses its port reads (the arms its controls cannot pick
   * are left out) and its control fields, then its tpd_ns. Only a port that reads a control or a
   * bus changes within the step; one that reads its state or settings is valid from the start.
   */
  const throughPart = (s: Strobe, part: Part, depth: number): Arrival | undefined => {
    const port = portOfStrobe(machine, part, s);
    if (!port || depth >= 4 || !isCombinationalPort(machine, part, port)) return undefined;
    const reads = portBusReads(part, port.name, new Map());
    const inputs = [...reads.map((b) => arrivalOnBus(b, depth + 1)), control(s, part)].filter((a): a is Arrival => !!a);
    const latest = inputs.reduce(later);
    return { ns: latest.ns + need(part, 'tpd_ns'), segments: [...latest.segments, { what: `${part.name} ${kindNoun(part.def)}${port.drive ? '' : ` ${port.name}`}`, ns: need(part, 'tpd_ns') }] };
  };
  const busArrival = new Map<string, Arrival | undefined>();
  const arrivalOnBus = (busName: string, depth = 0): Arrival | undefined => {
    if (busArrival.has(busName)) return busArrival.get(busName);
    busArrival.set(busName, undefined);
    let best: Arrival | undefined;
    for (const s of strobes) {
      if (s.bus !== busName || (s.kind !== 'enable' && s.kind !== 'read') || !s.part) continue;
      const part = machine.parts.get(s.part);
      if (!part) continue;
      const enabled = access(s.name);
      let arrival: Arrival = { ns: enabled.ns + need(part, 'en_ns'), segments: [...enabled.segments, { what: `${s.name} enable`, ns: need(part, 'en_ns') }] };
      const through = throughPart(s, part, depth);
      if (through && through.ns > arrival.ns) arrival = through;
      if (!best || arrival.ns > best.ns) best = arrival;
    }
    if (best) {
      const settle = fig(machine.buses.get(busName)?.figures, 'settle_ns') ?? 0;
      if (settle) best = { ns: best.ns + settle, segments: [...best.segments, { what: `${busName} settling`, ns: settle }] };
    }
    busArrival.set(busName, best);
    return best;
  };
  let worst: { arrival: Arrival; endpoint: string } | undefined;
  for (const s of strobes) {
    if (!s.part) continue;
    const part = machine.parts.get(s.part);
    if (!part) continue;
    let arrival: Arrival | undefined;
    if ((s.kind === 'clock' || s.kind === 'write') && s.bus) arrival = arrivalOnBus(s.bus);
    else if (s.kind === 'clock' || s.kind === 'count') {
      // An edge port with no bus (a latch of a flag, a count): through the part when what it
      // stores reads buses or controls, else only the strobe itself.
      arrival = throughPart(s, part, 0) ?? access(s.name);
    }
    if (!arrival) continue;
    // The loading strobe itself must be valid before the edge too.
    arrival = later(arrival, access(s.name));
    const setup = need(part, 'tsu_ns');
    const total = { ns: arrival.ns + setup, segments: [...arrival.segments, { what: `${s.name} setup`, ns: setup }] };
    if (!worst || total.ns > worst.arrival.ns) worst = { arrival: total, endpoint: s.name };
  }
  // The sequencer (a part whose kind holds the step) computes the next step at every closing
  // edge from the codes of the fields that drive it (its op control, its target) and what its
  // other inputs read: those are valid after the store's access (and a bus after its drivers),
  // then through its next-state logic (its tpd_ns where the table gives one) to its state,
  // which must be there its tsu_ns before the edge.
  const sequencer = machine.sequencer ? machine.parts.get(machine.sequencer) : undefined;
  if (sequencer) {
    const inputs: Arrival[] = [...sequencer.controlFields.values()].map((f) => access(f));
    for (const source of sequencer.inputs.values()) {
      const arrival = source.from === 'field' ? access(source.name) : source.from === 'bus' ? arrivalOnBus(source.name) : undefined;
      if (arrival) inputs.push(arrival);
    }
    if (inputs.length) {
      let arrival = inputs.reduce(later);
      const tpd = fig(sequencer.figures, 'tpd_ns');
      if (tpd !== undefined) arrival = { ns: arrival.ns + tpd, segments: [...arrival.segments, { what: `${sequencer.name} next-step logic`, ns: tpd }] };
      const setup = need(sequencer, 'tsu_ns');
      const total = { ns: arrival.ns + setup, segments: [...arrival.segments, { what: `${sequencer.name} setup`, ns: setup }] };
      if (!worst || total.ns > worst.arrival.ns) worst = { arrival: total, endpoint: `${sequencer.name} (next step)` };
    }
  }
  const own = worst ? { endpoint: worst.endpoint, segments: worst.arrival.segments, totalNs: worst.arrival.ns } : { endpoint: '(nothing loaded)', segments: start.segments, totalNs: start.ns };
  // A combinational flag the step's guards test: the word must settle twice within the step.
  // The first word's drivers reach the flag's part through its inputs, the flag settles after
  // the part's tpd_ns, the address lines change and the store is read again; only then does
  // the step's own path (from that second access to the setup before the edge) begin. Adding
  // the two in series is common practice, no source.
  let flagPath: Arrival | undefined;
  for (const fact of flags) {
    const part = machine.parts.get(fact.part.name);
    if (!part) continue;
    const inputs = [...fact.buses.map((b) => arrivalOnBus(b)), ...fact.controls.map((c) => fact.part.controlFields.get(c)).filter((f): f is string => f !== undefined).map((f) => access(f))].filter((a): a is Arrival => !!a);
    // Nothing it reads changes in this step: it holds what it settled to before.
    if (inputs.length === 0) continue;
    const latest = inputs.reduce(later);
    const tpd = need(part, 'tpd_ns');
    const arrival = { ns: latest.ns + tpd, segments: [...latest.segments, { what: `${part.name} flag ${fact.name} to the address`, ns: tpd }] };
    if (!flagPath || arrival.ns > flagPath.ns) flagPath = arrival;
  }
  if (!flagPath) return own;
  return { endpoint: own.endpoint, segments: [...flagPath.segments, ...own.segments], totalNs: flagPath.ns + own.totalNs };
}
