// The GAL22V10 used as combinational logic: output macrocells with S1 = 1, polarity from S0,
// output enable always on for outputs and always off for pins used as inputs, unused product
// terms made false. Fuse layout from the Lattice GAL22V10 data sheet's logic diagram (AND
// array of 44 columns x 132 rows, S0/S1 architecture bits after the array, then the 64-bit
// user signature), as recorded in the project's reference facts. Registered outputs and the
// asynchronous-reset / synchronous-preset terms are deliberately not used (both held false).
import { LogicInputError } from '../errors';
import {
  type DevicePlan,
  type DeviceSpec,
  type PinLevel,
  checkPlanPins,
  evaluateRow,
  fillFuses,
  modeOf,
  writeSignature,
  writeTermRow,
} from './device';

export const GAL22V10_FUSES = 5892;
export const GAL22V10_COLUMNS = 44;
export const GAL22V10_ROWS = 132;

/** Output pins in fuse-map order, with their product-term counts (data sheet: 8 to 16 per macrocell). */
const OUTPUT_PINS = [23, 22, 21, 20, 19, 18, 17, 16, 15, 14] as const;
const TERMS_PER_PIN = [8, 10, 12, 14, 16, 16, 14, 12, 10, 8] as const;

/** True column of each pin's signal in the AND array; the complement is the next column. */
const COLUMN_OF_PIN: ReadonlyMap<number, number> = new Map([
  [1, 0], [23, 2], [2, 4], [22, 6], [3, 8], [21, 10], [4, 12], [20, 14], [5, 16], [19, 18], [6, 20],
  [18, 22], [7, 24], [17, 26], [8, 28], [16, 30], [9, 32], [15, 34], [10, 36], [14, 38], [11, 40], [13, 42],
]);

/** Row 0 is the asynchronous reset term, row 131 the synchronous preset term. */
export const GAL22V10_RESET_ROW = 0;
export const GAL22V10_PRESET_ROW = 131;
const ARCHITECTURE_FIRST_FUSE = 5808;
const SIGNATURE_FIRST_FUSE = 5828;

/** The output-enable row of an output pin; its product-term rows follow it. */
export function gal22v10OutputEnableRow(pin: number): number {
  const position = OUTPUT_PINS.indexOf(pin as (typeof OUTPUT_PINS)[number]);
  if (position < 0) throw new LogicInputError(`GAL22V10 pin ${pin} is not an output pin`);
  let row = 1;
  for (let k = 0; k < position; k++) row += TERMS_PER_PIN[k] + 1;
  return row;
}

/** Fuse of architecture bit S0 of an output pin (0 = active low, 1 = active high); S1 is the next fuse. */
export function gal22v10S0Fuse(pin: number): number {
  gal22v10OutputEnableRow(pin);
  return ARCHITECTURE_FIRST_FUSE + 2 * (23 - pin);
}

export function gal22v10Column(pin: number): number {
  const column = COLUMN_OF_PIN.get(pin);
  if (column === undefined) throw new LogicInputError(`GAL22V10 pin ${pin} does not feed the AND array`);
  return column;
}

function buildFuses(plan: DevicePlan): Uint8Array {
  const mode = modeOf(gal22v10, plan.mode);
  checkPlanPins(gal22v10, mode, plan);
  // All fuses intact: every product row (reset and preset included) is false.
  const fuses = new Uint8Array(GAL22V10_FUSES);
  for (const pin of OUTPUT_PINS) {
    const oeRow = gal22v10OutputEnableRow(pin);
    const s0 = gal22v10S0Fuse(pin);
    // S1 = 1 (combinational) on every cell: an unused or input pin then reads its own pin.
    fuses[s0 + 1] = 1;
    const output = plan.outputs.find((o) => o.pin === pin);
    if (!output) continue;
    fillFuses(fuses, oeRow * GAL22V10_COLUMNS, GAL22V10_COLUMNS, 1);
    fuses[s0] = output.inverted ? 0 : 1;
    output.terms.forEach((term, k) => {
      writeTermRow(fuses, (oeRow + 1 + k) * GAL22V10_COLUMNS, GAL22V10_COLUMNS, term, plan.inputPins, gal22v10Column);
    });
  }
  writeSignature(fuses, SIGNATURE_FIRST_FUSE, plan.signature);
  return fuses;
}

function evaluate(fuses: Uint8Array, inputLevels: ReadonlyMap<number, 0 | 1>): Map<number, PinLevel> {
  if (fuses.length !== GAL22V10_FUSES) throw new LogicInputError(`a GAL22V10 fuse map has ${GAL22V10_FUSES} fuses, not ${fuses.length}`);
  const columnLevels = new Array<number>(GAL22V10_COLUMNS).fill(0);
  for (const [pin, column] of COLUMN_OF_PIN) {
    const level = inputLevels.get(pin) ?? 0;
    columnLevels[column] = level;
    columnLevels[column + 1] = level ^ 1;
  }
  const result = new Map<number, PinLevel>();
  OUTPUT_PINS.forEach((pin, position) => {
    const oeRow = gal22v10OutputEnableRow(pin);
    const s0 = fuses[gal22v10S0Fuse(pin)];
    const s1 = fuses[gal22v10S0Fuse(pin) + 1];
    if (s1 !== 1) throw new LogicInputError(`GAL22V10 pin ${pin} is registered (S1 = 0); only combinational maps can be evaluated`);
    if (!evaluateRow(fuses, oeRow * GAL22V10_COLUMNS, columnLevels)) {
      result.set(pin, 'Z');
      return;
    }
    let sum = false;
    for (let k = 0; k < TERMS_PER_PIN[position] && !sum; k++) {
      sum = evaluateRow(fuses, (oeRow + 1 + k) * GAL22V10_COLUMNS, columnLevels);
    }
    result.set(pin, (sum ? 1 : 0) ^ (s0 === 1 ? 0 : 1) ? 1 : 0);
  });
  return result;
}

/** Lattice GAL22V10 in combinational use: 24-pin DIP, VCC pin 24, GND pin 12 (data sheet pinout). */
export const gal22v10: DeviceSpec = {
  name: 'GAL22V10',
  pinCount: 24,
  fuseCount: GAL22V10_FUSES,
  vccPin: 24,
  gndPin: 12,
  modes: [
    {
      id: 'combinational',
      cells: OUTPUT_PINS.map((pin, k) => ({ pin, productTerms: TERMS_PER_PIN[k], feedback: true })),
      // Pin 1 is the clock input in registered designs; with no registers it is an ordinary input.
      dedicatedInputPins: [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 13],
    },
  ],
  buildFuses,
  evaluate,
};
