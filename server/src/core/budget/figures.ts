// Electrical and timing figures a table may carry, written `name=number` on the declaration
// they describe. Every name says its unit. The figures come from the user's own data sheets;
// Phasewright only adds them up. Nothing is assumed where a figure is missing: the budget
// checks skip what they cannot compute and the report says which figures are missing.
// Every figure has a range a builder's part can have (docs/budget.md lists them and why); a
// value outside it is refused where it is written, because a zero resistor or a supply of
// 10^24 mA would make every sum after it silently wrong.

export type FigureHost = 'machine' | 'word' | 'bus' | 'part' | 'strobe';

export interface FigureRange {
  /** Smallest value accepted; with `aboveMin` the value must be strictly greater. */
  min: number;
  aboveMin?: boolean;
  max: number;
  /** Counts (LEDs, inputs, cards) are whole numbers. */
  whole?: boolean;
}

export interface FigureInfo {
  name: string;
  unit: string;
  hosts: FigureHost[];
  description: string;
  range: FigureRange;
}

// The ranges, in one place (common practice, no source; chosen wide enough for any part of
// the 74-series, 4000-series, EPROM/EEPROM and LED families a builder would use, and narrow
// enough to catch a slip of the decimal point or of the unit):
const volts = { min: 0, aboveMin: true, max: 30 };
const delayNs = { min: 0, max: 10_000_000 };
const count = (min: number, max: number) => ({ min, max, whole: true });

export const figureTable: FigureInfo[] = [
  { name: 'supply_v', unit: 'V', hosts: ['machine'], description: 'logic supply voltage (feeds the LED current estimate)', range: volts },
  { name: 'supply_ma', unit: 'mA', hosts: ['machine'], description: 'current budget of the supply for indicators and loads', range: { min: 0, aboveMin: true, max: 100_000 } },
  { name: 'clock_khz', unit: 'kHz', hosts: ['machine'], description: 'planned step clock (one step per period)', range: { min: 0, aboveMin: true, max: 1_000_000 } },
  { name: 'access_ns', unit: 'ns', hosts: ['word'], description: 'control-store access time: address stable to data valid (ROM data sheet)', range: { min: 0, aboveMin: true, max: 10_000_000 } },
  { name: 'drive_ma', unit: 'mA', hosts: ['word', 'part'], description: 'output drive rating per line (the smaller of IOH and IOL at the supply used)', range: { min: 0, aboveMin: true, max: 1000 } },
  { name: 'in_ua', unit: 'uA', hosts: ['part', 'strobe'], description: 'input current per input (input leakage, or bus-hold current)', range: { min: 0, max: 10_000 } },
  { name: 'loads', unit: 'inputs', hosts: ['part', 'strobe'], description: 'chip inputs one control line or bus line reaches on this part', range: count(0, 100_000) },
  { name: 'cards', unit: 'cards', hosts: ['part'], description: 'register-file cards a register-file strobe reaches (each with `loads` inputs)', range: count(1, 10_000) },
  { name: 'hold_ua', unit: 'uA', hosts: ['bus'], description: 'current a driver must supply to overdrive the bus keeper, per line', range: { min: 0, max: 100_000 } },
  { name: 'settle_ns', unit: 'ns', hosts: ['bus'], description: 'bus wiring and settling delay', range: delayNs },
  { name: 'en_ns', unit: 'ns', hosts: ['part'], description: 'output enable to output valid (tri-state driver)', range: delayNs },
  { name: 'tpd_ns', unit: 'ns', hosts: ['part'], description: 'propagation delay, inputs to outputs (ALU, immediate generator, memory read, comparator)', range: delayNs },
  { name: 'tsu_ns', unit: 'ns', hosts: ['part'], description: 'setup time: data stable before the clock edge', range: delayNs },
  { name: 'tco_ns', unit: 'ns', hosts: ['part'], description: 'clock to output valid', range: delayNs },
  { name: 'leds', unit: 'LEDs', hosts: ['bus', 'part', 'strobe'], description: 'indicator LEDs (one per line on a bus or part)', range: count(0, 1_000_000) },
  { name: 'led_vf', unit: 'V', hosts: ['bus', 'part', 'strobe'], description: 'LED forward voltage (LED data sheet)', range: { min: 0, aboveMin: true, max: 12 } },
  { name: 'led_ohm', unit: 'ohm', hosts: ['bus', 'part', 'strobe'], description: 'LED series resistor', range: { min: 0, aboveMin: true, max: 100_000_000 } },
];

const byName = new Map(figureTable.map((f) => [f.name, f]));

export function figureInfo(name: string): FigureInfo | undefined {
  return byName.get(name);
}

export function figureNamesFor(host: FigureHost): string[] {
  return figureTable.filter((f) => f.hosts.includes(host)).map((f) => f.name);
}

/**
 * The value of a figure as written: decimal with an optional fraction (`0.4`, `3300`), or a
 * whole number in the notation's hex or binary forms. Undefined for anything else, and for
 * numbers too large to hold exactly (so `0xFFFFFFFFFFFFFFFFFFFF` is refused here as it is in
 * a width or a code).
 */
export function parseFigureValue(text: string): number | undefined {
  const clean = text.replace(/_/g, '');
  if (/^[0-9]+(\.[0-9]+)?$/.test(clean)) {
    const value = Number(clean);
    return Number.isFinite(value) && value <= Number.MAX_SAFE_INTEGER ? value : undefined;
  }
  if (/^0x[0-9a-f]+$/i.test(clean) || /^0b[01]+$/i.test(clean)) {
    const value = parseInt(clean.slice(2), clean[1] === 'x' || clean[1] === 'X' ? 16 : 2);
    return Number.isSafeInteger(value) ? value : undefined;
  }
  return undefined;
}

/** Why a value is outside its figure's range, or undefined when it is inside. */
export function figureRangeProblem(info: FigureInfo, value: number, written: string = String(value)): string | undefined {
  const { min, aboveMin, max, whole } = info.range;
  const what = info.description.replace(/ \(.*$/, '');
  const allowed = `${aboveMin ? `more than ${min}` : `at least ${min}`} and at most ${max} ${info.unit}`;
  if (whole && !Number.isInteger(value)) return `\`${info.name}=${written}\` is not a whole number: it counts ${info.unit} (${allowed})`;
  if (value < min || (aboveMin && value === min) || value > max) return `\`${info.name}=${written}\` is out of range: the ${what} must be ${allowed}`;
  return undefined;
}

/** The refusal for figure text that is no number, or a number too large to hold exactly. */
export function figureTextProblem(info: FigureInfo, written: string | undefined): string {
  if (written !== undefined && /^(0x[0-9a-f_]+|0b[01_]+|[0-9_]+(\.[0-9_]+)?)$/i.test(written)) {
    return `\`${info.name}=${written}\` is too large: the ${info.description.replace(/ \(.*$/, '')} must be at most ${info.range.max} ${info.unit}`;
  }
  return `\`${info.name}\` needs a number in ${info.unit}, e.g. \`${info.name}=24\``;
}
