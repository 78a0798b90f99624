// What every check receives, and helpers for walking the steps of a machine. A phase's steps
// are checked once where the phase is written; a class's own steps where the class writes
// them. Checks that depend on the class (its format, its opcode) walk classes with phases
// expanded and point at the `use` line as a related location.
import type { Diagnostic, Fix, RelatedInfo } from '../text/diagnostic';
import type { Span } from '../text/span';
import { drivenBus, driverNamed } from '../model/busDrivers';
import type { Action, ClassDef, Machine, StepAlt, Strobe } from '../model/types';
import { defaultSeverity } from './catalogue';

export class CheckContext {
  readonly diagnostics: Diagnostic[] = [];

  constructor(
    readonly machine: Machine,
    /** The source text, for fixes that must look at what surrounds a span. */
    readonly text: string,
  ) {}

  report(code: string, at: Span, message: string, related?: RelatedInfo[], fixes?: Fix[]): void {
    this.diagnostics.push({ code, severity: defaultSeverity(code), span: at, message, related, fixes });
  }
}

export interface Check {
  /** The codes this check can produce. */
  codes: string[];
  run(ctx: CheckContext): void;
}

export interface OwnedAlt {
  alt: StepAlt;
  /** `phase fetch` or `class OP`, for messages. */
  owner: string;
}

/** Every step alternative once, where it is written. Built once per model and shared by the checks. */
export function writtenAlternatives(machine: Machine): readonly OwnedAlt[] {
  return walks(machine).written;
}

/** Every step alternative of every class, phases expanded. */
export function classAlternatives(machine: Machine): readonly { cls: ClassDef; alt: StepAlt }[] {
  return walks(machine).byClass;
}

interface Walks {
  written: OwnedAlt[];
  byClass: { cls: ClassDef; alt: StepAlt }[];
  drivers: WeakMap<StepAlt, Map<string, Action[]>>;
}

const walkCache = new WeakMap<Machine, Walks>();

function walks(machine: Machine): Walks {
  let cached = walkCache.get(machine);
  if (cached) return cached;
  const written: OwnedAlt[] = [];
  const byClass: { cls: ClassDef; alt: StepAlt }[] = [];
  for (const phase of machine.phases.values()) {
    const owner = `phase ${phase.name}`;
    for (const alt of phase.steps) written.push({ alt, owner });
  }
  for (const cls of machine.classes) {
    const owner = `class ${cls.name}`;
    for (const alts of cls.steps.values()) {
      for (const alt of alts) {
        if (!alt.phase) written.push({ alt, owner });
        byClass.push({ cls, alt });
      }
    }
  }
  cached = { written, byClass, drivers: new WeakMap() };
  walkCache.set(machine, cached);
  return cached;
}

export function strobeOf(machine: Machine, action: Action): Strobe | undefined {
  return driverNamed(machine, action.signal);
}

/** The actions of an alternative that put a value on each bus (enables and memory reads). Do not modify the result: it is shared. */
export function driversByBus(machine: Machine, alt: StepAlt): Map<string, Action[]> {
  const cache = walks(machine).drivers;
  const cached = cache.get(alt);
  if (cached) return cached;
  const result = new Map<string, Action[]>();
  cache.set(alt, result);
  // Connections drive in every step: they stand here as actions at their declarations.
  for (const action of [...alt.actions, ...machine.connections.map((c) => ({ signal: c.name, span: c.symbol.declSpan }))]) {
    const strobe = strobeOf(machine, action);
    const bus = strobe && drivenBus(strobe);
    if (bus === undefined) continue;
    const list = result.get(bus);
    if (list) list.push(action);
    else result.set(bus, [action]);
  }
  return result;
}

/** "step 2 of class OP" or "step 0 of phase fetch (used by class OP)". */
export function describeStep(alt: StepAlt, owner: string): string {
  return `step ${alt.step} of ${owner}`;
}

/** Related location pointing at the `use` line that brought a phase step into a class. */
export function useSite(alt: StepAlt, cls: ClassDef): RelatedInfo[] {
  return alt.phase ? [{ span: alt.phase.useSpan, message: `phase ${alt.phase.name} is used here by class ${cls.name}` }] : [];
}
