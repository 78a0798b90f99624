// Who uses what, for hovers, code lenses and completion: the step lines as written (phase
// steps once, class steps where the class writes them), every class step with phases
// expanded, and for each signal, map and phase the steps and classes that use it. Built once
// per model and kept beside it. Read-only views of the model; it decides nothing.
import type { ClassDef, Machine, Phase, StepAlt } from '../model/types';

/** A step alternative where it is written: in a phase or in a class. */
export interface WrittenAlt {
  alt: StepAlt;
  owner: { kind: 'phase'; phase: Phase } | { kind: 'class'; cls: ClassDef };
}

export interface ClassAlt {
  cls: ClassDef;
  alt: StepAlt;
}

export interface UsageIndex {
  written: WrittenAlt[];
  /** Alternatives of classes (phases expanded) asserting a strobe or setting a field, by signal name. */
  bySignal: Map<string, ClassAlt[]>;
  /** Alternatives of classes (phases expanded) that use a decode map. */
  byMap: Map<string, ClassAlt[]>;
  /** Classes that `use` each phase. */
  phaseUsers: Map<string, ClassDef[]>;
}

const indexes = new WeakMap<Machine, UsageIndex>();

export function usageOf(machine: Machine): UsageIndex {
  let index = indexes.get(machine);
  if (index) return index;
  const written: WrittenAlt[] = [];
  for (const phase of machine.phases.values()) for (const alt of phase.steps) written.push({ alt, owner: { kind: 'phase', phase } });
  for (const cls of machine.classes) {
    for (const alts of cls.steps.values()) for (const alt of alts) if (!alt.phase) written.push({ alt, owner: { kind: 'class', cls } });
  }
  written.sort((a, b) => a.alt.span.start - b.alt.span.start);
  const bySignal = new Map<string, ClassAlt[]>();
  const byMap = new Map<string, ClassAlt[]>();
  const phaseUsers = new Map<string, ClassDef[]>();
  const push = <K>(map: Map<K, ClassAlt[]>, key: K, use: ClassAlt) => {
    const list = map.get(key);
    if (list) list.push(use);
    else map.set(key, [use]);
  };
  for (const cls of machine.classes) {
    for (const alts of cls.steps.values()) {
      for (const alt of alts) {
        const seen = new Set<string>();
        for (const action of alt.actions) {
          if (!seen.has(action.signal)) push(bySignal, action.signal, { cls, alt });
          seen.add(action.signal);
          if (action.value?.kind === 'map') push(byMap, action.value.map, { cls, alt });
        }
        if (alt.phase) {
          const users = phaseUsers.get(alt.phase.name) ?? [];
          if (!users.includes(cls)) users.push(cls);
          phaseUsers.set(alt.phase.name, users);
        }
      }
    }
  }
  index = { written, bySignal, byMap, phaseUsers };
  indexes.set(machine, index);
  return index;
}

/** "step 2 of class OP" / "step 0 of phase fetch". */
export function describeWritten(w: WrittenAlt): string {
  return `step ${w.alt.step} of ${w.owner.kind === 'phase' ? `phase ${w.owner.phase.name}` : `class ${w.owner.cls.name}`}`;
}

/** The guard of an alternative as written: `taken=1 & funct3=101`, `else`, or undefined when always. */
export function guardText(alt: StepAlt): string | undefined {
  if (alt.isElse) return 'else';
  if (!alt.guard || alt.guard.length === 0) return undefined;
  return alt.guard.map((g) => `${g.label}=${g.bits}`).join(' & ');
}

/** Counts of steps and classes in a list of class alternatives, and how many came from phases. */
export function countUses(uses: readonly ClassAlt[]): { steps: number; classes: ClassDef[]; viaPhases: number } {
  const classes: ClassDef[] = [];
  let viaPhases = 0;
  for (const use of uses) {
    if (!classes.includes(use.cls)) classes.push(use.cls);
    if (use.alt.phase) viaPhases++;
  }
  return { steps: uses.length, classes, viaPhases };
}
