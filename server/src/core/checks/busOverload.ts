// bus-overload: every part on a bus loads each line (inputs, idle drivers' leakage, the
// keeper's overdrive current, an indicator LED); a driver rated for less than that load cannot
// hold valid levels. Each driver is checked on its own, so the weakest is flagged first.
import { budgetOf } from '../budget/budget';
import { type Check } from './context';

export const busOverload: Check = {
  codes: ['bus-overload'],
  run(ctx) {
    for (const row of budgetOf(ctx.machine).buses) {
      if (row.loadMa === undefined || row.driveMa === undefined || row.loadMa <= row.driveMa) continue;
      ctx.report(
        'bus-overload',
        row.span,
        `\`${row.driver}\` is rated for ${row.driveMa} mA per line but each line of bus \`${row.name}\` loads it with ${row.loadMa.toFixed(2)} mA (${row.reaches.length} part(s)${row.ledMa ? ', an LED' : ''}${ctx.machine.buses.get(row.name)?.keeper ? ', the keeper' : ''}); use a stronger driver or a bus buffer (an estimate from your figures: check the data sheets)`,
      );
    }
  },
};
