// What the fitter and the JEDEC writer need to know about a programmable logic device: its
// pins, its output cells (product-term capacity, whether the pin can feed back as an input),
// how to turn a pin plan into a fuse array, and how to evaluate a fuse array (used to read
// back and check what was written). It deliberately describes combinational use only.
import { LogicInputError } from '../errors';
import type { ProductTerm } from '../truthTable';

export type DeviceName = 'GAL16V8' | 'GAL22V10';

export interface OutputCellSpec {
  readonly pin: number;
  /** Product terms available for the output's sum of products. */
  readonly productTerms: number;
  /** Whether the pin can be used as an input when the cell's output is disabled. */
  readonly feedback: boolean;
}

export interface DeviceModeSpec {
  /** 'combinational' for the GAL22V10; 'simple' or 'complex' for the GAL16V8. */
  readonly id: string;
  /** Output cells, in the order of the device's fuse map. */
  readonly cells: readonly OutputCellSpec[];
  readonly dedicatedInputPins: readonly number[];
}

/** One output placed on a pin: terms over table inputs, complemented when `inverted`. */
export interface PlannedOutput {
  readonly pin: number;
  readonly terms: readonly ProductTerm[];
  readonly inverted: boolean;
}

/** Where everything goes on one device. */
export interface DevicePlan {
  readonly mode: string;
  readonly outputs: readonly PlannedOutput[];
  /** Table input index → device pin. */
  readonly inputPins: ReadonlyMap<number, number>;
  /** Up to 8 bytes of user electronic signature; zeros when absent. */
  readonly signature?: Uint8Array;
}

/** A pin's level as seen by the fuse-map evaluator: 0, 1, or Z when its output is disabled. */
export type PinLevel = 0 | 1 | 'Z';

export interface DeviceSpec {
  readonly name: DeviceName;
  readonly pinCount: number;
  readonly fuseCount: number;
  readonly vccPin: number;
  readonly gndPin: number;
  readonly modes: readonly DeviceModeSpec[];
  /** Fuse array (one byte per fuse, 0 = intact, 1 = blown) for a plan. Throws LogicInputError on an impossible plan. */
  buildFuses(plan: DevicePlan): Uint8Array;
  /**
   * Levels of the output pins for given input pin levels, computed from a fuse array alone.
   * `inputLevels` gives a level for every pin used as an input (others read as 0).
   */
  evaluate(fuses: Uint8Array, inputLevels: ReadonlyMap<number, 0 | 1>): Map<number, PinLevel>;
}

export function modeOf(device: DeviceSpec, modeId: string): DeviceModeSpec {
  const mode = device.modes.find((m) => m.id === modeId);
  if (!mode) {
    throw new LogicInputError(`${device.name} has no mode "${modeId}"; its modes are ${device.modes.map((m) => m.id).join(', ')}`);
  }
  return mode;
}

/** Sets `count` fuses from `first` to `value`. */
export function fillFuses(fuses: Uint8Array, first: number, count: number, value: 0 | 1): void {
  fuses.fill(value, first, first + count);
}

/**
 * Writes a product term into an AND-array row: the row starts all blown (constant true) and
 * the fuse of each literal's column is left intact. `columnOfPin` gives the true column of a
 * pin; its complement is the next column (as in both devices' logic diagrams).
 */
export function writeTermRow(
  fuses: Uint8Array,
  rowFirstFuse: number,
  rowWidth: number,
  term: ProductTerm,
  inputPins: ReadonlyMap<number, number>,
  columnOfPin: (pin: number) => number,
): void {
  fillFuses(fuses, rowFirstFuse, rowWidth, 1);
  for (let inputIndex = 0; inputIndex < 32; inputIndex++) {
    if (((term.care >>> inputIndex) & 1) === 0) continue;
    const pin = inputPins.get(inputIndex);
    if (pin === undefined) throw new LogicInputError(`a product term uses input ${inputIndex}, which has no pin on this device`);
    const trueColumn = columnOfPin(pin);
    const column = (term.value >>> inputIndex) & 1 ? trueColumn : trueColumn + 1;
    fuses[rowFirstFuse + column] = 0;
  }
}

/**
 * Value of an AND-array row: true when every intact fuse connects a true signal. A row with
 * every fuse blown is constant true; intact fuses on both columns of one pin make it false.
 */
export function evaluateRow(fuses: Uint8Array, rowFirstFuse: number, columnLevels: readonly number[]): boolean {
  for (let column = 0; column < columnLevels.length; column++) {
    if (fuses[rowFirstFuse + column] === 0 && columnLevels[column] === 0) return false;
  }
  return true;
}

/**
 * Writes the 64-bit user signature: byte k of the signature at fuses first+8k .. first+8k+7,
 * most significant bit first (common practice, no source: the data sheets give the size and
 * place of the signature but not its bit order).
 */
export function writeSignature(fuses: Uint8Array, firstFuse: number, signature: Uint8Array | undefined): void {
  if (!signature) return;
  if (signature.length > 8) throw new LogicInputError(`a device signature holds at most 8 bytes; ${signature.length} were given`);
  signature.forEach((byte, byteIndex) => {
    for (let bitIndex = 0; bitIndex < 8; bitIndex++) fuses[firstFuse + byteIndex * 8 + bitIndex] = (byte >> (7 - bitIndex)) & 1;
  });
}

/** Checks the pins of a plan against a mode: outputs on cells, inputs on input-capable pins, no pin twice. */
export function checkPlanPins(device: DeviceSpec, mode: DeviceModeSpec, plan: DevicePlan): void {
  const used = new Set<number>();
  const claim = (pin: number, what: string) => {
    if (used.has(pin)) throw new LogicInputError(`${device.name} pin ${pin} is assigned twice (${what})`);
    used.add(pin);
  };
  for (const output of plan.outputs) {
    const cell = mode.cells.find((c) => c.pin === output.pin);
    if (!cell) throw new LogicInputError(`${device.name} pin ${output.pin} is not an output pin in ${mode.id} mode`);
    if (output.terms.length > cell.productTerms) {
      throw new LogicInputError(
        `${device.name} pin ${output.pin} holds ${cell.productTerms} product terms; the output placed there needs ${output.terms.length}`,
      );
    }
    claim(output.pin, 'output');
  }
  for (const pin of plan.inputPins.values()) {
    const dedicated = mode.dedicatedInputPins.includes(pin);
    const cell = mode.cells.find((c) => c.pin === pin);
    if (!dedicated && !(cell && cell.feedback)) {
      throw new LogicInputError(`${device.name} pin ${pin} cannot be used as an input in ${mode.id} mode`);
    }
    claim(pin, 'input');
  }
}
