// Electrical and timing figures a table may carry, written `name=number` on the declaration
// they describe. Every name says its unit. The figures come from the user's own data sheets;
// Phasewright only adds them up. Nothing is assumed where a figure is missing: the budget
// checks skip what they cannot compute and the report says which figures are missing.

export type FigureHost = 'machine' | 'word' | 'bus' | 'part' | 'strobe';

export interface FigureInfo {
  name: string;
  unit: string;
  hosts: FigureHost[];
  description: string;
}

export const figureTable: FigureInfo[] = [
  { name: 'supply_v', unit: 'V', hosts: ['machine'], description: 'logic supply voltage (feeds the LED current estimate)' },
  { name: 'supply_ma', unit: 'mA', hosts: ['machine'], description: 'current budget of the supply for indicators and loads' },
  { name: 'clock_khz', unit: 'kHz', hosts: ['machine'], description: 'planned step clock (one step per period)' },
  { name: 'access_ns', unit: 'ns', hosts: ['word'], description: 'control-store access time: address stable to data valid (ROM data sheet)' },
  { name: 'drive_ma', unit: 'mA', hosts: ['word', 'part'], description: 'output drive rating per line (the smaller of IOH and IOL at the supply used)' },
  { name: 'in_ua', unit: 'uA', hosts: ['part', 'strobe'], description: 'input current per input (input leakage, or bus-hold current)' },
  { name: 'loads', unit: 'inputs', hosts: ['part', 'strobe'], description: 'chip inputs one control line or bus line reaches on this part' },
  { name: 'cards', unit: 'cards', hosts: ['part'], description: 'register-file cards a register-file strobe reaches (each with `loads` inputs)' },
  { name: 'hold_ua', unit: 'uA', hosts: ['bus'], description: 'current a driver must supply to overdrive the bus keeper, per line' },
  { name: 'settle_ns', unit: 'ns', hosts: ['bus'], description: 'bus wiring and settling delay' },
  { name: 'en_ns', unit: 'ns', hosts: ['part'], description: 'output enable to output valid (tri-state driver)' },
  { name: 'tpd_ns', unit: 'ns', hosts: ['part'], description: 'propagation delay, inputs to outputs (ALU, immediate generator, memory read, comparator)' },
  { name: 'tsu_ns', unit: 'ns', hosts: ['part'], description: 'setup time: data stable before the clock edge' },
  { name: 'tco_ns', unit: 'ns', hosts: ['part'], description: 'clock to output valid' },
  { name: 'leds', unit: 'LEDs', hosts: ['bus', 'part', 'strobe'], description: 'indicator LEDs (one per line on a bus or part)' },
  { name: 'led_vf', unit: 'V', hosts: ['bus', 'part', 'strobe'], description: 'LED forward voltage (LED data sheet)' },
  { name: 'led_ohm', unit: 'ohm', hosts: ['bus', 'part', 'strobe'], description: 'LED series resistor' },
];

const byName = new Map(figureTable.map((f) => [f.name, f]));

export function figureInfo(name: string): FigureInfo | undefined {
  return byName.get(name);
}

export function figureNamesFor(host: FigureHost): string[] {
  return figureTable.filter((f) => f.hosts.includes(host)).map((f) => f.name);
}
