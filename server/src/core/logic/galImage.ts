// Turns one fitted GAL device into its fuse array, JESD3 test vectors taken from the truth table
// and a complete JEDEC file, and reads such a file back to check it: both checksums, the fuse
// count, and the programmed logic evaluated on every vector against the truth table. It
// deliberately does no fitting and no file I/O; the CLI writes the text and calls the check.
import { LogicInputError } from './errors';
import { type DevicePlan, modeOf } from './devices/device';
import { DEVICES, type FittedDevice } from './fit';
import { readJedec, writeJedec } from './jedec';
import { type TruthTable, wordsFor } from './truthTable';

/** Vectors written when the caller does not say: every input combination of a 14-input device. */
export const DEFAULT_MAX_VECTORS = 16384;

export interface GalImageOptions {
  /** Name of the design, for the JEDEC design field. */
  readonly designName: string;
  /** Most test vectors; all device input combinations when there are no more, an even spread otherwise. 0 = none. */
  readonly maxVectors?: number;
  /** Up to 8 ASCII characters for the 64-bit user signature. */
  readonly signature?: string;
  /** Extra N notes (e.g. the tool version). */
  readonly notes?: readonly string[];
  readonly lineEnding?: '\n' | '\r\n';
}

export interface GalImage {
  readonly fuses: Uint8Array;
  readonly vectors: string[];
  /** True when the vectors are a subset of the device's input combinations. */
  readonly vectorsSampled: boolean;
  readonly jedec: string;
}

function signatureBytes(signature: string | undefined): Uint8Array | undefined {
  if (signature === undefined) return undefined;
  if (signature.length > 8 || !/^[\x20-\x7e]*$/.test(signature)) {
    throw new LogicInputError(`a device signature is at most 8 printable ASCII characters; "${signature}" is not`);
  }
  return Uint8Array.from(signature, (ch) => ch.charCodeAt(0));
}

/** The device plan (pins and terms) of a fitted device. */
export function planOf(fitted: FittedDevice, signature?: string): DevicePlan {
  return {
    mode: fitted.mode,
    outputs: fitted.outputs.map((o) => ({ pin: o.pin, terms: o.terms, inverted: o.inverted })),
    inputPins: new Map(fitted.inputs.map((i) => [i.inputIndex, i.pin])),
    signature: signatureBytes(signature),
  };
}

/** Device input combinations to test: all of them, or `maxVectors` spread evenly over the range. */
function chosenCombinations(nDeviceInputs: number, maxVectors: number): { combos: number[]; sampled: boolean } {
  const total = 2 ** nDeviceInputs;
  if (total <= maxVectors) return { combos: Array.from({ length: total }, (_, k) => k), sampled: false };
  const combos: number[] = [];
  for (let k = 0; k < maxVectors; k++) combos.push(Math.floor((k * total) / maxVectors));
  return { combos, sampled: true };
}

/**
 * For one combination of the device's inputs, the value each fitted output must have: 0 or 1
 * when some table address with those input values cares, null when every such address is a
 * don't-care. Outputs only depend on the device's inputs, so caring addresses agree.
 */
function expectedValues(table: TruthTable, fitted: FittedDevice, combo: number): (0 | 1 | null)[] {
  let fixedAddress = 0;
  let deviceMask = 0;
  fitted.inputs.forEach((input, k) => {
    deviceMask |= 1 << input.inputIndex;
    if ((combo >>> k) & 1) fixedAddress |= 1 << input.inputIndex;
  });
  const freeMask = (2 ** table.nInputs - 1) & ~deviceMask;
  return fitted.outputs.map((output) => {
    const bits = table.outputs[output.outputIndex];
    let subset = 0;
    do {
      const address = fixedAddress | subset;
      const bit = 1 << (address & 31);
      if ((bits.dc[address >>> 5] & bit) === 0) return bits.on[address >>> 5] & bit ? 1 : 0;
      subset = (subset - freeMask) & freeMask;
    } while (subset !== 0);
    return null;
  });
}

/** JESD3 vectors for a fitted device: inputs 0/1, outputs H/L (X where don't-care), power pins N, other pins X. */
export function testVectors(table: TruthTable, fitted: FittedDevice, maxVectors = DEFAULT_MAX_VECTORS): { vectors: string[]; sampled: boolean } {
  const device = DEVICES[fitted.device];
  const { combos, sampled } = chosenCombinations(fitted.inputs.length, maxVectors);
  const vectors: string[] = [];
  for (const combo of combos) {
    const expected = expectedValues(table, fitted, combo);
    if (expected.every((value) => value === null)) continue;
    const pins = new Array<string>(device.pinCount).fill('X');
    pins[device.vccPin - 1] = 'N';
    pins[device.gndPin - 1] = 'N';
    fitted.inputs.forEach((input, k) => (pins[input.pin - 1] = (combo >>> k) & 1 ? '1' : '0'));
    fitted.outputs.forEach((output, k) => {
      const value = expected[k];
      pins[output.pin - 1] = value === null ? 'X' : value === 1 ? 'H' : 'L';
    });
    vectors.push(pins.join(''));
  }
  return { vectors, sampled };
}

function notesFor(fitted: FittedDevice, totalDevices: number, extra: readonly string[]): string[] {
  const device = DEVICES[fitted.device];
  const notes = [`DEVICE ${fitted.device} MODE ${fitted.mode.toUpperCase()} PART ${fitted.index + 1} OF ${totalDevices}`];
  for (const input of fitted.inputs) notes.push(`PIN ${input.pin} INPUT ${input.name}`);
  for (const output of fitted.outputs) {
    notes.push(`PIN ${output.pin} OUTPUT ${output.name} ${output.inverted ? 'ACTIVE-LOW' : 'ACTIVE-HIGH'} TERMS ${output.terms.length} OF ${output.capacity}`);
  }
  notes.push(`PIN ${device.vccPin} VCC`, `PIN ${device.gndPin} GND`);
  for (const caution of fitted.cautions) notes.push(`CAUTION ${caution}`);
  notes.push('GENERATED BY Phasewright (logic minimiser and GAL fitter)');
  notes.push('Check pin functions and supply against the device data sheet before programming.');
  return [...notes, ...extra];
}

/** Builds the fuse array, vectors and JEDEC text of one fitted device. */
export function buildGalImage(table: TruthTable, fitted: FittedDevice, totalDevices: number, options: GalImageOptions): GalImage {
  const device = DEVICES[fitted.device];
  modeOf(device, fitted.mode);
  const fuses = device.buildFuses(planOf(fitted, options.signature));
  const maxVectors = options.maxVectors ?? DEFAULT_MAX_VECTORS;
  const { vectors, sampled } = maxVectors > 0 ? testVectors(table, fitted, maxVectors) : { vectors: [], sampled: false };
  const designText =
    `Phasewright fuse map for ${options.designName}, ${fitted.device} ${fitted.index + 1} of ${totalDevices}` +
    (sampled ? ` (${vectors.length} test vectors spread over ${2 ** fitted.inputs.length} input combinations)` : '');
  const jedec = writeJedec({
    designText,
    notes: notesFor(fitted, totalDevices, [...(options.notes ?? [])]),
    pinCount: device.pinCount,
    fuses,
    rowWidth: fitted.device === 'GAL22V10' ? 44 : 32,
    vectors,
    lineEnding: options.lineEnding,
  });
  return { fuses, vectors, vectorsSampled: sampled, jedec };
}

export type ImageCheck = { readonly ok: true; readonly vectorsChecked: number } | { readonly ok: false; readonly message: string };

/**
 * Reads a JEDEC file back and checks it against the table: it must parse with valid
 * checksums, have the device's fuse count, and its fuses, evaluated as the device would, must
 * give every output's care value on every vector in the file (or on every input combination
 * when the file has none).
 */
export function checkGalImage(table: TruthTable, fitted: FittedDevice, jedecText: string): ImageCheck {
  const device = DEVICES[fitted.device];
  const read = readJedec(jedecText);
  if (!read.ok) return { ok: false, message: `the JEDEC file does not read back: ${read.message}` };
  if (read.file.fuseCount !== device.fuseCount) {
    return { ok: false, message: `the JEDEC file has ${read.file.fuseCount} fuses; a ${device.name} has ${device.fuseCount}` };
  }
  const vectors = read.file.vectors;
  const combos =
    vectors.length > 0
      ? vectors.map((vector) => fitted.inputs.reduce((combo, input, k) => combo | ((vector.pins[input.pin - 1] === '1' ? 1 : 0) << k), 0))
      : chosenCombinations(fitted.inputs.length, DEFAULT_MAX_VECTORS).combos;
  for (let v = 0; v < combos.length; v++) {
    const combo = combos[v];
    const levels = new Map<number, 0 | 1>(fitted.inputs.map((input, k) => [input.pin, ((combo >>> k) & 1) as 0 | 1]));
    const actual = device.evaluate(read.file.fuses, levels);
    const expected = expectedValues(table, fitted, combo);
    for (let k = 0; k < fitted.outputs.length; k++) {
      const output = fitted.outputs[k];
      if (vectors.length > 0) {
        const written = vectors[v].pins[output.pin - 1];
        const wanted = expected[k] === null ? 'X' : expected[k] === 1 ? 'H' : 'L';
        if (written !== wanted) {
          return { ok: false, message: `test vector ${vectors[v].index} expects "${written}" on pin ${output.pin} (${output.name}) where the table gives "${wanted}"` };
        }
      }
      if (expected[k] === null) continue;
      if (actual.get(output.pin) !== expected[k]) {
        const inputsText = fitted.inputs.map((input, i) => `${input.name}=${(combo >>> i) & 1}`).join(' ');
        return {
          ok: false,
          message: `read back, pin ${output.pin} (${output.name}) gives ${actual.get(output.pin)} where the table says ${expected[k]} at ${inputsText}`,
        };
      }
    }
  }
  return { ok: true, vectorsChecked: combos.length };
}

/**
 * The level of every fitted output of a fuse map at every one of the table's 2^nInputs
 * addresses (bit a of word a >> 5), computed from the fuses alone as the device would: each
 * combination of the device's inputs is evaluated once and spread over the addresses that
 * form it. Used to check a fuse map read back from disk at every address (verifyFit.ts).
 */
export function fuseMapLevels(fitted: FittedDevice, fuses: Uint8Array, nInputs: number): Map<number, Uint32Array> {
  const device = DEVICES[fitted.device];
  const nCombos = 2 ** fitted.inputs.length;
  const byCombo = fitted.outputs.map(() => new Uint8Array(nCombos));
  for (let combo = 0; combo < nCombos; combo++) {
    const levels = new Map<number, 0 | 1>(fitted.inputs.map((input, k) => [input.pin, ((combo >>> k) & 1) as 0 | 1]));
    const actual = device.evaluate(fuses, levels);
    fitted.outputs.forEach((output, k) => {
      const level = actual.get(output.pin);
      if (level === 'Z' || level === undefined) throw new LogicInputError(`pin ${output.pin} (${output.name}) of the fuse map is not driven as an output`);
      byCombo[k][combo] = level;
    });
  }
  const result = new Map<number, Uint32Array>();
  fitted.outputs.forEach((output) => result.set(output.outputIndex, new Uint32Array(wordsFor(nInputs))));
  const nAddresses = 2 ** nInputs;
  for (let address = 0; address < nAddresses; address++) {
    let combo = 0;
    for (let k = 0; k < fitted.inputs.length; k++) combo |= ((address >>> fitted.inputs[k].inputIndex) & 1) << k;
    fitted.outputs.forEach((output, k) => {
      if (byCombo[k][combo]) result.get(output.outputIndex)![address >>> 5] |= 1 << (address & 31);
    });
  }
  return result;
}
