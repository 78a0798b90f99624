// A part of a standard-library kind read as a part of a defined kind: its kind's definition from
// the library (parts/library/standard.ts), its settings taken from the fields the built-in part
// shape holds (width, reset, inc, bit0, x0, cond, value), its inputs (the ALU's and
// comparator's operand buses, the memory's address part or bus, the instruction register of the
// immediate generator, register file and comparator) and the field driving its control. This is
// the one place that translates the built-in shapes: every layer reads a part through
// `definitionOf` (model/partFacts.ts derives what each needs, the simulator compiles it), and
// the model can later build library parts this way directly and drop the shapes of
// model/types.ts. `strobeWiring` says how the builder reads the built-in shapes' strobe lines.
import { libraryKind } from '../parts/library';
import type { PortNumber } from '../parts/behaviour';
import { customPortFor } from './buildCustomPart';
import type { CustomPart, InputSource, Machine, Part, Strobe } from './types';

/** The control each library kind's field drives (docs/notation.md: `field F W -> PART`). */
const controlOf: Partial<Record<Part['kind'], string>> = { immediate: 'fmt', alu: 'fn', compare: 'test', memory: 'size' };

const definitions = new WeakMap<Part, CustomPart>();

/**
 * The part as a part of its kind's definition, for every reader (simulator, prover, hover,
 * completion, budget, checks, debugger). A memory port without a size field is read too: its
 * `size` control then holds its default. Cached per part object; a model is not changed once built.
 */
export function definitionOf(machine: Machine, part: Part): CustomPart {
  if (part.kind === 'custom') return part;
  let defined = definitions.get(part);
  if (!defined) {
    const translated = translate(machine, part);
    if ('problem' in translated) throw new Error(translated.problem);
    definitions.set(part, (defined = translated));
  }
  return defined;
}

function translate(machine: Machine, part: Part): CustomPart | { problem: string } {
  if (part.kind === 'custom') return part;
  const def = libraryKind(part.kind);
  if (!def) return { problem: `the standard library has no kind \`${part.kind}\`` };
  const settings = new Map<string, number | string>();
  const inputs = new Map<string, InputSource>();
  const flagNames = new Map<string, string>();
  settings.set('width', part.width);
  switch (part.kind) {
    case 'register':
    case 'instruction':
      settings.set('reset', part.reset);
      break;
    case 'counter':
      settings.set('inc', part.increment);
      settings.set('bit0', part.bit0Zero ? 'zero' : 'kept');
      settings.set('reset', part.reset);
      break;
    case 'regfile':
      settings.set('x0', part.x0);
      inputs.set('ir', { from: 'instruction' });
      break;
    case 'immediate':
      inputs.set('ir', { from: 'part', name: part.source });
      break;
    case 'alu':
      inputs.set('a', { from: 'bus', name: part.a });
      inputs.set('b', { from: 'bus', name: part.b });
      break;
    case 'compare':
      settings.set('cond', part.condition);
      inputs.set('a', { from: 'bus', name: part.a });
      inputs.set('b', { from: 'bus', name: part.b });
      inputs.set('ir', { from: 'instruction' });
      flagNames.set('taken', part.flag);
      break;
    case 'memory':
      // Without a size field its control holds its default (`word`).
      inputs.set('addr', { from: part.addressFrom, name: part.address });
      break;
    case 'constant':
      settings.set('value', part.value);
      break;
  }
  // Settings the built-in shape has no field for keep the kind's defaults.
  for (const s of def.settings) if (!settings.has(s.name) && s.default !== undefined) settings.set(s.name, s.default);
  const controlFields = new Map<string, string>();
  const controlValues = new Map<string, ReadonlyMap<string, number>>();
  const control = controlOf[part.kind];
  const field = part.controlField ? machine.signals.get(part.controlField) : undefined;
  if (control && field?.type === 'field') {
    controlFields.set(control, field.name);
    controlValues.set(control, new Map([...field.values.values()].map((v) => [v.name, v.code])));
  }
  return { name: part.name, description: part.description, symbol: part.symbol, figures: part.figures, width: part.width, kind: 'custom', kindName: def.name, def, settings, inputs, flagNames, controlFields, controlValues };
}

/**
 * The port of the part's definition a strobe uses: the one the model resolved for a part of a
 * table's own kind, else the one the strobe's kind and written port (`x.rs1`, `x.rd`) name, as
 * for a table's own kind. Undefined when the definition has no such port (a register file's
 * fixed register `x[n]`, which the definition does not describe).
 */
export function definedPortOf(part: CustomPart, strobe: Strobe): string | undefined {
  if (strobe.kindPort !== undefined) return strobe.kindPort;
  // `x[5]`: the kind's numbered port (the model keeps the number, not the port, for a library register file).
  if (strobe.kind === 'end' || strobe.kind === 'trap') return undefined;
  const role = strobe.kind === 'clock' && strobe.bus === undefined ? 'clock-flag' : strobe.kind;
  const found = customPortFor(part, role, strobe.register !== undefined ? undefined : strobe.port, strobe.register !== undefined);
  return 'port' in found ? found.port : undefined;
}

/**
 * How strobe lines name this part's ports, as the model builder reads them: a register file of
 * the library is always wired by port (`x.rs1`, `x.rd`) and also by register number (`x[5]`,
 * its numbered ports); the other library parts have no port
 * names on strobe lines (`enable pc`); a part of a table's own kind takes `part.port` or, for
 * the first port that fits, just `part`, and `part[5]` when its kind has numbered ports.
 */
export function strobeWiring(part: Part): { ports: 'always' | 'never' | 'optional'; numbered: boolean } {
  if (part.kind === 'custom') return { ports: 'optional', numbered: [...part.def.drives, ...part.def.edges].some((p) => p.param !== undefined) };
  if (part.kind === 'regfile') return { ports: 'always', numbered: true };
  return { ports: 'never', numbered: false };
}

/** The number a strobe gives a numbered port (`x[5]` on `drive xout[n] ...`), for the port's expressions. */
export function strobePortNumber(param: string | undefined, strobe: Strobe): PortNumber | undefined {
  return param !== undefined && strobe.register !== undefined ? { name: param, value: strobe.register } : undefined;
}
