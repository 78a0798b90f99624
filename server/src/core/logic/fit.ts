// Fits minimised outputs onto GAL devices: spreads the outputs over as few devices as it can
// (first-fit decreasing by product-term count), makes sure every device gets all the address
// inputs its outputs depend on, assigns pins (the user's map first, then biggest term counts to
// the biggest cells), and explains outputs that cannot fit any cell. It deliberately builds no
// fuse maps; galImage.ts turns a fitted device into one.
import { popcount } from './bits';
import { LogicInputError } from './errors';
import type { DeviceModeSpec, DeviceName, DeviceSpec, OutputCellSpec } from './devices/device';
import { gal16v8 } from './devices/gal16v8';
import { gal22v10 } from './devices/gal22v10';
import type { Minimised } from './minimise';
import type { ProductTerm } from './truthTable';

export const DEVICES: Readonly<Record<DeviceName, DeviceSpec>> = { GAL16V8: gal16v8, GAL22V10: gal22v10 };

export interface FitOptions {
  readonly device: DeviceName;
  /** GAL16V8: 'simple', 'complex' or 'auto' (simple when it fits, else complex). GAL22V10: 'combinational' or 'auto'. */
  readonly mode?: string;
  /** Signal name (input or output) → pin; an input keeps its pin on every device that needs it. */
  readonly pins?: Readonly<Record<string, number>>;
  /** Most devices to use; unlimited when absent. */
  readonly maxDevices?: number;
}

export interface FittedOutput {
  readonly name: string;
  readonly outputIndex: number;
  readonly pin: number;
  /** Terms as programmed (constant outputs normalised, see normaliseOutput). */
  readonly terms: readonly ProductTerm[];
  readonly inverted: boolean;
  /** Product terms the cell holds. */
  readonly capacity: number;
}

export interface FittedInput {
  readonly name: string;
  readonly inputIndex: number;
  readonly pin: number;
}

export interface FittedDevice {
  readonly device: DeviceName;
  readonly mode: string;
  /** 0-based position among the devices of this fit. */
  readonly index: number;
  readonly outputs: FittedOutput[];
  readonly inputs: FittedInput[];
  /** Output-cell pins with nothing placed on them. */
  readonly unusedPins: number[];
  /** Hardware cautions about this device's configuration. */
  readonly cautions: string[];
}

export type FitProblemKind = 'terms' | 'inputs' | 'pin-map' | 'device-count';

export interface FitProblem {
  readonly kind: FitProblemKind;
  /** The output concerned, when there is one. */
  readonly output?: string;
  readonly message: string;
  /** Ways out, as sentences. */
  readonly options: string[];
}

export interface FitResult {
  readonly ok: boolean;
  readonly devices: FittedDevice[];
  readonly problems: FitProblem[];
}

/** The ways out offered when an output is too big for any cell. */
export const TOO_BIG_OPTIONS: readonly string[] = [
  'split the control store so that this output depends on fewer address lines (for example one device per instruction class)',
  'add an address-decode stage that combines address lines into fewer, wider signals before the GAL',
  'keep this output in a ROM (EPROM or flash) instead of a GAL',
];

interface Candidate {
  readonly name: string;
  readonly outputIndex: number;
  readonly terms: readonly ProductTerm[];
  readonly inverted: boolean;
  /** Table inputs the terms use. */
  readonly support: number;
}

/**
 * A constant-true output is programmed as an active-low output with no terms: it then needs no
 * product term, and a fuse-map viewer that hides an always-true term cannot confuse it with a
 * constant-false output. A constant-false one has no terms and positive polarity.
 */
export function normaliseOutput(terms: readonly ProductTerm[], inverted: boolean): { terms: readonly ProductTerm[]; inverted: boolean } {
  if (terms.some((term) => term.care === 0)) return { terms: [], inverted: !inverted };
  return { terms, inverted };
}

interface Placement {
  readonly mode: DeviceModeSpec;
  readonly outputPins: Map<Candidate, OutputCellSpec>;
  readonly inputPins: Map<number, number>;
}

type PlacementFailure = { readonly kind: FitProblemKind; readonly message: string };

function inputIndexesOf(support: number): number[] {
  const indexes: number[] = [];
  for (let i = 0; i < 32; i++) if ((support >>> i) & 1) indexes.push(i);
  return indexes;
}

/** Tries to place a set of outputs on one device in one mode. */
function place(
  device: DeviceSpec,
  mode: DeviceModeSpec,
  outputs: readonly Candidate[],
  inputNames: readonly string[],
  pinMap: ReadonlyMap<string, number>,
): Placement | PlacementFailure {
  const used = new Set<number>();
  const outputPins = new Map<Candidate, OutputCellSpec>();
  const inputPins = new Map<number, number>();
  const cellOf = (pin: number) => mode.cells.find((c) => c.pin === pin);

  for (const output of outputs) {
    const pin = pinMap.get(output.name);
    if (pin === undefined) continue;
    const cell = cellOf(pin);
    if (!cell) return { kind: 'pin-map', message: `pin ${pin} given for output "${output.name}" is not an output pin of the ${device.name} in ${mode.id} mode` };
    if (cell.productTerms < output.terms.length) {
      return { kind: 'terms', message: `output "${output.name}" needs ${output.terms.length} product terms but pin ${pin} of the ${device.name} holds ${cell.productTerms}` };
    }
    if (used.has(pin)) return { kind: 'pin-map', message: `pin ${pin} of the ${device.name} is given to two signals` };
    used.add(pin);
    outputPins.set(output, cell);
  }
  const needed = inputIndexesOf(outputs.reduce((support, o) => support | o.support, 0));
  const canBeInput = (pin: number) => mode.dedicatedInputPins.includes(pin) || cellOf(pin)?.feedback === true;
  for (const inputIndex of needed) {
    const pin = pinMap.get(inputNames[inputIndex]);
    if (pin === undefined) continue;
    if (!canBeInput(pin)) {
      return { kind: 'pin-map', message: `pin ${pin} given for input "${inputNames[inputIndex]}" cannot be an input of the ${device.name} in ${mode.id} mode` };
    }
    if (used.has(pin)) return { kind: 'pin-map', message: `pin ${pin} of the ${device.name} is given to two signals` };
    used.add(pin);
    inputPins.set(inputIndex, pin);
  }
  // Pins the map reserves for signals not on this device stay free for them.
  const reserved = new Set(pinMap.values());
  const isFree = (pin: number) => !used.has(pin) && !reserved.has(pin);

  // Remaining inputs: dedicated input pins first, then the feedback cells with the fewest terms.
  const freeInputPins = [
    ...mode.dedicatedInputPins.filter(isFree).sort((a, b) => a - b),
    ...mode.cells
      .filter((c) => c.feedback && isFree(c.pin))
      .sort((a, b) => a.productTerms - b.productTerms || a.pin - b.pin)
      .map((c) => c.pin),
  ];
  const unplacedInputs = needed.filter((inputIndex) => !inputPins.has(inputIndex));
  if (unplacedInputs.length > freeInputPins.length) {
    return {
      kind: 'inputs',
      message: `these outputs depend on ${needed.length} address inputs but the ${device.name} in ${mode.id} mode has room for ${needed.length - unplacedInputs.length + freeInputPins.length} alongside them`,
    };
  }
  unplacedInputs.forEach((inputIndex, k) => {
    inputPins.set(inputIndex, freeInputPins[k]);
    used.add(freeInputPins[k]);
  });

  // Remaining outputs: biggest term counts to the biggest cells, cells that cannot be inputs first.
  const freeCells = mode.cells
    .filter((c) => isFree(c.pin))
    .sort((a, b) => b.productTerms - a.productTerms || Number(a.feedback) - Number(b.feedback) || a.pin - b.pin);
  const unplacedOutputs = outputs.filter((o) => !outputPins.has(o)).sort((a, b) => b.terms.length - a.terms.length || a.outputIndex - b.outputIndex);
  if (unplacedOutputs.length > freeCells.length) {
    return { kind: 'inputs', message: `the ${device.name} has ${freeCells.length} free output cells for ${unplacedOutputs.length} outputs` };
  }
  for (let k = 0; k < unplacedOutputs.length; k++) {
    if (unplacedOutputs[k].terms.length > freeCells[k].productTerms) {
      return {
        kind: 'terms',
        message: `output "${unplacedOutputs[k].name}" needs ${unplacedOutputs[k].terms.length} product terms but the biggest cell left on the ${device.name} holds ${freeCells[k].productTerms}`,
      };
    }
    outputPins.set(unplacedOutputs[k], freeCells[k]);
  }
  return { mode, outputPins, inputPins };
}

function modesFor(device: DeviceSpec, requested: string | undefined): DeviceModeSpec[] {
  if (requested === undefined || requested === 'auto') return [...device.modes];
  const mode = device.modes.find((m) => m.id === requested);
  if (!mode) {
    throw new LogicInputError(`${device.name} has no mode "${requested}"; use ${['auto', ...device.modes.map((m) => m.id)].join(', ')}`);
  }
  return [mode];
}

function placeAnyMode(
  device: DeviceSpec,
  modes: readonly DeviceModeSpec[],
  outputs: readonly Candidate[],
  inputNames: readonly string[],
  pinMap: ReadonlyMap<string, number>,
): Placement | PlacementFailure {
  let failure: PlacementFailure | null = null;
  for (const mode of modes) {
    const result = place(device, mode, outputs, inputNames, pinMap);
    if ('outputPins' in result) return result;
    failure ??= result;
  }
  return failure!;
}

function checkPinMap(device: DeviceSpec, minimised: Minimised, pins: Readonly<Record<string, number>>): FitProblem[] {
  const problems: FitProblem[] = [];
  const known = new Set([...minimised.inputNames, ...minimised.outputs.map((o) => o.name)]);
  const owner = new Map<number, string>();
  for (const [name, pin] of Object.entries(pins)) {
    if (!known.has(name)) {
      problems.push({ kind: 'pin-map', message: `the pin map names "${name}", which is neither an input nor a minimised output`, options: ['check the spelling of the signal name'] });
    }
    if (!Number.isInteger(pin) || pin < 1 || pin > device.pinCount || pin === device.vccPin || pin === device.gndPin) {
      problems.push({
        kind: 'pin-map',
        message: `pin ${pin} given for "${name}" is not a signal pin of the ${device.name} (pins 1-${device.pinCount}, VCC ${device.vccPin}, GND ${device.gndPin})`,
        options: ['choose a signal pin from the device data sheet'],
      });
    }
    const other = owner.get(pin);
    if (other !== undefined) {
      problems.push({ kind: 'pin-map', message: `pin ${pin} is given to both "${other}" and "${name}"`, options: ['give each signal its own pin'] });
    }
    owner.set(pin, name);
  }
  return problems;
}

function largestCell(device: DeviceSpec, modes: readonly DeviceModeSpec[]): { terms: number; pins: number[] } {
  const terms = Math.max(...modes.flatMap((m) => m.cells.map((c) => c.productTerms)));
  const pins = [...new Set(modes.flatMap((m) => m.cells.filter((c) => c.productTerms === terms).map((c) => c.pin)))].sort((a, b) => a - b);
  return { terms, pins };
}

function describeUnfittable(device: DeviceSpec, modes: readonly DeviceModeSpec[], candidate: Candidate, failure: PlacementFailure): FitProblem {
  const biggest = largestCell(device, modes);
  if (candidate.terms.length > biggest.terms) {
    const pinText =
      biggest.pins.length === 1 ? `pin ${biggest.pins[0]}` : `pins ${biggest.pins.slice(0, -1).join(', ')} and ${biggest.pins[biggest.pins.length - 1]}`;
    return {
      kind: 'terms',
      output: candidate.name,
      message: `output "${candidate.name}" needs ${candidate.terms.length} product terms after minimisation, but the largest ${device.name} cell (${pinText}) holds ${biggest.terms}`,
      options: [...TOO_BIG_OPTIONS, 'minimise with output polarity "best" if that was not already done (the complement may need fewer terms)'],
    };
  }
  if (failure.kind === 'inputs') {
    const maxInputs = Math.max(
      ...modes.map((m) => m.dedicatedInputPins.length + m.cells.filter((c) => c.feedback).length - (m.cells.some((c) => !c.feedback) ? 0 : 1)),
    );
    return {
      kind: 'inputs',
      output: candidate.name,
      message: `output "${candidate.name}" depends on ${popcount(candidate.support)} address inputs, but a ${device.name} takes at most ${maxInputs} inputs beside one output`,
      options: TOO_BIG_OPTIONS.slice(),
    };
  }
  return { kind: failure.kind, output: candidate.name, message: failure.message, options: ['change the pin map'] };
}

function cautionsFor(device: DeviceSpec, mode: DeviceModeSpec, unusedPins: readonly number[]): string[] {
  const cautions: string[] = [];
  if (device.name === 'GAL16V8' && mode.id === 'simple') {
    const driven = unusedPins.filter((pin) => pin === 15 || pin === 16);
    if (driven.length > 0) {
      cautions.push(
        `In simple mode pins 15 and 16 are always outputs: unused pin${driven.length > 1 ? 's' : ''} ${driven.join(' and ')} drive${driven.length > 1 ? '' : 's'} a constant low level. Leave ${driven.length > 1 ? 'them' : 'it'} unconnected; never tie to VCC or to a bus (check the GAL16V8 data sheet).`,
      );
    }
  }
  const floating = unusedPins.filter((pin) => !(device.name === 'GAL16V8' && mode.id === 'simple' && (pin === 15 || pin === 16)));
  if (floating.length > 0) {
    cautions.push(
      `Unused pin${floating.length > 1 ? 's' : ''} ${floating.join(', ')} ${floating.length > 1 ? 'have their outputs' : 'has its output'} disabled; CMOS inputs should not float, so tie them to a defined level through a resistor as the ${device.name} data sheet advises.`,
    );
  }
  return cautions;
}

/** Spreads minimised outputs over devices and assigns pins. Bad options give problems, not exceptions. */
export function fitDevices(minimised: Minimised, options: FitOptions): FitResult {
  const device = DEVICES[options.device];
  if (!device) throw new LogicInputError(`unknown device "${options.device}"; use ${Object.keys(DEVICES).join(' or ')}`);
  const modes = modesFor(device, options.mode);
  const pinProblems = checkPinMap(device, minimised, options.pins ?? {});
  if (pinProblems.length > 0) return { ok: false, devices: [], problems: pinProblems };
  const pinMap = new Map(Object.entries(options.pins ?? {}));
  const maxDevices = options.maxDevices ?? Infinity;

  const candidates: Candidate[] = minimised.outputs.map((output) => {
    const normal = normaliseOutput(output.terms, output.inverted);
    return {
      name: output.name,
      outputIndex: output.outputIndex,
      terms: normal.terms,
      inverted: normal.inverted,
      support: normal.terms.reduce((support, term) => support | term.care, 0),
    };
  });

  const problems: FitProblem[] = [];
  const fittable: Candidate[] = [];
  for (const candidate of candidates) {
    const alone = placeAnyMode(device, modes, [candidate], minimised.inputNames, pinMap);
    if ('outputPins' in alone) fittable.push(candidate);
    else problems.push(describeUnfittable(device, modes, candidate, alone));
  }

  // First-fit decreasing: the outputs with the most terms go first.
  fittable.sort((a, b) => b.terms.length - a.terms.length || popcount(b.support) - popcount(a.support) || a.outputIndex - b.outputIndex);
  const groups: { outputs: Candidate[]; placement: Placement }[] = [];
  for (const candidate of fittable) {
    let placed = false;
    for (const group of groups) {
      const attempt = placeAnyMode(device, modes, [...group.outputs, candidate], minimised.inputNames, pinMap);
      if ('outputPins' in attempt) {
        group.outputs.push(candidate);
        group.placement = attempt;
        placed = true;
        break;
      }
    }
    if (placed) continue;
    if (groups.length >= maxDevices) {
      problems.push({
        kind: 'device-count',
        output: candidate.name,
        message: `output "${candidate.name}" does not fit on the ${maxDevices} ${device.name} device${maxDevices === 1 ? '' : 's'} allowed`,
        options: ['allow more devices', ...TOO_BIG_OPTIONS.slice(0, 1)],
      });
      continue;
    }
    const alone = placeAnyMode(device, modes, [candidate], minimised.inputNames, pinMap) as Placement;
    groups.push({ outputs: [candidate], placement: alone });
  }

  const devices: FittedDevice[] = groups.map((group, index) => {
    const { mode, outputPins, inputPins } = group.placement;
    const outputs: FittedOutput[] = [...outputPins]
      .map(([candidate, cell]) => ({
        name: candidate.name,
        outputIndex: candidate.outputIndex,
        pin: cell.pin,
        terms: candidate.terms,
        inverted: candidate.inverted,
        capacity: cell.productTerms,
      }))
      .sort((a, b) => a.pin - b.pin);
    const inputs: FittedInput[] = [...inputPins]
      .map(([inputIndex, pin]) => ({ name: minimised.inputNames[inputIndex], inputIndex, pin }))
      .sort((a, b) => a.pin - b.pin);
    const takenPins = new Set([...outputs.map((o) => o.pin), ...inputs.map((i) => i.pin)]);
    const unusedPins = mode.cells.map((c) => c.pin).filter((pin) => !takenPins.has(pin)).sort((a, b) => a - b);
    return { device: device.name, mode: mode.id, index, outputs, inputs, unusedPins, cautions: cautionsFor(device, mode, unusedPins) };
  });
  return { ok: problems.length === 0, devices, problems };
}
