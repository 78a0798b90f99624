// The figures of a run: instructions retired, steps, cycles per instruction per class and
// overall, how often each RV32I instruction retired through the microcode, and (given the wall
// time by the caller, since the core has no clock) instructions per second. Text for the CLI's
// summary and the editor's run result. Beside each class's measured CPI stand the steps its
// instructions take as counted from the table's control flow (min–max), with a loop's formula
// (`SLLI..SRAI: 4 + shamt`); where the run held the formulas to the retired instructions
// (loopChecks.ts), the steps they give at the actual operands beside the measured ones.
//
// Deliberately not here: running or comparing (simulator.ts, lockstep.ts).
import { cycleCountsOf, groupNames, groupsOf, rangeText } from '../flow/cycleCounts';
import { RV32I_INSTRUCTIONS, matchInstruction } from '../isa/rv32i';
import type { LoopCheck, LoopChecks } from './loopChecks';
import { wordOfMnemonicKey, type BusSimulator } from './simulator';

export interface ClassFigures {
  className: string;
  instructions: number;
  steps: number;
  /** Steps per instruction of this class. */
  cpi: number;
  /** The steps its instructions take as counted from the class's control flow (flow/cycleCounts.ts). */
  computed?: { min?: number; max?: number; doesNotEnd: boolean; loops: boolean; formulas?: string[] };
  /** Its retired instructions with a loop formula: the steps the formula gives at their operands and the measured. */
  loopCheck?: LoopCheck;
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

export function figuresOf(sim: BusSimulator, loopChecks?: LoopChecks | null): RunFigures {
  const machine = sim.plan.machine;
  const classes: ClassFigures[] = [];
  const names = [...machine.classes.map((c) => c.name), '(no class)'];
  const counted = cycleCountsOf(machine);
  names.forEach((className, i) => {
    const instructions = sim.classInstructions[i];
    if (instructions === 0) return;
    const steps = sim.classSteps[i];
    const c = counted[i];
    // The loops' formulas by group of instructions: `SLLI..SRAI: 4 + shamt`.
    const all = c ? c.instructions.map((x) => x.mnemonic ?? c.className) : [];
    const formulas = c ? groupsOf(c).filter((g) => g.cycles.loopCount).map((g) => `${groupNames(g.names, all)}: ${rangeText(g.cycles.min, g.cycles.max, g.cycles.loopSteps, g.cycles.loopCount)}`) : [];
    const loopCheck = loopChecks?.byClass.get(i);
    classes.push({
      className,
      instructions,
      steps,
      cpi: steps / instructions,
      ...(c && !c.tooManyInputs ? { computed: { min: c.min, max: c.max, doesNotEnd: c.doesNotEnd, loops: c.loops, ...(formulas.length && { formulas }) } } : {}),
      ...(loopCheck && { loopCheck }),
    });
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

/** `; by the formula 1,440 steps for the 96 that ran, measured 1,440`, and the first that differs. */
function checkText(check: LoopCheck | undefined): string {
  if (!check) return '';
  const differ = check.first ? `; ${grouped(check.differing)} took other steps, the first at 0x${check.first.pc.toString(16).padStart(8, '0')}: ${check.first.measured} steps, ${check.first.formula} gives ${check.first.expected}` : '';
  return `; by the formula ${grouped(check.formulaSteps)} steps for the ${grouped(check.instructions)} that ran, measured ${grouped(check.measuredSteps)}${differ}`;
}

/** The summary lines: totals, CPI per class, and speed when the wall time is given. */
export function formatFigures(figures: RunFigures, wallMs?: number): string {
  const lines: string[] = [];
  lines.push(`instructions retired: ${grouped(figures.instructions)}   steps: ${grouped(figures.steps)}   CPI (steps per instruction): ${figures.cpi.toFixed(3)}`);
  if (figures.classes.length) {
    const width = Math.max(...figures.classes.map((c) => c.className.length));
    const stepsWidth = Math.max(...figures.classes.map((c) => grouped(c.steps).length));
    for (const c of figures.classes) {
      const formulas = c.computed?.formulas?.map((f) => `; ${f}`).join('') ?? '';
      const computed = c.computed ? `  (computed ${c.computed.loops ? `${c.computed.min} or more, a loop` : rangeText(c.computed.min, c.computed.max)}${c.computed.doesNotEnd ? ', or does not end' : ''}${formulas}${checkText(c.loopCheck)})` : '';
      lines.push(`  ${c.className.padEnd(width)}  ${grouped(c.instructions).padStart(14)} instructions  ${grouped(c.steps).padStart(stepsWidth)} steps  CPI ${c.cpi.toFixed(3)}${computed}`);
    }
  }
  if (wallMs !== undefined) {
    const perSecond = wallMs > 0 ? (figures.instructions / wallMs) * 1000 : 0;
    lines.push(`wall time: ${(wallMs / 1000).toFixed(3)} s   ${grouped(perSecond)} instructions per second`);
  }
  return lines.join('\n') + '\n';
}
