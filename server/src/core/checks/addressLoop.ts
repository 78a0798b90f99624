// address-loop: a combinational flag (model/flagFacts.ts: it reads a bus or a control) that a
// step's guards test decides that step's word within the step. If the word chosen with the
// flag at 0 and the one chosen with it at 1 drive the flag's inputs differently (another driver
// on a bus it reads, another code in a field its part or a driver of those buses reads), the
// flag can change the word that decides it: the address may oscillate, or settle on whichever
// word the last step left it at. Words that agree on everything the flag reads are safe, the
// usual case: both put the same operands on the buses and differ only at the closing edge.
//
// What the flag reads is followed back through the drivers of the buses it reads: a driver
// whose port computes from other buses (an ALU on the operand buses) brings those buses and
// its control fields in too. Decode maps whose inputs include the flag are not followed (a
// field set from a map is compared by the map's name).
import { driverNamed } from '../model/busDrivers';
import { portBusReads } from '../model/buildPart';
import { combinationalFlags, flagBusReads, type FlagFact } from '../model/flagFacts';
import { portOfStrobe } from '../model/partFacts';
import type { Machine, Part, StepAlt } from '../model/types';
import { type Check, type CheckContext, driversByBus } from './context';
import { bitsOf, forEachScenario, guardInputs, matchingAlternatives, type Scenario } from './inputSpace';

export const addressLoop: Check = {
  codes: ['address-loop'],
  run(ctx) {
    const machine = ctx.machine;
    const flags = combinationalFlags(machine).filter((f) => machine.stores.some((s) => s.address?.sources.some((src) => src.input.kind === 'flag' && src.input.name === f.name)));
    if (flags.length === 0) return;
    const reported = new Set<string>();
    for (const cls of machine.classes) {
      for (const [step, alts] of cls.steps) {
        if (alts.length < 2) continue;
        const { irMask, flags: tested } = guardInputs(alts);
        const free = bitsOf(irMask);
        for (const fact of flags) {
          if (!tested.includes(fact.name)) continue;
          const others = tested.filter((t) => t !== fact.name);
          if (free.length + others.length > 16) continue;
          forEachScenario({ mask: 0, value: 0 }, free, others, (scenario) => {
            const pick = (value: number) => {
              const with_: Scenario = { ir: scenario.ir, flags: new Map([...scenario.flags, [fact.name, value]]) };
              return matchingAlternatives(alts, with_)[0] as StepAlt | undefined;
            };
            const [at0, at1] = [pick(0), pick(1)];
            if (!at0 || !at1 || at0 === at1) return;
            const key = `${fact.name}:${Math.min(at0.span.start, at1.span.start)}:${Math.max(at0.span.start, at1.span.start)}`;
            if (reported.has(key)) return;
            const [path0, path1] = [inputPath(machine, fact, at0), inputPath(machine, fact, at1)];
            const differences = compare(path0, path1, fact.name);
            if (differences.length === 0) return;
            reported.add(key);
            report(ctx, step, cls.name, fact, at0, at1, differences);
          });
        }
      }
    }
  },
};

/** What the flag reads in one word: per bus, its drivers; per field on the path, its value. */
interface InputPath {
  buses: Map<string, string[]>;
  fields: Map<string, string>;
}

function inputPath(machine: Machine, fact: FlagFact, alt: StepAlt): InputPath {
  const path: InputPath = { buses: new Map(), fields: new Map() };
  /** Codes of a part's controls in this word (a control set from a map or by no field stays unknown: every arm counts). */
  const codes = (part: Part): Map<string, number> => {
    const out = new Map<string, number>();
    for (const [control, fieldName] of part.controlFields) {
      const field = machine.signals.get(fieldName);
      if (field?.type !== 'field') continue;
      const action = alt.actions.find((a) => a.signal === fieldName);
      const value = action?.value;
      if (value?.kind === 'map') path.fields.set(fieldName, `map ${value.map}`);
      else {
        const code = value?.kind === 'code' ? value.code : field.idle;
        path.fields.set(fieldName, value?.kind === 'code' ? value.name : [...field.values.values()].find((v) => v.code === code)?.name ?? `code ${code}`);
        out.set(control, code);
      }
    }
    return out;
  };
  const pending = flagBusReads(fact, codes(fact.part));
  const drivers = driversByBus(machine, alt);
  for (let i = 0; i < pending.length; i++) {
    const bus = pending[i];
    if (path.buses.has(bus)) continue;
    const names: string[] = [];
    for (const action of drivers.get(bus) ?? []) {
      names.push(action.signal);
      const strobe = driverNamed(machine, action.signal);
      const original = strobe?.part ? machine.parts.get(strobe.part) : undefined;
      if (!strobe || !original) continue;
      const part = original;
      const port = portOfStrobe(machine, original, strobe);
      if (port) pending.push(...portBusReads(part, port.name, codes(part)));
    }
    path.buses.set(bus, names.sort());
  }
  return path;
}

/** What differs between the flag's input paths of two words, in words; empty when they agree. */
function compare(at0: InputPath, at1: InputPath, flag: string): string[] {
  const out: string[] = [];
  const who = (names: string[] | undefined) => (names?.length ? names.map((n) => `\`${n}\``).join(' and ') : 'nothing');
  for (const bus of new Set([...at0.buses.keys(), ...at1.buses.keys()])) {
    const [a, b] = [at0.buses.get(bus), at1.buses.get(bus)];
    // A bus only one path reaches matters only if it is driven there.
    if ((a?.join() ?? '') === (b?.join() ?? '') || (!a && !b?.length) || (!b && !a?.length)) continue;
    out.push(`\`${bus}\` is driven by ${who(a)} with ${flag}=0 but by ${who(b)} with ${flag}=1`);
  }
  for (const field of new Set([...at0.fields.keys(), ...at1.fields.keys()])) {
    const [a, b] = [at0.fields.get(field), at1.fields.get(field)];
    if (a === undefined || b === undefined || a === b) continue;
    out.push(`\`${field}\` is ${a} with ${flag}=0 but ${b} with ${flag}=1`);
  }
  return out;
}

function report(ctx: CheckContext, step: number, owner: string, fact: FlagFact, at0: StepAlt, at1: StepAlt, differences: string[]): void {
  const [first, second] = at0.span.start <= at1.span.start ? [at0, at1] : [at1, at0];
  const target = first.phase ? first.phase.useSpan : first.numberSpan;
  const reads = [...fact.buses.map((b) => `bus \`${b}\``), ...fact.controls.map((c) => `control \`${c}\``)].join(', ');
  ctx.report(
    'address-loop',
    target,
    `step ${step} of class ${owner}: combinational flag \`${fact.name}\` (it reads ${reads}) chooses this step's word within the step, but the two words drive its inputs differently: ${differences.join('; ')}. The flag can change the word that decides it, so the address may oscillate or settle either way; make both words drive the flag's inputs the same, or latch the flag at a closing edge and test it in the next step`,
    [
      { span: first.span, message: `the word with ${fact.name}=${first === at0 ? 0 : 1}` },
      { span: second.span, message: `the word with ${fact.name}=${second === at0 ? 0 : 1}` },
    ],
  );
}
