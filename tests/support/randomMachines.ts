// Seeded random machines for the fit-safety tests: two buses with three drivers each (enables
// of both polarities, one a memory read), registers clocked from the buses, a memory write, a
// counter, end and trap strobes and a free field, behind an 11-line address (step counter,
// funct3, opcode). Classes take random opcodes and random steps with funct3-guarded
// alternatives; each step drives every bus at most once and only loads from a driven bus, so
// every machine analyses without errors. Most addresses are uncovered, which is the point:
// that is where unconstrained don't-cares used to put two drivers on one bus.
import { analyse, errorCount } from '../../server/src/core/analysis';
import { seededRandom } from '../logic/randomTables';

export { seededRandom };

const OPCODES = ['0110011', '0010011', '0000011', '0100011', '1100011', '0001011', '0101011', '1011011'];

/** The text of random machine number `seed`. */
export function randomMachineText(seed: number): string {
  const rnd = seededRandom(seed);
  const pick = <T>(list: readonly T[]): T => list[Math.floor(rnd() * list.length)];
  const polarity = () => (rnd() < 0.5 ? 'low' : 'high');
  const lines = [
    `# random machine ${seed} (tests/support/randomMachines.ts)`,
    'bus p 8',
    'bus q 8 keeper',
    'part r0 register 8',
    'part r1 register 8',
    'part r2 register 8',
    'part mar register 8',
    'part mem memory 8 addr=mar',
    'part c counter 8 inc=1',
    `strobe r0.oe enable r0 -> p active ${polarity()}`,
    `strobe r1.oe enable r1 -> p active ${polarity()}`,
    `strobe mem.rd read mem -> p active ${polarity()}`,
    `strobe r2.oe enable r2 -> q active ${polarity()}`,
    `strobe c.oe enable c -> q active ${polarity()}`,
    `strobe r0.q enable r0 -> q active ${polarity()}`,
    `strobe r1.ck clock p -> r1 active ${polarity()}`,
    `strobe r2.ck clock q -> r2 active ${polarity()}`,
    `strobe mar.ck clock p -> mar active ${polarity()}`,
    `strobe mem.wr write q -> mem active ${polarity()}`,
    `strobe c.inc count c active ${polarity()}`,
    `strobe stop trap active ${polarity()}`,
    `strobe done end active ${polarity()}`,
    'field f 2 { v0=0 v1=1 v2=2 v3=3 }',
    'word 16 as 2 x 8',
    '  r0.oe 0  r1.oe 1  mem.rd 2  r2.oe 3  c.oe 4  r0.q 5  r1.ck 6  r2.ck 7',
    '  mar.ck 8  mem.wr 9  c.inc 10  stop 11  done 12  f 13..14',
    'address 11',
    '  step 0..2  funct3 3..5  opcode 6..10',
  ];
  const pDrivers = ['r0.oe', 'r1.oe', 'mem.rd'];
  const qDrivers = ['r2.oe', 'c.oe', 'r0.q'];
  const action = (last: boolean): string => {
    const out: string[] = [];
    const p = rnd() < 0.7 ? pick(pDrivers) : undefined;
    const q = rnd() < 0.7 ? pick(qDrivers) : undefined;
    if (p) out.push(p);
    if (q) out.push(q);
    if (p && p !== 'r1.oe' && rnd() < 0.5) out.push('r1.ck');
    if (p && rnd() < 0.4) out.push('mar.ck');
    if (q && q !== 'r2.oe' && rnd() < 0.5) out.push('r2.ck');
    if (q && rnd() < 0.2) out.push('mem.wr');
    if (rnd() < 0.3) out.push('c.inc');
    if (rnd() < 0.5) out.push(`f=v${Math.floor(rnd() * 4)}`);
    if (last) out.push(rnd() < 0.15 ? 'stop' : 'done');
    if (last && out.includes('stop')) out.push('done');
    return out.join(', ') || 'c.inc';
  };
  const nClasses = 1 + Math.floor(rnd() * 4);
  const opcodes = [...OPCODES].sort(() => rnd() - 0.5).slice(0, nClasses);
  for (const opcode of opcodes) {
    lines.push(`class K${opcode} opcode=${opcode}`);
    const nSteps = 1 + Math.floor(rnd() * 5);
    for (let step = 0; step < nSteps; step++) {
      const last = step === nSteps - 1;
      if (rnd() < 0.3) {
        lines.push(`  ${step} if funct3=0--: ${action(last)}`);
        lines.push(`  ${step} else: ${action(last)}`);
      } else {
        lines.push(`  ${step}: ${action(last)}`);
      }
    }
  }
  return lines.join('\n') + '\n';
}

/** Random machine `seed`, analysed; throws with the text when it has errors (a generator bug). */
export function randomMachine(seed: number): { text: string; machine: ReturnType<typeof analyse>['machine'] } {
  const text = randomMachineText(seed);
  const analysis = analyse(text);
  if (errorCount(analysis.diagnostics) > 0) {
    throw new Error(`random machine ${seed} has errors:\n${analysis.diagnostics.map((d) => d.message).join('\n')}\n${text}`);
  }
  return { text, machine: analysis.machine };
}
