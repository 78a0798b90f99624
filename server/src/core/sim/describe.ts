// Reading the simulator's step log back as people and the editor need it: for each step of the
// current instruction, the store addresses and what their lines carry, the strobes the burned
// word asserts and its field values, the bus values before the closing edge, and the table's
// step line behind the word (or "fill word" where no step wrote it). The divergence and fault
// reports (lockstep.ts) are built from these records; the text is plain, one fact per line.
//
// Deliberately not here: deciding what diverged (lockstep.ts) or running anything.
import { busContentionCaution } from '../checks/catalogue';
import { describeAddress } from '../encode/listing';
import { disassemble } from '../isa/disasm';
import type { StepAlt } from '../model/types';
import type { Span } from '../text/span';
import type { LineIndex } from '../text/lineIndex';
import type { BusSimulator, MachineFault, SimStop } from './simulator';

export function hex(value: number, digits = 8): string {
  return `0x${(value >>> 0).toString(16).padStart(digits, '0')}`;
}

/** A bus in one step: its value, and whether something drove it, its keepers held it, or it floated. */
export interface BusReading {
  bus: string;
  /** Undefined when the value is not known (floating, or driven from undefined inputs). */
  value?: number;
  state: 'driven' | 'held' | 'floating';
}

export interface StepRecord {
  /** The step counter's value. */
  step: number;
  /** Each store's address and what its lines carry (`step=2 taken=0 funct3=000 ...`). */
  addresses: { store: string; address: number; lines: string }[];
  uop: number;
  /** Strobes the word asserts, by name. */
  asserted: string[];
  /** Fields the table sets in this step (or that differ from their idle code), with value names. */
  fields: { field: string; code: number; value?: string }[];
  /** Bus values before the closing edge, when they were recorded. */
  buses?: BusReading[];
  /** The class whose step wrote the word, the step line, and a label such as `class LOAD step 3`. */
  className?: string;
  source?: Span;
  sourceLabel: string;
  /** True when the word is the fill word (no step of the table covers this address). */
  fill: boolean;
}

function guardText(alt: StepAlt): string {
  if (alt.isElse) return ' else';
  if (!alt.guard?.length) return '';
  return ` if ${alt.guard.map((g) => `${g.label}=${g.bits}`).join(' & ')}`;
}

/**
 * The records of steps 0..lastStep of the current instruction from the simulator's step log.
 * Bus values come from the log when it holds them (`recorded`: the instruction ran, or was
 * replayed, with bus recording on), else for `lastStep` alone from the live buses when
 * `liveBuses` is set (a step that stopped before its closing edge).
 */
export function collectSteps(sim: BusSimulator, lastStep: number, recorded: boolean, liveBuses = false): StepRecord[] {
  const plan = sim.plan;
  const records: StepRecord[] = [];
  const nStores = plan.stores.length;
  const nBuses = plan.busNames.length;
  for (let step = 0; step <= lastStep; step++) {
    // With a sequencer a jump may skip steps: those the log holds from another instruction are left out.
    if (plan.seqPart >= 0 && sim.logSeen[step] !== sim.logSeen[lastStep]) continue;
    const uop = sim.uopAtStep(step);
    const info = plan.microOps.info[uop];
    const addresses = plan.stores.map((s, i) => {
      const address = sim.logAddress[step * nStores + i];
      return { store: s.store.name, address, lines: describeAddress(s.enc, address) };
    });
    let alt: StepAlt | undefined;
    let className: string | undefined;
    for (let i = 0; i < nStores && !alt; i++) {
      const source = plan.sourceOf(i, addresses[i].address);
      alt = source.alt;
      className = source.cls?.name;
    }
    const setByStep = new Set((alt?.actions ?? []).filter((a) => a.value).map((a) => a.signal));
    const fields: StepRecord['fields'] = [];
    for (const [field, code] of info.fields) {
      const signal = plan.machine.signals.get(field);
      if (!setByStep.has(field) && signal?.type === 'field' && signal.idle === code) continue;
      fields.push({ field, code, value: plan.microOps.valueName(field, code) });
    }
    let buses: BusReading[] | undefined;
    const live = !recorded && liveBuses && step === lastStep;
    if (recorded || live) {
      const definedMask = live ? sim.definedMask : sim.logDefined[step];
      buses = plan.busNames.map((bus, b) => {
        const defined = ((definedMask >>> b) & 1) === 1;
        const value = live ? sim.busValue[b] : sim.logBusValue[step * nBuses + b];
        const state: BusReading['state'] = info.driven[b] ? 'driven' : plan.busKeeper[b] ? 'held' : 'floating';
        return { bus, value: defined ? value >>> 0 : undefined, state };
      });
    }
    const sourceLabel = alt
      ? alt.phase
        ? `phase ${alt.phase.name} step ${alt.step}${guardText(alt)} (used by class ${className})`
        : `class ${className} step ${alt.step}${guardText(alt)}`
      : 'fill word (no step of the table covers this address)';
    records.push({ step, addresses, uop, asserted: info.asserted, fields, buses, className, source: alt?.span, sourceLabel, fill: !alt });
  }
  return records;
}

export interface FormatOptions {
  /** Line numbers for source spans, when the text is known. */
  lines?: LineIndex;
  /** File name shown with line numbers. */
  file?: string;
}

export function sourcePlace(span: Span | undefined, options: FormatOptions): string {
  if (!span || !options.lines) return '';
  const line = options.lines.position(span.start).line + 1;
  return options.file ? `${options.file}:${line}` : `line ${line}`;
}

function busText(reading: BusReading): string {
  const value = reading.value === undefined ? (reading.state === 'floating' ? 'floating' : 'undefined') : hex(reading.value);
  return `${reading.bus}=${value}${reading.state === 'held' ? ' (held by keepers)' : ''}`;
}

/** A step record as indented text lines. `mark` is appended to the first line (e.g. "<- loads x10"). */
export function formatStep(record: StepRecord, options: FormatOptions = {}, mark = ''): string[] {
  const place = sourcePlace(record.source, options);
  const lines = [`  step ${record.step}: ${record.sourceLabel}${place ? ` at ${place}` : ''}${mark ? `   <- ${mark}` : ''}`];
  for (const a of record.addresses) lines.push(`      ${record.addresses.length > 1 ? `${a.store} ` : ''}address ${hex(a.address, 4)} (${a.lines})`);
  lines.push(`      strobes: ${record.asserted.length ? record.asserted.join(' ') : '(none)'}`);
  if (record.fields.length) lines.push(`      fields:  ${record.fields.map((f) => `${f.field}=${f.value ?? `code ${f.code} (no value has this code)`}`).join(' ')}`);
  if (record.buses) lines.push(`      buses:   ${record.buses.map(busText).join('  ')}`);
  return lines;
}

/** The instruction line of a report: address, word, disassembly. */
export function instructionText(pc: number, word: number): string {
  return `${hex(pc)}: ${hex(word)}  ${disassemble(word, pc)}`;
}

/** One paragraph saying what a machine fault is. */
export function faultText(fault: MachineFault): string {
  switch (fault.kind) {
    case 'contention':
      return fault.buses
        .map((b) => `bus contention on \`${b.bus}\`: ${b.drivers.map((d) => `\`${d.strobe}\` drives ${d.value === undefined ? 'an undefined value' : hex(d.value)}`).join(', ')}`)
        .join('; ') + `. ${busContentionCaution} Check the drivers' data sheets.`;
    case 'combinational-loop':
      return `${fault.message}; the bus value cannot settle`;
    case 'address-flag':
      return fault.message;
    case 'undefined-value':
      return `\`${fault.strobe}\` loads an undefined value from \`${fault.bus}\`: ${fault.why}`;
    case 'control-code':
      return fault.message;
  }
}

/** What a stop means, in one line (exits, traps, illegal instructions, faults). */
export function stopText(stop: SimStop): string {
  switch (stop.kind) {
    case 'exit':
      return `program exited with code ${stop.exitCode}`;
    case 'ebreak':
      return `EBREAK at ${hex(stop.pc)}: the monitor stops the machine (qemu-riscv32 delivers SIGTRAP here)`;
    case 'illegal-instruction':
      return `${stop.message}; instruction ${instructionText(stop.pc, stop.word)}`;
    case 'unsupported-syscall':
      return `ECALL at ${hex(stop.pc)} asks for system call ${stop.syscallNumber}; only write (64) and exit (93, 94) are provided`;
    case 'output-limit':
      return `write at ${hex(stop.pc)} stopped: the program's output would exceed ${stop.outputLimitBytes} bytes`;
    case 'fault':
      return `machine fault in step ${stop.step} of ${instructionText(stop.pc, stop.word)}: ${faultText(stop.fault)}`;
  }
}
