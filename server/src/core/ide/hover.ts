// Hover text: a short Markdown explanation of what stands under the cursor, with the jargon
// spelled out: strobes (kind, wiring, level, bit, chip and pin, use), fields and their values,
// step lines (the words they put in the ROMs), classes (the RV32I instructions they run),
// buses (who drives and loads them, step by step), parts, flags, maps, phases, stores, and the
// notation's keywords. Pure: it reads an analysis and returns text with the span it explains.
import { proofHoverLines, type DocumentProof } from './proofView';
import { sequencerMove } from '../model/sequencing';
import { type CodeInfo, codeInfo } from '../checks/catalogue';
import { budgetOf, type LineLoad } from '../budget/budget';
import { countsText, cycleCountsOf, groupsOf } from '../flow/cycleCounts';
import type { Analysis } from '../analysis';
import { kindSource } from '../parts/kinds';
import { standardLibraryText } from '../parts/library';
import { RV32I_INSTRUCTIONS, majorOpcodeOf } from '../isa/rv32i';
import { fieldValueMeaning, inputsOf, liveControls, portOfStrobe, portsOf, settingsReadBy } from '../model/partFacts';
import { T } from '../syntax/tokens';
import { flagFacts } from '../model/flagFacts';
import type { Bus, ClassDef, DecodeMap, Field, FieldValue, Flag, Machine, Part, Phase, Store, Strobe, SymbolInfo, WordLayout } from '../model/types';
import type { Span } from '../text/span';
import {
  activeLevelText,
  addressInputTexts,
  binaryDigits,
  chipPinsText,
  keywordTexts,
  partKindLine,
  partKindText,
  partPorts,
  partSettings,
  portInputs,
  strobeKindText,
} from './describe';
import { occurrenceAt, tokenAt } from './lookup';
import { type WrittenAlt, countUses, describeWritten, guardText, usageOf } from './usage';
import { stepWords } from './words';
import { strobeKinds } from '../model/vocabulary';

export interface HoverResult {
  markdown: string;
  span: Span;
}

/** Longest list of names a hover spells out before saying "and N more". */
const maxListed = 12;
/** Longest step-by-step list in a bus hover. */
const maxBusSteps = 24;

export function hover(analysis: Analysis, offset: number, proof?: DocumentProof): HoverResult | undefined {
  const machine = analysis.machine;
  const occurrence = occurrenceAt(analysis, offset);
  if (occurrence) {
    const markdown = occurrence.symbol.kind === 'kind' ? kindHover(analysis, occurrence.symbol) : hoverSymbol(machine, occurrence.symbol, proof);
    if (markdown) return { markdown, span: occurrence.span };
  }
  const step = writtenStepAt(machine, offset);
  if (step) return { markdown: stepHover(machine, step), span: step.alt.numberSpan };
  const token = tokenAt(analysis, offset);
  if (token && token.kind === T.Ident) {
    const markdown = wordHover(analysis, token.text, token.start);
    if (markdown) return { markdown, span: { start: token.start, end: token.end } };
  }
  return undefined;
}

function hoverSymbol(machine: Machine, symbol: SymbolInfo, proof?: DocumentProof): string | undefined {
  switch (symbol.kind) {
    case 'strobe': {
      const signal = machine.signals.get(symbol.name);
      return signal?.type === 'strobe' ? strobeHover(machine, signal) : undefined;
    }
    case 'field': {
      const signal = machine.signals.get(symbol.name);
      return signal?.type === 'field' ? fieldHover(machine, signal) : undefined;
    }
    case 'value': {
      const [fieldName] = symbol.key.split('/');
      const field = machine.signals.get(fieldName);
      const value = field?.type === 'field' ? field.values.get(symbol.name) : undefined;
      return field?.type === 'field' && value ? valueHover(machine, field, value) : undefined;
    }
    case 'bus': {
      const bus = machine.buses.get(symbol.name);
      return bus ? busHover(machine, bus) : undefined;
    }
    case 'part': {
      const part = machine.parts.get(symbol.name);
      return part ? partHover(machine, part) : undefined;
    }
    case 'flag': {
      const flag = machine.flags.get(symbol.name);
      return flag ? flagHover(machine, flag) : undefined;
    }
    case 'map': {
      const map = machine.maps.get(symbol.name);
      return map ? mapHover(machine, map) : undefined;
    }
    case 'phase': {
      const phase = machine.phases.get(symbol.name);
      return phase ? phaseHover(machine, phase) : undefined;
    }
    case 'class': {
      const cls = machine.classes.find((c) => c.symbol === symbol);
      return cls ? classHover(machine, cls, proof) : undefined;
    }
    case 'store': {
      const store = machine.stores.find((s) => s.symbol === symbol);
      return store ? storeHover(store) : undefined;
    }
    default:
      return undefined;
  }
}

function listNames(names: readonly string[], code = true): string {
  const shown = names.slice(0, maxListed).map((n) => (code ? `\`${n}\`` : n));
  const more = names.length - shown.length;
  return shown.join(', ') + (more > 0 ? ` and ${more} more` : '');
}

function plural(n: number, word: string, many = word + 's'): string {
  return `${n} ${n === 1 ? word : many}`;
}

function header(kind: string, name: string, description: string | undefined): string {
  return `**${kind} \`${name}\`**` + (description ? ` — ${description}` : '');
}

/** Where a signal sits: its store, bits, and the chip pins they land on. */
function placementOf(machine: Machine, name: string): { store: Store; layout: WordLayout; lo: number; hi: number } | undefined {
  for (const store of machine.stores) {
    const placement = store.word?.placements.find((p) => p.signal === name);
    if (placement) return { store, layout: store.word!, lo: placement.lo, hi: placement.hi };
  }
  return undefined;
}

function placementLine(machine: Machine, name: string): string {
  const at = placementOf(machine, name);
  if (!at) return '- **bit** not placed in any control word: no ROM produces it (see unplaced-signal)';
  const chip = at.layout.chip ? ` (${at.layout.chip.name}, ${at.layout.chip.depth} × ${at.layout.chip.width})` : '';
  const label = at.lo === at.hi ? `- **bit** ${at.lo}` : `- **bits** ${at.lo}..${at.hi}`;
  return `${label} of the word of store \`${at.store.name}\` → **${chipPinsText(at.layout, at.lo, at.hi)}**${chip}`;
}

function strobeHover(machine: Machine, strobe: Strobe): string {
  const lines = [header('strobe', strobe.name, strobe.description ?? 'no description'), ''];
  lines.push(`- **kind** \`${strobe.kind}\` — ${strobeKindText(strobe.kind)}`);
  const part = strobe.part ? machine.parts.get(strobe.part) : undefined;
  if (strobe.kind === 'end' || strobe.kind === 'trap') {
    lines.push(`- **part** none — an \`${strobe.kind}\` strobe acts on the sequencer, not on a part`);
    lines.push('- **bus** none');
  } else {
    lines.push(part ? `- **part** \`${part.name}\`, kind ${partKindLine(machine, part)}` : '- **part** not wired (see the wiring error)');
    const bus = strobe.bus ? machine.buses.get(strobe.bus) : undefined;
    const others = strobe.kind === 'clock' || strobe.kind === 'write' ? 'the others are not loaded' : 'the others are left to other drivers';
    const lineText = strobe.lines ? (strobe.lines.hi === strobe.lines.lo ? `line ${strobe.lines.hi} of ${bus?.width} (${others})` : `lines ${strobe.lines.hi}..${strobe.lines.lo} of ${bus?.width} (${others})`) : `${bus?.width} lines`;
    if (bus) lines.push(`- **bus** \`${bus.name}\` — ${lineText}, ${bus.keeper ? 'with keepers (holds its last value when undriven)' : 'no keepers (floats when undriven)'}`);
    else lines.push(`- **bus** none — a \`${strobe.kind}\` strobe ${strobe.kind === 'count' ? 'acts on its counter only' : 'acts on its part only'}`);
  }
  lines.push(`- **level** ${activeLevelText(strobe)}`);
  lines.push(placementLine(machine, strobe.name));
  lines.push(useLine(machine, strobe.name, 'asserted'));
  lines.push(`- **effect** ${strobeEffect(machine, strobe, part)}`);
  const load = budgetOf(machine).strobes.find((r) => r.name === strobe.name);
  if (load) lines.push(`- **load** ${loadText(load)}`);
  return lines.join('\n');
}

/** One line on a control or bus line's load against its driver's rating, from the entered figures. */
function loadText(row: LineLoad): string {
  const reaches = `${plural(row.inputs, 'input')}${row.ledMa ? ` and an LED (${row.ledMa.toFixed(2)} mA)` : ''}`;
  if (row.loadMa === undefined) return `reaches ${reaches}; load unknown (missing figures: ${row.missing.join('; ')})`;
  const driver = row.kind === 'strobe' ? `the outputs of ${row.driver} are` : `\`${row.driver}\` is`;
  const rating = row.driveMa === undefined ? 'driver rating not given (drive_ma)' : `${driver} rated ${row.driveMa} mA, margin ${row.marginMa! >= 0 ? '' : '**'}${row.marginMa!.toFixed(2)} mA${row.marginMa! >= 0 ? '' : ' (overloaded)**'}`;
  return `reaches ${reaches}: ${row.loadMa.toFixed(2)} mA; ${rating} — an estimate from the figures in the table`;
}

function useLine(machine: Machine, signal: string, verb: string): string {
  const uses = usageOf(machine).bySignal.get(signal) ?? [];
  if (uses.length === 0) return `- **used** never ${verb} by any step (see unused-name)`;
  const { steps, classes, viaPhases } = countUses(uses);
  const phases = viaPhases ? ` (${viaPhases} through phases)` : '';
  return `- **used** ${verb} in ${plural(steps, 'step')} of ${plural(classes.length, 'class', 'classes')}${phases}: ${listNames(classes.map((c) => c.name), false)}`;
}

/** What a strobe makes its part do, from the port of the part's definition it uses. */
function strobeEffect(machine: Machine, strobe: Strobe, part: Part | undefined): string {
  if (strobe.kind === 'end') return 'after this step the step counter returns to 0 and the next instruction starts';
  if (strobe.kind === 'trap') return 'stops the clock and hands the instruction to the environment (the monitor, or the simulator\'s ecall/ebreak service)';
  const port = part ? portOfStrobe(machine, part, strobe) : undefined;
  if (!part || (!port && strobe.register === undefined)) return `\`${strobe.part}\` ${strobe.kind === 'enable' || strobe.kind === 'read' ? `drives bus \`${strobe.bus}\`` : 'acts'} (its port is not known)`;
  const who = strobe.register !== undefined ? `register ${strobe.register} of \`${part.name}\`` : `\`${part.name}${strobe.port ? `.${port!.name}` : ''}\``;
  const what = port?.description ? ` (${port.description})` : '';
  const inputs = port ? portInputs(machine, part, port) : [];
  const settings = port ? settingsReadBy(machine, part, port) : [];
  const reading = [...(inputs.length ? [`reading ${inputs.join(', ')}`] : []), ...settings].join('; ');
  const tail = reading ? `; ${reading}` : '';
  switch (strobe.kind) {
    case 'enable':
    case 'read':
      return `${who}${what} drives bus \`${strobe.bus}\` for the whole step${tail}`;
    case 'write':
      return `bus \`${strobe.bus}\` is stored into ${who}${what} at the step's closing edge${tail}`;
    case 'clock':
      if (!strobe.bus) {
        const defined = part;
        const targets = new Set(port?.edge?.assigns.map((a) => a.target) ?? []);
        const flags = defined.def.flags.filter((f) => [...targets].some((t) => new RegExp(`\\b${t}\\b`).test(f.expr.text))).map((f) => `\`${defined.flagNames.get(f.name) ?? f.name}\``);
        return `${who}${what} latches ${flags.length ? `flag ${flags.join(', ')}` : [...targets].map((t) => `\`${t}\``).join(', ')} at the closing edge${tail}`;
      }
      return `${who}${what} loads bus \`${strobe.bus}\` at the step's closing edge${tail}`;
    case 'count':
      return `${who}${what} acts at the closing edge${tail}`;
  }
}

function fieldHover(machine: Machine, field: Field): string {
  const target = field.target ? machine.parts.get(field.target) : undefined;
  const lines = [header('field', field.name, field.description ?? 'no description'), ''];
  // A number field is read by the parts whose `field` inputs are wired to it (a sequencer's jump target).
  const readers = field.numeric ? [...machine.parts.values()].flatMap((p) => [...p.inputs].filter(([, src]) => src.from === 'field' && src.name === field.name).map(([input]) => `\`${p.name}\` (input \`${input}\`)`)) : [];
  const role = target ? `, controls part \`${target.name}\`, kind ${partKindLine(machine, target)}` : field.numeric ? `, a number field (a step sets it with a number, 0 to ${2 ** field.width - 1}), read by ${readers.length ? readers.join(', ') : 'no part'}` : ', controls no part';
  lines.push(`- **width** ${plural(field.width, 'bit')}` + role);
  lines.push(placementLine(machine, field.name));
  const idle = [...field.values.values()].find((v) => v.code === field.idle);
  lines.push(`- **idle** ${idle ? `\`${idle.name}\` ` : ''}(code ${field.idle}): the value where no step sets the field`);
  lines.push(useLine(machine, field.name, 'set'));
  const maps = [...machine.maps.values()].filter((m) => m.output === field.name).map((m) => m.name);
  if (maps.length) lines.push(`- **maps** ${listNames(maps)}`);
  lines.push('', '| value | code | binary | meaning |', '|---|---|---|---|');
  for (const value of field.values.values()) {
    lines.push(`| \`${value.name}\` | ${value.code} | ${binaryDigits(value.code, field.width)} | ${fieldValueMeaning(machine, field.name, value.name) ?? ''} |`);
  }
  return lines.join('\n');
}

function valueHover(machine: Machine, field: Field, value: FieldValue): string {
  const target = field.target ? machine.parts.get(field.target) : undefined;
  const meaning = fieldValueMeaning(machine, field.name, value.name);
  const lines = [`**value \`${value.name}\`** of field \`${field.name}\` — code **${value.code}** = 0b${binaryDigits(value.code, field.width)} (${plural(field.width, 'bit')})`];
  if (meaning) lines.push('', `${target ? `\`${target.name}\`: ` : ''}${meaning}`);
  if (value.code === field.idle) lines.push('', 'This is the field\'s idle value: the code where no step sets the field.');
  return lines.join('\n');
}

function busHover(machine: Machine, bus: Bus): string {
  const lines = [header('bus', bus.name, bus.description), ''];
  lines.push(`- **width** ${bus.width} lines`);
  lines.push(
    bus.keeper
      ? '- **keeper** yes: when nothing drives the bus its lines keep the last driven value (a load then stores a stale value: a warning)'
      : '- **keeper** no: when nothing drives the bus its lines float (a load then stores noise: an error)',
  );
  const strobes = [...machine.signals.values()].filter((s): s is Strobe => s.type === 'strobe' && s.bus === bus.name);
  const drivers = strobes.filter((s) => s.kind === 'enable' || s.kind === 'read');
  const loads = strobes.filter((s) => s.kind === 'clock' || s.kind === 'write');
  const lineText = (s: Strobe) => (s.lines ? (s.lines.hi === s.lines.lo ? ` line ${s.lines.hi}` : ` lines ${s.lines.hi}..${s.lines.lo}`) : '');
  const wired = (s: Strobe) => `\`${s.name}\` (${s.part}${s.port ? `.${s.port}` : ''}${s.lines ? `,${lineText(s)}` : ''})`;
  lines.push(`- **driven by** ${drivers.length ? drivers.map(wired).join(', ') : 'no strobe'}`);
  const connections = machine.connections.filter((c) => c.bus === bus.name);
  if (connections.length) lines.push(`- **always driven by** ${connections.map((c) => `\`${c.part}${c.port ? `.${c.port}` : ''}\`${lineText(c)}`).join(', ')} (\`connect\`: in every step)`);
  lines.push(`- **loaded by** ${loads.length ? loads.map(wired).join(', ') : 'no strobe'}`);
  // Parts whose inputs are wired to the bus, with the inputs it feeds.
  const readers = [...machine.parts.values()].flatMap((p) => {
    const fed = inputsOf(machine, p).filter((i) => i.source.from === 'bus' && i.source.name === bus.name);
    return fed.length ? [`\`${p.name}\` (input ${fed.map((i) => `\`${i.name}\``).join(', ')})`] : [];
  });
  if (readers.length) lines.push(`- **read by** ${readers.join(', ')}`);
  const driverNames = new Set(drivers.map((s) => s.name));
  const loadNames = new Set(loads.map((s) => s.name));
  const active: string[] = [];
  let total = 0;
  for (const w of usageOf(machine).written) {
    const d = w.alt.actions.filter((a) => driverNames.has(a.signal)).map((a) => a.signal);
    const l = w.alt.actions.filter((a) => loadNames.has(a.signal)).map((a) => a.signal);
    if (d.length === 0 && l.length === 0) continue;
    total++;
    if (active.length >= maxBusSteps) continue;
    const guard = guardText(w.alt);
    // Who drives which lines: a strobe on some lines says which.
    const named = (n: string) => {
      const strobe = machine.signals.get(n) as Strobe;
      return `\`${n}\`${lineText(strobe)}`;
    };
    active.push(`- ${describeWritten(w)}${guard ? ` (${guard})` : ''}: ${d.length ? `driven by ${d.map(named).join(', ')}` : 'not driven'}${l.length ? `; loaded by ${l.map(named).join(', ')}` : ''}`);
  }
  const lineLoads = budgetOf(machine).buses.filter((r) => r.name === bus.name);
  for (const row of lineLoads) lines.push(`- **load per line** driven by \`${row.driver}\`: ${loadText(row)}`);
  lines.push('', total ? `**Step by step** (${plural(total, 'step line')}${total > active.length ? `, first ${active.length} shown` : ''}):` : '**Step by step**: no step drives or loads this bus.');
  lines.push(...active);
  return lines.join('\n');
}

function partHover(machine: Machine, part: Part): string {
  const lines = [header('part', part.name, part.description), ''];
  lines.push(`- **kind** ${partKindLine(machine, part)}`);
  const settings = partSettings(machine, part);
  if (settings.length) lines.push(`- **settings** ${settings.join('; ')}`);
  lines.push(`- **ports** ${partPorts(machine, part).join('; ')}`);
  const strobes = [...machine.signals.values()].filter((s): s is Strobe => s.type === 'strobe' && s.part === part.name);
  const busLines = (s: Strobe) => (s.lines ? `[${s.lines.hi}:${s.lines.lo}]` : '');
  const wiring = (s: Strobe) => {
    // The port each strobe uses, written or not: the part's hover is about its ports.
    const port = s.kindPort ? `.${s.kindPort}` : '';
    if (s.kind === 'enable' || s.kind === 'read') return `\`${s.name}\` ${s.kind} ${part.name}${port} → \`${s.bus}${busLines(s)}\``;
    if (s.kind === 'clock' || s.kind === 'write') return s.bus ? `\`${s.name}\` ${s.kind} \`${s.bus}\` → ${part.name}${port}` : `\`${s.name}\` ${s.kind}`;
    return `\`${s.name}\` ${s.kind}`;
  };
  lines.push(`- **strobes** ${strobes.length ? strobes.map(wiring).join('; ') : 'none wired to it'}`);
  // The controls its settings leave in use and no field drives yet: what a field may choose.
  const defined = part;
  for (const control of liveControls(machine, part)) {
    if (defined.controlFields.has(control.name)) continue;
    const target = defined.def.controls.length === 1 ? part.name : `${part.name}.${control.name}`;
    lines.push(`- **values** a field \`-> ${target}\` may use ${control.values.map((v) => `\`${v}\``).join(', ')}`);
  }
  return lines.join('\n');
}

function flagHover(machine: Machine, flag: Flag): string {
  const part = machine.parts.get(flag.part);
  const lines = [`**flag \`${flag.name}\`** — one bit of part \`${flag.part}\`` + (part ? flagSource(machine, part, flag.name) : ''), ''];
  const lines2: string[] = [];
  for (const store of machine.stores) {
    const source = store.address?.sources.find((s) => s.input.kind === 'flag' && s.input.name === flag.name);
    if (source) lines2.push(`- **address** line ${source.lo} of store \`${store.name}\``);
  }
  if (lines2.length === 0) lines2.push('- **address** on no store\'s address lines: the ROM cannot react to it (see not-addressable)');
  const tested = usageOf(machine).written.filter((w) => w.alt.guard?.some((g) => g.input.kind === 'flag' && g.input.name === flag.name));
  lines2.push(`- **tested** by ${plural(tested.length, 'guard')}` + (tested.length ? `: ${listNames(tested.map(describeWritten), false)}` : ''));
  const fact = flagFacts(machine).get(flag.name);
  if (fact?.timing === 'combinational') {
    const reads = [...fact.buses.map((b) => `bus \`${b}\``), ...fact.controls.map((c) => `control \`${c}\`${fact.part.controlFields.has(c) ? ` (field \`${fact.part.controlFields.get(c)}\`)` : ''}`)];
    lines2.push(`- **combinational**: it reads ${reads.join(', ')} and settles within the step from what the step's word drives; the address lines see it in the same step, so a word it selects is read again (the word settles twice: see the timing budget, and \`address-loop\`).`);
  } else lines2.push('- **latched**: it reads only what changes at a closing edge, so it changes there and the address lines see it from the next step on.');
  return [...lines, ...lines2].join('\n');
}

/** How a part's flag is made: its definition's flag line and the edge ports that set what it reads. */
function flagSource(machine: Machine, part: Part, flagName: string): string {
  const defined = part;
  const flag = defined.def.flags.find((f) => (defined.flagNames.get(f.name) ?? f.name) === flagName);
  if (!flag) return '';
  const setters = portsOf(machine, part).filter((p) => p.edge?.assigns.some((a) => new RegExp(`\\b${a.target}\\b`).test(flag.expr.text)));
  const inputs = setters.flatMap((p) => portInputs(machine, part, p));
  return `, kind ${partKindLine(machine, part)}: \`${flag.name} = ${flag.expr.text}\`` + (setters.length ? `, latched by ${setters.map((p) => `\`${part.name}.${p.name}\``).join(', ')} at the closing edge${inputs.length ? ` (reading ${[...new Set(inputs)].join(', ')})` : ''}` : '');
}

function mapHover(machine: Machine, map: DecodeMap): string {
  const lines = [header('map', map.name, map.description), ''];
  lines.push(`- **inputs** ${map.inputs.map((i) => `\`${i.label}\` (${plural(i.width, 'bit')})`).join(', ') || 'none'}`);
  lines.push(`- **sets** ${map.output ? `field \`${map.output}\`` : 'no field'}`);
  lines.push(`- **rows** ${map.rows.length}; inputs no row matches are not decoded: their addresses hold the fill word`);
  const uses = usageOf(machine).byMap.get(map.name) ?? [];
  const { steps, classes } = countUses(uses);
  lines.push(`- **used** in ${plural(steps, 'step')} of ${plural(classes.length, 'class', 'classes')}${classes.length ? `: ${listNames(classes.map((c) => c.name), false)}` : ''}`);
  return lines.join('\n');
}

function phaseHover(machine: Machine, phase: Phase): string {
  const lines = [header('phase', phase.name, phase.description), ''];
  const numbers = [...new Set(phase.steps.map((s) => s.step))];
  lines.push(`- **steps** ${numbers.length} (${plural(phase.steps.length, 'line')}), numbered from 0 within the phase`);
  const users = usageOf(machine).phaseUsers.get(phase.name) ?? [];
  lines.push(`- **used by** ${users.length ? `${plural(users.length, 'class', 'classes')}: ${listNames(users.map((c) => c.name), false)}` : 'no class (see unused-name)'}`);
  return lines.join('\n');
}

function classHover(machine: Machine, cls: ClassDef, proof?: DocumentProof): string {
  const lines = [header('class', cls.name, cls.description), ''];
  const major = cls.opcode !== undefined ? majorOpcodeOf(cls.opcode) : undefined;
  if (cls.opcode === undefined) lines.push('- **opcode** none: no instruction selects this class');
  else lines.push(`- **opcode** ${binaryDigits(cls.opcode, 7)}` + (major ? ` — RV32I ${major.name} (${major.format} format)` : ' — not an RV32I major opcode (custom opcode space)'));
  const instructions = RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode).map((s) => s.mnemonic);
  lines.push(`- **instructions** ${instructions.length ? `${instructions.join(', ')} (${instructions.length})` : 'no RV32I instruction'}`);
  const numbers = [...cls.steps.keys()].sort((a, b) => a - b);
  const nLines = [...cls.steps.values()].reduce((n, alts) => n + alts.length, 0);
  lines.push(`- **steps** ${numbers.length}${numbers.length ? ` (${numbers[0]}..${numbers[numbers.length - 1]})` : ''}, ${plural(nLines, 'alternative')}`);
  const phases = new Map<string, number>();
  for (const alts of cls.steps.values()) for (const alt of alts) if (alt.phase && !phases.has(alt.phase.name)) phases.set(alt.phase.name, alt.step);
  if (phases.size) lines.push(`- **phases** ${[...phases].map(([name, at]) => `\`${name}\` from step ${at}`).join(', ')}`);
  lines.push(...cyclesLines(machine, cls));
  lines.push(...proofHoverLines(cls, proof));
  return lines.join('\n');
}

/** Steps to \`end\` per instruction, from the class's control flow (fetch included). */
function cyclesLines(machine: Machine, cls: ClassDef): string[] {
  const cycles = cycleCountsOf(machine)[machine.classes.indexOf(cls)];
  if (!cycles) return [];
  if (cycles.tooManyInputs) return ['- **steps to end** not counted: its guards test more inputs than a walk enumerates'];
  const lines = [`- **steps to end** ${cycles.min === undefined ? 'none: no path reaches \`end\`' : `min ${cycles.min}, max ${cycles.loops ? 'unbounded (a loop)' : cycles.max}`} (fetch included)`];
  // Instructions with the same counts share a line.
  for (const { names, cycles: i } of groupsOf(cycles)) {
    if (!i.mnemonic) continue;
    // A loop's formula says its range too: `4 + shamt (4 to 35)`.
    const range = i.loopCount && i.loopCount.operand.kind !== 'constant' && i.loopCount.least !== i.loopCount.most ? ` (${i.loopCount.least} to ${i.loopCount.most})` : '';
    lines.push(`  - ${names.join(', ')}: ${i.min === undefined ? 'does not end' : i.loopSteps ? `${countsText(i)}${range}` : `min ${i.min}, max ${i.max}`}${!i.loopSteps && ((i.counts?.length ?? 0) > 1 || i.doesNotEnd) ? ` (${countsText(i)})` : ''}`);
  }
  return lines;
}

function storeHover(store: Store): string {
  const lines = [header('store', store.name, store.description), ''];
  if (store.word) {
    const chips = store.word.chipWidths.map((w, i) => `chip ${i}: ${w} bits`).join(', ');
    lines.push(`- **word** ${store.word.width} bits over ${plural(store.word.chipWidths.length, 'chip')} (${chips})${store.word.chip ? `, ${store.word.chip.name}` : ''}; unused bits at ${store.word.unusedLevel}`);
  } else lines.push('- **word** no word layout yet');
  if (store.address) lines.push(`- **address** ${store.address.width} lines (${2 ** store.address.width} words): ${store.address.sources.map((s) => `${s.label} ${s.lo === s.hi ? s.lo : `${s.lo}..${s.hi}`}`).join(', ')}`);
  else lines.push('- **address** no address layout yet');
  return lines.join('\n');
}

/** The step line whose number is under the cursor, where it is written. */
function writtenStepAt(machine: Machine, offset: number): WrittenAlt | undefined {
  for (const w of usageOf(machine).written) {
    if (offset >= w.alt.numberSpan.start && offset <= w.alt.numberSpan.end) return w;
    if (w.alt.span.start > offset) break;
  }
  return undefined;
}

function stepHover(machine: Machine, w: WrittenAlt): string {
  const alt = w.alt;
  const guard = guardText(alt);
  const lines = [
    `**${describeWritten(w)}**` +
      (guard === 'else' ? ' — `else`: applies when no other line of this step does' : guard ? ` — applies when \`${guard}\`` : ' — always applies'),
    '',
  ];
  if (w.owner.kind === 'phase') {
    const users = usageOf(machine).phaseUsers.get(w.owner.phase.name) ?? [];
    lines.push(`- **phase** used by ${plural(users.length, 'class', 'classes')}${users.length ? `: ${listNames(users.map((c) => c.name), false)}` : ''}`);
  }
  const strobes = alt.actions.filter((a) => !a.value).map((a) => a.signal);
  lines.push(`- **asserts** ${strobes.length ? strobes.map((s) => `\`${s}\``).join(', ') : 'no strobe'}`);
  const sets = alt.actions.filter((a) => a.value).map((a) => (a.value!.kind === 'code' ? `\`${a.signal}\`=\`${a.value!.name}\` (${a.value!.code})` : `\`${a.signal}\` from map \`${a.value!.map}\``));
  if (sets.length) lines.push(`- **sets** ${sets.join(', ')}`);
  const unplaced = alt.actions.filter((a) => !machine.stores.some((s) => s.word?.placements.some((p) => p.signal === a.signal))).map((a) => a.signal);
  if (unplaced.length) lines.push(`- **not in any word** ${unplaced.map((s) => `\`${s}\``).join(', ')} (no bit placed)`);
  for (const { store, variants, truncated } of stepWords(machine, alt)) {
    const layout = store.word!;
    const chipHeads = layout.chipWidths.map((_, i) => `chip ${i}`);
    if (variants.length === 1 && variants[0].rows.length === 0) {
      lines.push(`- **word** of store \`${store.name}\`, hex per chip (chip 0 holds bits 0..${layout.chipWidths[0] - 1}): ${variants[0].hex.map((h, i) => `${chipHeads[i]} \`0x${h}\``).join(', ')}`);
      continue;
    }
    const maps = [...new Set(variants[0].rows.map((r) => r.map))];
    const inputs = maps.flatMap((m) => m.inputs.map((i) => i.label));
    lines.push(`- **word** of store \`${store.name}\` depends on ${inputs.map((i) => `\`${i}\``).join(', ')} through ${maps.map((m) => `map \`${m.name}\``).join(', ')}: one word per row, hex per chip${truncated ? ` (first ${variants.length} combinations)` : ''}`);
    lines.push('', `| ${maps.map((m) => m.inputs.map((i) => i.label).join(' ')).join(' | ')} | ${maps.map((m) => m.output ?? 'value').join(' | ')} | ${chipHeads.join(' | ')} |`);
    lines.push(`|${'---|'.repeat(maps.length * 2 + chipHeads.length)}`);
    for (const v of variants) {
      lines.push(`| ${v.rows.map((r) => r.row.patterns.join(' ')).join(' | ')} | ${v.rows.map((r) => r.row.value).join(' | ')} | ${v.hex.map((h) => `0x${h}`).join(' | ')} |`);
    }
    lines.push('');
  }
  return lines.join('\n').trimEnd();
}

/**
 * A part kind: what it is, its settings and ports, and its definition as written — from the
 * standard library (read-only; go to definition opens it) or from this table.
 */
function kindHover(analysis: Analysis, symbol: SymbolInfo): string | undefined {
  const kind = analysis.machine.kinds.get(symbol.name);
  if (!kind) return undefined;
  const lines = [header('part kind', kind.name, kind.description), ''];
  lines.push(kind.origin === 'library' ? '- **defined in** the standard library (read-only; go to definition opens it)' : '- **defined in** this table');
  if (kind.settings.length) lines.push(`- **settings** ${kind.settings.map((s) => `\`${s.name}=\`` + (s.type === 'choice' ? ` ${s.choices.join(' | ')}` : '') + (s.default !== undefined ? ` (default ${s.default})` : ' (required)')).join(', ')}`);
  const ports = [...kind.drives.map((d) => `\`${d.name}\` (drive)`), ...kind.edges.map((e) => `\`${e.name}\` (closing edge${e.width ? ', loads a bus' : ''})`), ...kind.flags.map((f) => `\`${f.name}\` (flag)`)];
  if (ports.length) lines.push(`- **ports** ${ports.join(', ')}`);
  for (const control of kind.controls) lines.push(`- **control** \`${control.name}\`: a field \`-> PART\` may use ${control.values.map((v) => `\`${v}\``).join(', ')}`);
  const source = kind.origin === 'library' ? standardLibraryText : analysis.text;
  lines.push('', '```phasewright', kindSource(kind, source), '```');
  return lines.join('\n');
}

/** Keywords, kinds and address inputs: what they mean where they stand. */
function wordHover(analysis: Analysis, word: string, start: number): string | undefined {
  const machine = analysis.machine;
  const part = machine.parts.get(word.split('.')[0]);
  if (machine.kinds.has(word) && isKindPosition(analysis, start, 'part')) return `**part kind \`${word}\`** — ${partKindText(machine, word)}`;
  if ((strobeKinds as string[]).includes(word) && isKindPosition(analysis, start, 'strobe')) return `**strobe kind \`${word}\`** — ${strobeKindText(word as Strobe['kind'])}`;
  if (word in addressInputTexts && !machine.flags.has(word)) return `**address input \`${word}\`** — ${addressInputTexts[word]}`;
  if (part && word.includes('.')) {
    const port = word.slice(word.indexOf('.') + 1);
    const description = partPorts(machine, part).find((p) => p.startsWith(`\`${port}\`:`));
    if (description) return `**port \`${port}\` of \`${part.name}\`** — ${description.slice(port.length + 4)}`;
  }
  const sugar = sequencerSugarHover(machine, word, start);
  if (sugar) return sugar;
  if (word in keywordTexts) return `**\`${word}\`** — ${keywordTexts[word]}`;
  const accepted = acceptedCodeAt(analysis, start);
  if (accepted) return `**diagnostic \`${accepted.code}\`** (accepted on this line) — ${accepted.title}. ${accepted.explanation}`;
  return undefined;
}

/** The step sugar of a sequencer machine (`goto 4`, `wait`, `end`, `call 8`, `return`) at `start`: the fields it sets and where the sequencer goes. */
function sequencerSugarHover(machine: Machine, word: string, start: number): string | undefined {
  if (!machine.sequencer || !['goto', 'wait', 'end', 'call', 'return'].includes(word)) return undefined;
  for (const w of usageOf(machine).written) {
    if (w.alt.span.start > start) break;
    if (start >= w.alt.span.end) continue;
    const set = w.alt.actions.filter((a) => a.span.start === start && a.value?.kind === 'code');
    if (!set.length) continue;
    const move = sequencerMove(machine, w.alt, w.alt.step);
    const where =
      move?.returnOf !== undefined ? 'goes to the step the return register holds (the one the open call kept)'
      : move?.to === undefined ? 'goes to a step the word does not fix'
      : move.calls ? `goes to step ${move.to} and keeps step ${move.context.values.find((v) => v !== undefined) ?? '?'} in the return register, to come back to`
      : move.to === 0 ? 'goes back to step 0: the instruction ends'
      : move.to === w.alt.step ? 'stays at this step (the same word runs again)'
      : `goes to step ${move.to}`;
    const fields = set.map((a) => `\`${a.signal}=${a.value!.kind === 'code' ? a.value!.name : ''}\``).join(', ');
    return `**\`${word}\`** — step sugar: sets ${fields}; at the closing edge the sequencer \`${machine.sequencer}\` ${where}.`;
  }
  return undefined;
}

/** The catalogue entry of the code an `accept` clause names at `start`, if one does. */
function acceptedCodeAt(analysis: Analysis, start: number): CodeInfo | undefined {
  const decl = analysis.parse.tree.decls.find((d) => d.span.start <= start && start < d.span.end);
  if (decl?.kind !== 'strobe') return undefined;
  const code = decl.accept?.codes.find((c) => c.span.start === start);
  return code ? codeInfo(code.text) : undefined;
}

/** True when the word at `start` is the kind after `part NAME` or `strobe NAME`. */
function isKindPosition(analysis: Analysis, start: number, keyword: 'part' | 'strobe'): boolean {
  const decl = analysis.parse.tree.decls.find((d) => d.span.start <= start && start < d.span.end);
  if (!decl) return false;
  if (keyword === 'part' && decl.kind === 'part') return decl.partKind?.span.start === start;
  if (keyword === 'strobe' && decl.kind === 'strobe') return decl.strobeKind?.span.start === start;
  return false;
}
