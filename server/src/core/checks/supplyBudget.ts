// supply-budget: the indicator LEDs all lit at once must stay within the supply budget the
// machine line declares (supply_ma). LED current per indicator is (Vsupply - Vf) / R; a
// thousand LEDs at a few milliamps each is amps. An LED whose forward voltage is at or above
// the supply never lights, which is reported too.
import { budgetOf } from '../budget/budget';
import { type Check } from './context';

export const supplyBudget: Check = {
  codes: ['supply-budget'],
  run(ctx) {
    const budget = budgetOf(ctx.machine);
    for (const group of budget.leds) {
      if (!group.dark) continue;
      ctx.report('supply-budget', group.span, `the LEDs of ${group.where} need more than the ${budget.supplyV} V supply to light (forward voltage at or above it); check led_vf and supply_v`);
    }
    if (budget.supplyMa === undefined || budget.ledTotalMa <= budget.supplyMa) return;
    const span = ctx.machine.figures.get('supply_ma')!.span;
    const biggest = [...budget.leds].sort((a, b) => b.totalMa - a.totalMa).slice(0, 3);
    ctx.report(
      'supply-budget',
      span,
      `with every LED lit the indicators draw ${fmtMa(budget.ledTotalMa)}, more than the ${fmtMa(budget.supplyMa)} budget; raise the series resistors, light fewer LEDs or use a bigger supply (an estimate: measure, and follow the supply's data sheet)`,
      biggest.map((g) => ({ span: g.span, message: `${g.where}: ${g.count} LED(s) x ${g.perLedMa.toFixed(2)} mA = ${fmtMa(g.totalMa)}` })),
    );
  },
};

function fmtMa(ma: number): string {
  return ma >= 1000 ? `${(ma / 1000).toFixed(2)} A` : `${ma.toFixed(1)} mA`;
}
