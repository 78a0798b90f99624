// The compiled fast path agrees exactly with the reference evaluator: on seeded random trees
// (every operator, widths 1 to 64, narrow numbers and wide BigInts mixed, selects with and without
// `else`), including when an uncovered select code is reported; and on a list whose later
// expressions read earlier ones; and on trees reading array elements through the caller's
// reader, with the same reads in the same order and reads past the end reported alike.
import { describe, expect, it } from 'vitest';
import { checkExpression, compileExpressions, evaluate, formatExpression, parseExpression, scopeOf, type Expr, type IndexExpr, type NameInfo, type SelectExpr } from '../../../server/src/core/parts/expr';
import { ARRAYS, elementsOf, ExprGenerator, INPUTS, valuesOf, WIDTHS, widthOf } from './randomExpr';

const scope = scopeOf(new Map<string, NameInfo>([
  ...INPUTS.map((n): [string, NameInfo] => [n, { width: widthOf(n), values: valuesOf(n) }]),
  ...ARRAYS.map((a): [string, NameInfo] => [a.name, { width: a.width, elements: a.elements }]),
]));

/**
 * Array storage for one input set: register arrays hold random values, the memory a byte
 * pattern of its address. Some elements carry a bit above their width (the reader must mask it)
 * and some come back as numbers, others as BigInt, decided by the index alone so both paths see
 * the same. Every read is logged.
 */
function storage(gen: ExprGenerator) {
  const registers = new Map(ARRAYS.filter((a) => a.elements !== 'memory').map((a) => [a.name, Array.from({ length: a.elements as number }, () => gen.value(a.width) + (gen.int(4) === 0 ? 1n << BigInt(a.width) : 0n))]));
  const seed = gen.int(251);
  const log: string[] = [];
  const element = (array: string, index: number): number | bigint => {
    log.push(`${array}[${index}]`);
    const v = array === 'mem' ? BigInt(((index % 1009) * 37 + seed) % 512) : registers.get(array)![index];
    return index % 2 === 0 && v <= BigInt(Number.MAX_SAFE_INTEGER) ? Number(v) : v;
  };
  return { element, log };
}

describe('compiled expressions', () => {
  it('every generated tree checks clean at its width (the generator makes only correct expressions)', () => {
    const gen = new ExprGenerator(1);
    for (let i = 0; i < 500; i++) {
      const width = gen.pick(WIDTHS);
      const expr = gen.expr(width, 4, true);
      const result = checkExpression(expr, scope, width);
      expect(result.diagnostics, formatExpression(expr)).toEqual([]);
      expect(result.width).toBe(width);
    }
  });

  it('equal evaluate on 2 000 seeded random trees, 8 input sets each, uncovered selects reported alike', () => {
    const gen = new ExprGenerator(20260601);
    let uncoveredSeen = 0;
    const results = new Set<bigint>();
    for (let i = 0; i < 2000; i++) {
      const width = gen.pick(WIDTHS);
      const expr = gen.expr(width, 1 + gen.int(5), true);
      const seenCompiled: [SelectExpr, bigint][] = [];
      const compiled = compileExpressions([{ name: 'out', expr, width }], INPUTS, widthOf, { values: valuesOf, onUncovered: (s, c) => seenCompiled.push([s, c]) });
      for (let k = 0; k < 8; k++) {
        const env = new Map(INPUTS.map((n) => [n, gen.value(widthOf(n))]));
        const seenReference: [SelectExpr, bigint][] = [];
        const expected = evaluate(expr, (n) => env.get(n)!, widthOf, { expectedWidth: width, values: valuesOf, onUncovered: (s, c) => seenReference.push([s, c]) });
        seenCompiled.length = 0;
        const [got] = compiled(INPUTS.map((n) => (widthOf(n) <= 32 && gen.int(2) ? Number(env.get(n)!) : env.get(n)!)));
        const text = `${formatExpression(expr)} with ${[...env].map(([n, v]) => `${n}=${v}`).join(' ')}`;
        expect(typeof got, text).toBe(width <= 32 ? 'number' : 'bigint');
        expect(BigInt(got), text).toBe(expected);
        expect(expected < 1n << BigInt(width), text).toBe(true);
        expect(seenCompiled, text).toEqual(seenReference);
        uncoveredSeen += seenReference.length;
        results.add(expected);
      }
    }
    // The property is not vacuous: uncovered codes were met and the results vary.
    expect(uncoveredSeen).toBeGreaterThan(50);
    expect(results.size).toBeGreaterThan(2000);
  });

  it('equal evaluate on 2 000 seeded random trees that read arrays: same reads in the same order, reads past the end reported alike', () => {
    const gen = new ExprGenerator(20260602, { arrays: true });
    let reads = 0;
    let pastEnd = 0;
    for (let i = 0; i < 2000; i++) {
      const width = gen.pick(WIDTHS);
      const expr = gen.expr(width, 1 + gen.int(5), true);
      expect(checkExpression(expr, scope, width).diagnostics, formatExpression(expr)).toEqual([]);
      let store: ReturnType<typeof storage> | undefined;
      const compiledEvents: string[] = [];
      const compiled = compileExpressions([{ name: 'out', expr, width }], INPUTS, widthOf, {
        values: valuesOf,
        elements: elementsOf,
        element: (array, index) => store!.element(array, index),
        onUncovered: (_s, c) => compiledEvents.push(`uncovered ${c}`),
        onOutOfRange: (read: IndexExpr, index) => compiledEvents.push(`past ${formatExpression(read)} ${index}`),
      });
      for (let k = 0; k < 4; k++) {
        const env = new Map(INPUTS.map((n) => [n, gen.value(widthOf(n))]));
        store = storage(gen);
        const referenceEvents: string[] = [];
        const expected = evaluate(expr, (n) => env.get(n)!, widthOf, {
          expectedWidth: width,
          values: valuesOf,
          elements: elementsOf,
          element: store.element,
          onUncovered: (_s, c) => referenceEvents.push(`uncovered ${c}`),
          onOutOfRange: (read, index) => referenceEvents.push(`past ${formatExpression(read)} ${index}`),
        });
        const referenceReads = store.log.splice(0);
        compiledEvents.length = 0;
        const [got] = compiled(INPUTS.map((n) => (widthOf(n) <= 32 && gen.int(2) ? Number(env.get(n)!) : env.get(n)!)));
        const text = formatExpression(expr);
        expect(typeof got, text).toBe(width <= 32 ? 'number' : 'bigint');
        expect(BigInt(got), text).toBe(expected);
        expect(store.log, text).toEqual(referenceReads);
        expect(compiledEvents, text).toEqual(referenceEvents);
        reads += referenceReads.length;
        pastEnd += referenceEvents.filter((e) => e.startsWith('past')).length;
      }
    }
    // Not vacuous: many reads, and reads past a register array's end.
    expect(reads).toBeGreaterThan(2000);
    expect(pastEnd).toBeGreaterThan(50);
  });

  it('reads an element through the reader, masked to its width; past the end gives 0 and tells the caller', () => {
    const e = (t: string) => parseExpression(t, 0).expr!;
    const widths: Record<string, number> = { r: 8, m: 8, i: 4, a: 32 };
    const elements = (n: string) => (n === 'r' ? 10 : n === 'm' ? ('memory' as const) : undefined);
    const reads: string[] = [];
    const element = (array: string, index: number) => (reads.push(`${array}[${index}]`), array === 'r' ? 0x100 + index : index & 0xff);
    const past: bigint[] = [];
    const options = { elements, element, onOutOfRange: (_r: IndexExpr, index: bigint) => past.push(index) };
    // Little-endian halfword from the memory (RISC-V Unprivileged ISA 20191213, 2.6).
    const half = e('{m[a + 1], m[a]}');
    expect(evaluate(half, () => 0x1234n, (n) => widths[n], options)).toBe(0x3534n);
    const run = compileExpressions([{ name: 'y', expr: half }, { name: 'z', expr: e('r[i]') }], ['a', 'i'], (n) => widths[n], options);
    reads.length = 0;
    expect(run([0x1234, 9])).toEqual([0x3534, 9]);
    expect(reads).toEqual(['m[4661]', 'm[4660]', 'r[9]']);
    expect(run([0, 12])).toEqual([0x0100, 0]);
    expect(past).toEqual([12n]);
    expect(evaluate(e('r[i]'), () => 15n, (n) => widths[n], options)).toBe(0n);
    expect(past).toEqual([12n, 15n]);
    // No reader, no run: an expression that reads an array cannot be computed without its storage.
    expect(() => evaluate(e('r[i]'), () => 0n, (n) => widths[n], { elements })).toThrow(/without an `element` reader/);
    expect(() => compileExpressions([{ name: 'y', expr: e('r[3]') }], [], (n) => widths[n], { elements })).toThrow(/without an `element` reader/);
    expect(() => compileExpressions([{ name: 'y', expr: e('r[3]') }], ['r'], (n) => widths[n], options)).toThrow(/is an array/);
  });

  it('reads earlier expressions of the list and returns the results in list order', () => {
    const parse = (t: string) => parseExpression(t, 0).expr!;
    const widths: Record<string, number> = { a: 32, b: 32 };
    const list = [
      { name: 'sum', expr: parse('{carry(a, b), a + b}') },
      { name: 'zero', expr: parse('sum[31:0] == 0') },
      { name: 'wide', expr: parse('{rep(sum[32], 31), sum[31:0]} ^ zext(sum, 64)[62:0]') },
    ];
    const run = compileExpressions(list, ['a', 'b'], (n) => widths[n]);
    // sum is 33 bits wide, so a BigInt; zero is a number.
    expect(run([0xffffffff, 1])).toEqual([1n << 32n, 1, 0x7ffffffe_00000000n]);
    expect(run([5n, 7n])).toEqual([12n, 0, 0n]);
  });

  it('refuses what does not check or names an unknown input, instead of computing nonsense', () => {
    const e = (t: string) => parseExpression(t, 0).expr!;
    expect(() => compileExpressions([{ name: 'y', expr: e('a + b') }], ['a'], () => 8)).toThrow(/`b` is not a known signal/);
    expect(() => compileExpressions([{ name: 'y', expr: e('a + 0x100') }], ['a'], () => 8)).toThrow(/expr-width/);
    expect(() => evaluate(e('a[9]'), () => 0n, () => 8)).toThrow(/expr-slice/);
  });

  it('masks inputs to their widths as the evaluator does', () => {
    const expr: Expr = parseExpression('a + 1', 0).expr!;
    const run = compileExpressions([{ name: 'y', expr }], ['a'], () => 4);
    expect(run([0x1f])).toEqual([0]);
    expect(run([-1])).toEqual([0]);
    expect(evaluate(expr, () => 0x1fn, () => 4)).toBe(0n);
  });
});
