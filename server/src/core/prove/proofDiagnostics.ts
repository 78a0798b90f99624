// The proof's verdicts as diagnostics on the table's text. A refutation is placed on what its
// counterexample implicates, by this rule (docs/proving.md, "Where a refutation is reported"):
//   1. a decode-map row on the counterexample's path, when every instruction of the class that
//      row can serve is refuted while some other instruction of the class is proved (one wrong
//      row, as when two compare codes are swapped);
//   2. else the strobe that last set the value that differs (the step's action: a wrong bus, a
//      missing sign extension, a taken branch that should not be);
//   3. else the last step the instruction ran; else the class's name.
// Refutations blamed on the same place make one diagnostic listing the instructions, with the
// first counterexample in full and the steps it ran as related locations.
import { RV32I_INSTRUCTIONS, type InstructionSpec } from '../isa/rv32i';
import { matchesBits } from '../model/numbers';
import type { ClassDef, DecodeMap, Machine, MapRow } from '../model/types';
import type { SimPlan } from '../sim/plan';
import type { Diagnostic, RelatedInfo } from '../text/diagnostic';
import type { Span } from '../text/span';
import { fixedBits } from './execute';
import { describeCounterexample, type Counterexample, type InstructionResult } from './prove';

/** At most this many steps of a counterexample are listed as related locations. */
const MAX_RELATED_STEPS = 16;

/** The class that decodes an instruction: the one declared with its major opcode. */
function classOf(machine: Machine, spec: InstructionSpec): ClassDef | undefined {
  return machine.classes.find((c) => c.opcode === spec.opcode);
}

/** Whether a map row can serve the instruction: its instruction-bit patterns agree with the bits the encoding fixes. */
function rowServes(map: DecodeMap, row: MapRow, spec: InstructionSpec): boolean {
  const { value, mask } = fixedBits(spec);
  return map.inputs.every((input, i) => {
    const v = input.input;
    if (v.kind !== 'ir') return true;
    const width = v.hi - v.lo + 1;
    const pattern = row.patterns[i];
    for (let b = 0; b < width; b++) {
      if (!((mask >>> (v.lo + b)) & 1)) continue;
      const ch = pattern[width - 1 - b];
      if (ch !== '-' && !matchesBits(ch, (value >>> (v.lo + b)) & 1)) return false;
    }
    return true;
  });
}

interface Blame {
  span: Span;
  /** What stands there, for the message: `decode-map row`, `strobe`, `step`, `class`. */
  what: string;
}

function blameOf(machine: Machine, plan: SimPlan, spec: InstructionSpec, cx: Counterexample, verdicts: ReadonlyMap<string, InstructionResult['verdict']['kind']>): Blame {
  const cls = classOf(machine, spec);
  const sources = cx.path.map((p) => plan.sourceOf(0, p.address));
  if (cls) {
    const classSpecs = RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode);
    const someProved = classSpecs.some((s) => verdicts.get(s.mnemonic) === 'proved');
    if (someProved) {
      for (const source of sources) {
        for (const { map, row } of source.mapRows ?? []) {
          const served = classSpecs.filter((s) => rowServes(map, row, s));
          if (served.includes(spec) && served.every((s) => verdicts.get(s.mnemonic) === 'refuted')) return { span: row.span, what: `row of decode map \`${map.name}\`` };
        }
      }
    }
  }
  const writer = cx.differences.find((d) => d.writer)?.writer;
  if (writer) {
    for (let i = sources.length - 1; i >= 0; i--) {
      if (cx.path[i].step !== writer.step) continue;
      const action = sources[i].alt?.actions.find((a) => a.signal === writer.strobe);
      if (action) return { span: action.span, what: `strobe \`${writer.strobe}\`` };
    }
  }
  for (let i = sources.length - 1; i >= 0; i--) {
    const alt = sources[i].alt;
    if (alt) return { span: alt.span, what: `step ${alt.step}` };
  }
  return cls ? { span: cls.symbol.span, what: `class \`${cls.name}\`` } : { span: { start: 0, end: 0 }, what: 'table' };
}

function stepRelations(plan: SimPlan, cx: Counterexample): RelatedInfo[] {
  const related: RelatedInfo[] = [];
  cx.path.slice(0, MAX_RELATED_STEPS).forEach((p, i) => {
    const alt = plan.sourceOf(0, p.address).alt;
    if (alt) related.push({ span: alt.span, message: `ran ${cx.steps[i]}` });
  });
  if (cx.path.length > MAX_RELATED_STEPS) related.push({ span: related[related.length - 1]?.span ?? { start: 0, end: 0 }, message: `... and ${cx.path.length - MAX_RELATED_STEPS} more step(s)` });
  return related;
}

const list = (names: string[]) => (names.length === 1 ? names[0] : `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`);

export function proofDiagnostics(machine: Machine, plan: SimPlan, results: readonly InstructionResult[]): Diagnostic[] {
  const verdicts = new Map(results.map((r) => [r.mnemonic, r.verdict.kind]));
  const groups = new Map<string, { blame: Blame; specs: InstructionSpec[]; first: Counterexample; description: string }>();
  const diagnostics: Diagnostic[] = [];
  for (const r of results) {
    const spec = RV32I_INSTRUCTIONS.find((s) => s.mnemonic === r.mnemonic)!;
    const v = r.verdict;
    if (v.kind === 'unknown') {
      const cls = classOf(machine, spec);
      diagnostics.push({ code: 'proof-incomplete', severity: 'warning', span: cls?.symbol.span ?? { start: 0, end: 0 }, message: `${r.mnemonic} could not be proved or refuted: ${v.reason}` });
      continue;
    }
    if (v.kind !== 'refuted') continue;
    const blame = blameOf(machine, plan, spec, v.counterexample, verdicts);
    const key = `${blame.span.start}:${blame.span.end}`;
    const group = groups.get(key);
    if (group) group.specs.push(spec);
    else groups.set(key, { blame, specs: [spec], first: v.counterexample, description: v.description });
  }
  for (const g of groups.values()) {
    const names = g.specs.map((s) => s.mnemonic);
    const cls = classOf(machine, g.specs[0]);
    const related = stepRelations(plan, g.first);
    if (cls) related.push({ span: cls.symbol.span, message: `class \`${cls.name}\` decodes ${names[0]}` });
    const lines = describeCounterexample(g.first, { steps: false }).map((l) => l.trim());
    diagnostics.push({
      code: 'proof-refuted',
      severity: 'error',
      span: g.blame.span,
      message: `${list(names)} ${names.length === 1 ? 'does' : 'do'} not do what RV32I specifies; the proof implicates this ${g.blame.what}. Counterexample for ${names[0]} (${g.description}): ${lines.join("; ")}`,
      related,
    });
  }
  return diagnostics;
}

/** The note that no proof ran: the machine is outside what the prover follows (not a fault of the table, but nothing is proved). */
export function unavailableDiagnostic(machine: Machine, why: string, severity: 'warning' | 'info'): Diagnostic {
  const store = machine.stores.find((s) => !s.implicit);
  return { code: 'proof-incomplete', severity, span: store?.symbol.span ?? machine.classes[0]?.symbol.span ?? { start: 0, end: 0 }, message: `the table's meaning was not proved: ${why}` };
}
