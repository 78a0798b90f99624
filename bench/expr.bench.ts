// Expression evaluation (`node scripts/bench.mjs expr`): evaluations per second of the compiled
// JavaScript function against the reference evaluator, on an ALU-like definition at 32 bits
// (numbers) and at 64 bits (BigInt), and on a batch of seeded random trees of every width. Each
// figure is the median of several timed runs; both paths must give the same results. It
// reports; it does not fail on a missed target.
import { compileExpressions, evaluate, parseExpression, type Expr } from '../server/src/core/parts/expr';
import { ExprGenerator, INPUTS, valuesOf, WIDTHS, widthOf as randomWidthOf } from '../tests/parts/expr/randomExpr';
import { row, timeMedian } from './stats';

const alu = (w: number) => `select fn { add: a + b, sub: a - b, and: a & b, or: a | b, xor: a ^ b, sll: a << b[${Math.log2(w)}:0], srl: a >> b[${Math.log2(w)}:0], sra: a >>> b[${Math.log2(w)}:0], slt: zext(a <s b, ${w}), sltu: zext(a < b, ${w}) }`;
const FN = new Map(['add', 'sub', 'and', 'or', 'xor', 'sll', 'srl', 'sra', 'slt', 'sltu'].map((n, i) => [n, i]));

function measure(label: string, exprs: Expr[], inputs: string[], widthOf: (n: string) => number, values: (n: string) => ReadonlyMap<string, number> | undefined, envs: bigint[][]): void {
  const compiled = compileExpressions(exprs.map((expr, k) => ({ name: `out${k}`, expr })), inputs, widthOf, { values });
  const asInputs = envs.map((env) => env.map((v, k) => (widthOf(inputs[k]) <= 32 ? Number(v) : v)));
  const lookups = envs.map((env) => (name: string) => env[inputs.indexOf(name)]);
  // Both paths agree before anything is timed.
  for (let i = 0; i < envs.length; i++) {
    const got = compiled(asInputs[i]);
    exprs.forEach((e, k) => {
      if (BigInt(got[k]) !== evaluate(e, lookups[i], widthOf, { values })) throw new Error(`${label}: compiled and evaluated disagree`);
    });
  }
  const evaluations = envs.length * exprs.length;
  let sink = 0n;
  const compiledMs = timeMedian(() => {
    for (let r = 0; r < 50; r++) for (const input of asInputs) sink ^= BigInt(compiled(input)[0]);
  }, 7, 3, `${label}: compiled`);
  const evaluatedMs = timeMedian(() => {
    for (const lookup of lookups) for (const e of exprs) sink ^= evaluate(e, lookup, widthOf, { values });
  }, 5, 1, `${label}: evaluated`);
  const compiledRate = (evaluations * 50) / (compiledMs / 1000);
  const evaluatedRate = evaluations / (evaluatedMs / 1000);
  console.log(label);
  row('compiled: evaluations per second', compiledRate.toExponential(2));
  row('evaluate (reference): evaluations per second', evaluatedRate.toExponential(2));
  row('compiled / evaluate', `${(compiledRate / evaluatedRate).toFixed(0)}x`);
  if (sink === -1n) console.log('');
}

const gen = new ExprGenerator(7);
for (const w of [32, 64]) {
  const expr = parseExpression(alu(w), 0).expr!;
  const widths: Record<string, number> = { a: w, b: w, fn: 4 };
  const envs = Array.from({ length: 2000 }, () => [gen.value(w), gen.value(w), BigInt(gen.int(10))]);
  measure(`ALU of ten functions at ${w} bits${w > 32 ? ' (BigInt)' : ' (numbers)'}`, [expr], ['a', 'b', 'fn'], (n) => widths[n], (n) => (n === 'fn' ? FN : undefined), envs);
}
const trees = Array.from({ length: 200 }, () => gen.expr(gen.pick(WIDTHS), 4, false));
const envs = Array.from({ length: 50 }, () => INPUTS.map((n) => gen.value(randomWidthOf(n))));
measure('200 seeded random trees, depth 4, widths 1 to 64', trees, INPUTS, randomWidthOf, valuesOf, envs);
