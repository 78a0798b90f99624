// The figures of a run: instructions retired, steps, cycles per instruction per class and
// overall, how often each RV32I instruction retired through the microcode, and (given the wall
// time by the caller, since the core has no clock) instructions per second. Text for the CLI's
// summary and the editor's run result.
//
// Deliberately not here: running or comparing (simulator.ts, lockstep.ts).
import { RV32I_INSTRUCTIONS, matchInstruction } from '../isa/rv32i';
import { wordOfMnemonicKey, type BusSimulator } from './simulator';

export interface ClassFigures {
  className: string;
  instructions: number;
  steps: number;
  /** Steps per instruction of this class. */
  cpi: number;
}

export interface RunFigures {
  instructions: number;
  steps: number;
  /** Steps per retired instruction over the whole run (0 when nothing retired). */
  cpi: number;
  classes: ClassFigures[];
  /** Retirements per RV32I mnemonic (ebreak counts when the monitor took it: it never retires). */
  mnemonics: Map<string, number>;
}

export function figuresOf(sim: BusSimulator): RunFigures {
  const machine = sim.plan.machine;
  const classes: ClassFigures[] = [];
  const names = [...machine.classes.map((c) => c.name), '(no class)'];
  names.forEach((className, i) => {
    const instructions = sim.classInstructions[i];
    if (instructions === 0) return;
    const steps = sim.classSteps[i];
    classes.push({ className, instructions, steps, cpi: steps / instructions });
  });
  const mnemonics = new Map<string, number>(RV32I_INSTRUCTIONS.map((s) => [s.mnemonic, 0]));
  for (let key = 0; key < sim.retiredByKey.length; key++) {
    const count = sim.retiredByKey[key];
    if (count === 0) continue;
    const spec = matchInstruction(wordOfMnemonicKey(key));
    const name = spec?.mnemonic ?? '(not RV32I)';
    mnemonics.set(name, (mnemonics.get(name) ?? 0) + count);
  }
  if (sim.ebreaks) mnemonics.set('ebreak', (mnemonics.get('ebreak') ?? 0) + sim.ebreaks);
  const instructions = sim.instructionsRetired;
  return { instructions, steps: sim.steps, cpi: instructions ? sim.steps / instructions : 0, classes, mnemonics };
}

function grouped(n: number): string {
  return Math.round(n).toString().replace(/\B(?=(\d{3})+(?!\d))/g, ',');
}

/** The summary lines: totals, CPI per class, and speed when the wall time is given. */
export function formatFigures(figures: RunFigures, wallMs?: number): string {
  const lines: string[] = [];
  lines.push(`instructions retired: ${grouped(figures.instructions)}   steps: ${grouped(figures.steps)}   CPI (steps per instruction): ${figures.cpi.toFixed(3)}`);
  if (figures.classes.length) {
    const width = Math.max(...figures.classes.map((c) => c.className.length));
    const stepsWidth = Math.max(...figures.classes.map((c) => grouped(c.steps).length));
    for (const c of figures.classes) {
      lines.push(`  ${c.className.padEnd(width)}  ${grouped(c.instructions).padStart(14)} instructions  ${grouped(c.steps).padStart(stepsWidth)} steps  CPI ${c.cpi.toFixed(3)}`);
    }
  }
  if (wallMs !== undefined) {
    const perSecond = wallMs > 0 ? (figures.instructions / wallMs) * 1000 : 0;
    lines.push(`wall time: ${(wallMs / 1000).toFixed(3)} s   ${grouped(perSecond)} instructions per second`);
  }
  return lines.join('\n') + '\n';
}
