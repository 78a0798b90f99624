// The encoder against brute force on random small machines: a generator writes random tables
// (strobes of both polarities, a field, decode maps, classes with guarded steps), and an
// independent, deliberately simple evaluator computes every ROM word from the generated
// description itself; the encoded store must match it at every address.
import fc from 'fast-check';
import { describe, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';

interface Alt {
  guard: { input: 'taken' | 'f7b5' | 'funct3'; bits: string } | 'else' | null;
  strobes: number[];
  field?: number | 'map';
}
interface Cls {
  opcode: number;
  steps: Alt[][];
}
interface Spec {
  lowActive: boolean[];
  classes: Cls[];
  mapRows: { funct3: string; value: number }[];
}

const nStrobes = 5;
const opcodes = [0b0110011, 0b0010011, 0b0000011, 0b1100011, 0b0001011];

const altArb = (guard: Alt['guard']): fc.Arbitrary<Alt> =>
  fc.record({
    strobes: fc.uniqueArray(fc.integer({ min: 0, max: nStrobes - 1 }), { maxLength: 3 }),
    field: fc.option(fc.oneof(fc.integer({ min: 0, max: 3 }), fc.constant<'map'>('map')), { nil: undefined }),
  }).map((a) => ({ ...a, guard }));

const stepArb: fc.Arbitrary<Alt[]> = fc.oneof(
  altArb(null).map((a) => [a]),
  fc.tuple(altArb({ input: 'taken', bits: '1' }), altArb('else')),
  fc.tuple(altArb({ input: 'funct3', bits: '0-1' }), altArb({ input: 'funct3', bits: '1--' })),
  fc.tuple(altArb({ input: 'f7b5', bits: '0' }), altArb({ input: 'f7b5', bits: '1' })),
);

const specArb: fc.Arbitrary<Spec> = fc.record({
  lowActive: fc.array(fc.boolean(), { minLength: nStrobes, maxLength: nStrobes }),
  classes: fc.uniqueArray(fc.record({ opcode: fc.constantFrom(...opcodes), steps: fc.array(stepArb, { minLength: 1, maxLength: 4 }) }), { selector: (c) => c.opcode, minLength: 1, maxLength: 4 }),
  mapRows: fc.constantFrom(
    [{ funct3: '0--', value: 1 }, { funct3: '1--', value: 2 }],
    [{ funct3: '---', value: 3 }],
    [{ funct3: '00-', value: 0 }, { funct3: '01-', value: 3 }, { funct3: '1-0', value: 2 }],
  ),
});

function toTable(spec: Spec): string {
  const lines = ['bus b 8', 'part r register 8', 'field f 2 { v0=0 v1=1 v2=2 v3=3 }', 'strobe done end'];
  for (let i = 0; i < nStrobes; i++) lines.push(`strobe s${i} clock b -> r active ${spec.lowActive[i] ? 'low' : 'high'}`);
  lines.push('part cmp compare b b -> taken cond=funct3');
  lines.push('map m (funct3) -> f', '  ' + spec.mapRows.map((r) => `${r.funct3} v${r.value}`).join('  '));
  lines.push('word 8 as 1 x 8', '  ' + Array.from({ length: nStrobes }, (_, i) => `s${i} ${i}`).join('  ') + '  f 5..6  done 7');
  lines.push('address 12', '  step 0..1  taken 2  f7b5 3  funct3 4..6  opcode 7..11');
  for (const cls of spec.classes) {
    lines.push(`class C${cls.opcode} opcode=${cls.opcode.toString(2).padStart(7, '0')}`);
    cls.steps.forEach((alts, step) => {
      alts.forEach((alt) => {
        const guard = alt.guard === null ? '' : alt.guard === 'else' ? ' else' : ` if ${alt.guard.input}=${alt.guard.bits}`;
        const actions = [...alt.strobes.map((s) => `s${s}`), ...(alt.field === undefined ? [] : [alt.field === 'map' ? 'f=m' : `f=v${alt.field}`])];
        if (step === cls.steps.length - 1) actions.push('done');
        lines.push(`  ${step}${guard}: ${actions.join(', ')}`);
      });
    });
  }
  return lines.join('\n') + '\n';
}

const matches = (bits: string, value: number) => [...bits].every((ch, i) => ch === '-' || Number(ch) === ((value >> (bits.length - 1 - i)) & 1));

/** The ROM word at an address, straight from the generated description. */
function bruteForce(spec: Spec, address: number): number {
  const step = address & 3;
  const taken = (address >> 2) & 1;
  const f7b5 = (address >> 3) & 1;
  const funct3 = (address >> 4) & 7;
  const opcode = (((address >> 7) & 31) << 2) | 3;
  const fill = spec.lowActive.reduce((w, low, i) => w | ((low ? 1 : 0) << i), 0);
  const cls = spec.classes.find((c) => c.opcode === opcode);
  const alts = cls?.steps[step];
  if (!alts) return fill;
  const value = { taken, f7b5, funct3 };
  const alt = alts.find((a) => a.guard && a.guard !== 'else' && matches(a.guard.bits, value[a.guard.input])) ?? alts.find((a) => a.guard === null || a.guard === 'else');
  if (!alt) return fill;
  let word = fill;
  for (const s of alt.strobes) word = spec.lowActive[s] ? word & ~(1 << s) : word | (1 << s);
  if (alt.field !== undefined) {
    const code = alt.field === 'map' ? spec.mapRows.find((r) => matches(r.funct3, funct3))?.value : alt.field;
    if (code === undefined) return fill;
    word |= code << 5;
  }
  if (step === cls!.steps.length - 1) word |= 1 << 7;
  return word;
}

describe('the encoder against brute force', () => {
  it('agrees at every address of 300 random machines (seeded)', () => {
    let machines = 0;
    fc.assert(
      fc.property(specArb, (spec) => {
        const text = toTable(spec);
        const { machine } = analyse(text);
        const enc = encodeMachine(machine).stores[0];
        machines++;
        for (let address = 0; address < 4096; address++) {
          const expected = bruteForce(spec, address);
          if (enc.words[address] !== expected) {
            throw new Error(`address ${address.toString(2)}: encoder ${enc.words[address].toString(2)}, brute force ${expected.toString(2)}\n${text}`);
          }
        }
      }),
      { numRuns: 300, seed: 1234 },
    );
    console.log(`fuzz: encoder vs brute force, ${machines} machines x 4096 addresses, 0 differences`);
  }, 300_000);
});
