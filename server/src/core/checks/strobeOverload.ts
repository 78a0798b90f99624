// strobe-overload: a control line (a ROM data output) reaches more input current, plus its
// indicator LED, than the control store's outputs are rated to drive (drive_ma on the word).
// An overloaded output sags out of its logic levels and heats. Uses the user's figures only.
import { budgetOf } from '../budget/budget';
import { type Check } from './context';

export const strobeOverload: Check = {
  codes: ['strobe-overload'],
  run(ctx) {
    for (const row of budgetOf(ctx.machine).strobes) {
      if (row.loadMa === undefined || row.driveMa === undefined || row.loadMa <= row.driveMa) continue;
      ctx.report(
        'strobe-overload',
        row.span,
        `\`${row.name}\` reaches ${row.inputs} input(s)${row.ledMa ? ' and an LED' : ''}: ${row.loadMa.toFixed(2)} mA, more than the ${row.driveMa} mA the outputs of ${row.driver} are rated for; buffer the line or reduce its load (an estimate from your figures: check the data sheets)`,
      );
    }
  },
};
