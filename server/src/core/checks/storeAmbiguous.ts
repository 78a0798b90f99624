// store-ambiguous: each store's address lines must carry everything its own signals depend
// on. Found by encoding: where two situations the table treats differently land on one address
// of a store and disagree on a bit both need, the store cannot hold its signals. Only runs when
// some store sees less than the whole input universe (more than one store, or a store without
// some input), since a store that sees everything cannot be ambiguous.
import { encodeMachine } from '../encode/encoder';
import { pointInputs, universeOf } from '../encode/universe';
import { type Check } from './context';

/** Universe size up to which the check runs on every edit (2^18 points, a few ms per 2^13). */
const maxCheckedBits = 18;

export const storeAmbiguous: Check = {
  codes: ['store-ambiguous'],
  run(ctx) {
    const machine = ctx.machine;
    const stores = machine.stores.filter((s) => s.word && s.address);
    if (stores.length === 0) return;
    const universe = universeOf(machine);
    const seesAll = (store: (typeof stores)[number]) => {
      const lines = store.address!.sources;
      const stepLines = lines.filter((s) => s.input.kind === 'step').reduce((n, s) => n + s.hi - s.lo + 1, 0);
      const irLines = lines.filter((s) => s.input.kind === 'ir').reduce((n, s) => n + s.hi - s.lo + 1, 0);
      const flagLines = lines.filter((s) => s.input.kind === 'flag').length;
      return stepLines >= universe.stepBits && irLines >= universe.irBits.length && flagLines >= universe.flags.length;
    };
    if (stores.every(seesAll) || universe.bits > maxCheckedBits) return;
    const encoded = encodeMachine(machine);
    for (const amb of encoded.ambiguities.slice(0, 20)) {
      const store = stores.find((s) => s.name === amb.store)!;
      const describe = (point: number) => {
        const decoded = encoded.decoder.decode(pointInputs(universe, point));
        return `${decoded.cls ? `class ${decoded.cls.name}` : 'no class'} step ${decoded.step}`;
      };
      const placement = store.word!.placements.find((p) => p.signal === amb.signal);
      ctx.report(
        'store-ambiguous',
        placement?.span ?? store.symbol.span,
        `store ${store.name} cannot hold \`${amb.signal}\`: ${describe(amb.points[0])} and ${describe(amb.points[1])} need different values at its address ${amb.address}, because its address lines do not tell them apart; add the missing inputs (such as \`step\`) to its address or move \`${amb.signal}\` to another store`,
      );
    }
  },
};
