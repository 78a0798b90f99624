// The GAL16V8 used as combinational logic in its simple mode (SYN = 1, AC0 = 0: eight product
// terms per output, no output-enable term, pins 15 and 16 without feedback) and its complex
// mode (SYN = 1, AC0 = 1: the first row of each output is its output-enable term, seven logic
// terms, pins 12 and 19 without feedback). Fuse layout from the Lattice GAL16V8 data sheet's
// logic diagrams and fuse map (AND array of 64 rows x 32 columns, XOR polarity bits, user
// signature, AC1 bits, product-term disable bits, SYN, AC0), as recorded in the project's
// reference facts. The registered mode is deliberately not supported.
import { LogicInputError } from '../errors';
import {
  type DeviceModeSpec,
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

export const GAL16V8_FUSES = 2194;
export const GAL16V8_COLUMNS = 32;
export const GAL16V8_ROWS = 64;

/** Output pins in fuse-map order: pin 19 owns rows 0..7, pin 12 rows 56..63. */
const OUTPUT_PINS = [19, 18, 17, 16, 15, 14, 13, 12] as const;

export const GAL16V8_XOR_FIRST_FUSE = 2048;
export const GAL16V8_SIGNATURE_FIRST_FUSE = 2056;
export const GAL16V8_AC1_FIRST_FUSE = 2120;
export const GAL16V8_PTD_FIRST_FUSE = 2128;
export const GAL16V8_SYN_FUSE = 2192;
export const GAL16V8_AC0_FUSE = 2193;

/** True column of each pin's signal in simple mode; the complement is the next column. */
const SIMPLE_COLUMNS: ReadonlyMap<number, number> = new Map([
  [2, 0], [1, 2], [3, 4], [19, 6], [4, 8], [18, 10], [5, 12], [17, 14],
  [6, 16], [14, 18], [7, 20], [13, 22], [8, 24], [12, 26], [9, 28], [11, 30],
]);

/** True column of each pin's signal in complex mode. */
const COMPLEX_COLUMNS: ReadonlyMap<number, number> = new Map([
  [2, 0], [1, 2], [3, 4], [18, 6], [4, 8], [17, 10], [5, 12], [16, 14],
  [6, 16], [15, 18], [7, 20], [14, 22], [8, 24], [13, 26], [9, 28], [11, 30],
]);

const DEDICATED_INPUTS = [1, 2, 3, 4, 5, 6, 7, 8, 9, 11];

/** In simple mode these cells are outputs only: they drive even when nothing is placed on them. */
export const SIMPLE_ALWAYS_DRIVEN_PINS: readonly number[] = [15, 16];

function columnsOf(modeId: string): ReadonlyMap<number, number> {
  return modeId === 'simple' ? SIMPLE_COLUMNS : COMPLEX_COLUMNS;
}

export function gal16v8Column(modeId: string, pin: number): number {
  const column = columnsOf(modeId).get(pin);
  if (column === undefined) throw new LogicInputError(`GAL16V8 pin ${pin} does not feed the AND array in ${modeId} mode`);
  return column;
}

/** First AND-array row of an output pin's cell. */
export function gal16v8FirstRow(pin: number): number {
  const position = OUTPUT_PINS.indexOf(pin as (typeof OUTPUT_PINS)[number]);
  if (position < 0) throw new LogicInputError(`GAL16V8 pin ${pin} is not an output pin`);
  return position * 8;
}

/** XOR (polarity) fuse of an output pin: 1 = active high. AC1 bits follow the same pin order. */
export function gal16v8XorFuse(pin: number): number {
  return GAL16V8_XOR_FIRST_FUSE + gal16v8FirstRow(pin) / 8;
}

export function gal16v8Ac1Fuse(pin: number): number {
  return GAL16V8_AC1_FIRST_FUSE + gal16v8FirstRow(pin) / 8;
}

function buildFuses(plan: DevicePlan): Uint8Array {
  const mode = modeOf(gal16v8, plan.mode);
  checkPlanPins(gal16v8, mode, plan);
  const complex = mode.id === 'complex';
  const fuses = new Uint8Array(GAL16V8_FUSES);
  fuses[GAL16V8_SYN_FUSE] = 1;
  fuses[GAL16V8_AC0_FUSE] = complex ? 1 : 0;
  // Every product term enabled; unused rows stay all intact, which makes them false.
  fillFuses(fuses, GAL16V8_PTD_FIRST_FUSE, GAL16V8_ROWS, 1);
  const column = (pin: number) => gal16v8Column(mode.id, pin);
  for (const pin of OUTPUT_PINS) {
    const firstRow = gal16v8FirstRow(pin);
    const output = plan.outputs.find((o) => o.pin === pin);
    if (complex) {
      // Complex mode: AC1 = 1 on every cell (combinational output with an enable term).
      fuses[gal16v8Ac1Fuse(pin)] = 1;
      if (!output) continue;
      fillFuses(fuses, firstRow * GAL16V8_COLUMNS, GAL16V8_COLUMNS, 1);
      output.terms.forEach((term, k) => {
        writeTermRow(fuses, (firstRow + 1 + k) * GAL16V8_COLUMNS, GAL16V8_COLUMNS, term, plan.inputPins, column);
      });
    } else {
      // Simple mode: AC1 = 0 makes the cell an always-enabled output, AC1 = 1 an input.
      // Pins 15 and 16 have no input path in simple mode and always drive (the fuse-map
      // viewer jedutil shows them as outputs whatever AC1 says), so an unused one is made a
      // defined constant low output (XOR = 1, no terms) rather than left to chance.
      if (!output) {
        if (SIMPLE_ALWAYS_DRIVEN_PINS.includes(pin)) fuses[gal16v8XorFuse(pin)] = 1;
        else fuses[gal16v8Ac1Fuse(pin)] = 1;
        continue;
      }
      output.terms.forEach((term, k) => {
        writeTermRow(fuses, (firstRow + k) * GAL16V8_COLUMNS, GAL16V8_COLUMNS, term, plan.inputPins, column);
      });
    }
    fuses[gal16v8XorFuse(pin)] = output.inverted ? 0 : 1;
  }
  writeSignature(fuses, GAL16V8_SIGNATURE_FIRST_FUSE, plan.signature);
  return fuses;
}

function evaluate(fuses: Uint8Array, inputLevels: ReadonlyMap<number, 0 | 1>): Map<number, PinLevel> {
  if (fuses.length !== GAL16V8_FUSES) throw new LogicInputError(`a GAL16V8 fuse map has ${GAL16V8_FUSES} fuses, not ${fuses.length}`);
  if (fuses[GAL16V8_SYN_FUSE] !== 1) throw new LogicInputError('this GAL16V8 map is in registered mode (SYN = 0); only combinational maps can be evaluated');
  const complex = fuses[GAL16V8_AC0_FUSE] === 1;
  const columnLevels = new Array<number>(GAL16V8_COLUMNS).fill(0);
  for (const [pin, column] of columnsOf(complex ? 'complex' : 'simple')) {
    const level = inputLevels.get(pin) ?? 0;
    columnLevels[column] = level;
    columnLevels[column + 1] = level ^ 1;
  }
  const rowValue = (row: number) =>
    fuses[GAL16V8_PTD_FIRST_FUSE + row] === 1 && evaluateRow(fuses, row * GAL16V8_COLUMNS, columnLevels);
  const result = new Map<number, PinLevel>();
  for (const pin of OUTPUT_PINS) {
    const firstRow = gal16v8FirstRow(pin);
    const ac1 = fuses[gal16v8Ac1Fuse(pin)];
    let enabled: boolean;
    let logicRows: number[];
    if (complex) {
      if (ac1 !== 1) throw new LogicInputError(`GAL16V8 pin ${pin} has AC1 = 0 in complex mode, which this evaluator does not model`);
      enabled = rowValue(firstRow);
      logicRows = [1, 2, 3, 4, 5, 6, 7].map((k) => firstRow + k);
    } else {
      enabled = ac1 === 0 || SIMPLE_ALWAYS_DRIVEN_PINS.includes(pin);
      logicRows = [0, 1, 2, 3, 4, 5, 6, 7].map((k) => firstRow + k);
    }
    if (!enabled) {
      result.set(pin, 'Z');
      continue;
    }
    const sum = logicRows.some(rowValue);
    const activeHigh = fuses[gal16v8XorFuse(pin)] === 1;
    result.set(pin, sum === activeHigh ? 1 : 0);
  }
  return result;
}

const SIMPLE_MODE: DeviceModeSpec = {
  id: 'simple',
  cells: OUTPUT_PINS.map((pin) => ({ pin, productTerms: 8, feedback: pin !== 15 && pin !== 16 })),
  dedicatedInputPins: DEDICATED_INPUTS,
};

const COMPLEX_MODE: DeviceModeSpec = {
  id: 'complex',
  cells: OUTPUT_PINS.map((pin) => ({ pin, productTerms: 7, feedback: pin !== 12 && pin !== 19 })),
  dedicatedInputPins: DEDICATED_INPUTS,
};

/** Lattice GAL16V8 in combinational use: 20-pin DIP, VCC pin 20, GND pin 10 (data sheet pinout). */
export const gal16v8: DeviceSpec = {
  name: 'GAL16V8',
  pinCount: 20,
  fuseCount: GAL16V8_FUSES,
  vccPin: 20,
  gndPin: 10,
  modes: [SIMPLE_MODE, COMPLEX_MODE],
  buildFuses,
  evaluate,
};
