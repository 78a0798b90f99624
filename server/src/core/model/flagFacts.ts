// What each flag of a machine reads and when it changes (docs/notation.md, "Timing model"):
//
//   - a flag whose expression reads only things that change at a closing edge (the part's state
//     and settings, another part's value, the instruction register's bits) is LATCHED: it is
//     read again right after the edge and holds for the whole next step;
//   - a flag that reads a bus (through an input) or a control (a field of the word) is
//     COMBINATIONAL: it settles within the step from what the step's word drives, so the address
//     lines that carry it can change the word within the step (the simulator settles it, the
//     `address-loop` check and the timing path follow it).
//
// Choice settings are known per part, so an arm a setting cannot pick does not count (a kind
// whose flag reads a bus only under one choice is latched in a part with the other). Shared by
// the simulator, the checks, the budget and hover; nothing here checks or reports.
import { type Expr, namesUsed } from '../parts/expr';
import { choiceCodes, parsedExpr } from '../parts/behaviour';
import type { KindFlag } from '../parts/kinds';
import { portBusReads } from './buildPart';
import { specialise } from './partFacts';
import type { Machine, Part } from './types';

export interface FlagFact {
  /** The machine's name of the flag (`taken`, `cnt.zero`). */
  name: string;
  /** The part producing it, read as a part of its kind. */
  part: Part;
  flag: KindFlag;
  timing: 'latched' | 'combinational';
  /** Buses it reads through the part's inputs (every arm a control could pick). */
  buses: string[];
  /** Controls of the part it reads (their fields' codes in the step's word). */
  controls: string[];
}

const cache = new WeakMap<Machine, Map<string, FlagFact>>();

/** Every flag of the machine with what it reads, by the machine's flag name (computed once per model). */
export function flagFacts(machine: Machine): ReadonlyMap<string, FlagFact> {
  let facts = cache.get(machine);
  if (facts) return facts;
  facts = new Map();
  for (const part of machine.parts.values()) {
    for (const flag of part.def.flags) {
      const name = part.flagNames.get(flag.name);
      if (!name || !machine.flags.has(name)) continue;
      facts.set(name, factOf(part, flag, name));
    }
  }
  cache.set(machine, facts);
  return facts;
}

/** The combinational flags of the machine (empty for one whose flags are all latched). */
export function combinationalFlags(machine: Machine): FlagFact[] {
  return [...flagFacts(machine).values()].filter((f) => f.timing === 'combinational');
}

/** The buses a flag reads when its part's controls hold `codes` (an arm the codes cannot pick is left out). */
export function flagBusReads(fact: FlagFact, codes: ReadonlyMap<string, number>): string[] {
  return portBusReads(fact.part, fact.flag.name, codes);
}

function factOf(part: Part, flag: KindFlag, name: string): FlagFact {
  const def = part.def;
  const expr: Expr | undefined = parsedExpr(def, flag.expr).expr;
  // Only the choice settings are known here: a select on one reads just the arm it takes.
  const values = (n: string): ReadonlyMap<string, number> | undefined => {
    const setting = def.settings.find((s) => s.name === n);
    return setting?.type === 'choice' ? new Map(setting.choices.map((c, i) => [c, i])) : undefined;
  };
  const live = expr ? new Set(namesUsed(specialise(expr, choiceCodes(def, part.settings), values))) : new Set<string>();
  const controls = def.controls.filter((c) => live.has(c.name)).map((c) => c.name);
  const buses = [...new Set(def.inputs.filter((i) => live.has(i.name)).flatMap((i) => {
    const source = part.inputs.get(i.name);
    return source?.from === 'bus' ? [source.name] : [];
  }))];
  return { name, part, flag, timing: controls.length || buses.length ? 'combinational' : 'latched', buses, controls };
}
