// Full analysis (parse + model + all checks) of the demo and of generated tables of 5k and
// 50k lines, as medians over repeated in-process runs, and the 50k/5k ratio (linear growth
// would be 10). Targets from the project's issue: demo <= 2 ms, 50k lines <= 250 ms, ratio <= 12.
import { readFileSync } from 'node:fs';
import { analyse } from '../server/src/core/analysis';
import { generateTable } from './generate';
import { row, timeMedian } from './stats';

const demo = readFileSync('examples/halyard-32.pwt', 'utf8');
const t5k = generateTable({ lines: 5000 });
const t50k = generateTable({ lines: 50000 });

for (const [name, text] of [['5k', t5k], ['50k', t50k]] as const) {
  const errors = analyse(text).diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) throw new Error(`generated ${name} table has ${errors.length} errors: ${errors[0].message}`);
}

const demoMs = timeMedian(() => analyse(demo), 200, 20, 'analysing the demo');
const k5Ms = timeMedian(() => analyse(t5k), 30, 3, 'analysing 5k lines');
const k50Ms = timeMedian(() => analyse(t50k), 9, 2, 'analysing 50k lines');

console.log('full analysis (parse + model + all checks), median of repeated in-process runs');
row(`demo (${demo.split('\n').length} lines)`, `${demoMs.toFixed(2)} ms`, '<= 2 ms');
row(`generated ${t5k.split('\n').length} lines`, `${k5Ms.toFixed(1)} ms`);
row(`generated ${t50k.split('\n').length} lines`, `${k50Ms.toFixed(1)} ms`, '<= 250 ms');
row('ratio 50k / 5k', (k50Ms / k5Ms).toFixed(1), '<= 12');
