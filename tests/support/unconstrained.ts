// The truth table `fit` used before its don't-cares were made safe: every output a don't-care at
// every address no step reaches. Unsafe (it lets two drivers share a bus there), so it lives
// only here, for the benchmark's cost figure and for tests that must see the check fail on it.
import { createTruthTable, type TruthTable } from '../../server/src/core/logic/truthTable';

export function unconstrainedTable(table: TruthTable, unreachable: Uint32Array): TruthTable {
  const loose = createTruthTable(table.inputNames, table.outputs.map((o) => o.name));
  table.outputs.forEach((o, k) => {
    for (let w = 0; w < table.nWords; w++) {
      loose.outputs[k].dc[w] = o.dc[w] | unreachable[w];
      loose.outputs[k].on[w] = o.on[w] & ~unreachable[w];
    }
  });
  return loose;
}
