// map-overlap on maps of every size: rows that overlap with different values are found
// without comparing every pair (grouped by their pattern of don't-cares), each overlapping
// row is reported against the earliest row it clashes with, at most 100 one by one and the
// rest counted exactly in one more diagnostic, and a map too irregular to check within the
// bound says so instead of passing silently.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { CheckContext } from '../../server/src/core/checks/context';
import { checkMap, findOverlaps, maxRowsReported } from '../../server/src/core/checks/mapOverlap';
import { bigMapTable } from '../support/hostile';

const overlaps = (text: string) => analyse(text).diagnostics.filter((d) => d.code === 'map-overlap');

/** The map of bigMapTable with the given rows. */
function mapWithRows(rows: string[]): string {
  return bigMapTable(0, 'distinct').replace('map fn (ir[31:16]) -> alu.fn\n', `map fn (ir[31:16]) -> alu.fn\n${rows.map((r) => `  ${r}\n`).join('')}`);
}

describe('map-overlap', () => {
  it('names the earliest earlier row each row clashes with, across patterns of different shapes', () => {
    const text = mapWithRows(['0000000000000000 add', '1--------------- add', '1111111111111111 add', '11-------------- sub', '0000000000000000 add', '-0-------------- sub']);
    const found = overlaps(text);
    const lineOf = (offset: number) => text.slice(0, offset).split('\n').length;
    const rowLine = (n: number) => lineOf(text.indexOf('map fn')) + n;
    // Row 4 (sub) clashes with row 2 (1---) and row 3 (1111); row 6 (sub, -0--) with row 1.
    expect(found.map((d) => [lineOf(d.span.start), lineOf(d.related![0].span.start)])).toEqual([[rowLine(4), rowLine(2)], [rowLine(6), rowLine(1)]]);
    expect(found[0].message).toBe('this row (sub) and an earlier one (add) both match 11-------------- in map fn; narrow one of the patterns');
    expect(found[1].message).toBe('this row (sub) and an earlier one (add) both match 0000000000000000 in map fn; narrow one of the patterns');
  });

  it('is silent on rows that agree or never meet', () => {
    expect(overlaps(mapWithRows(['0--------------- add', '1--------------- sub', '0000000000000000 add', '0--------------- add']))).toEqual([]);
    expect(overlaps(bigMapTable(5000, 'distinct'))).toEqual([]);
  });

  it('reports 100 rows one by one and counts the others exactly, on 6000 rows that all overlap', () => {
    const found = overlaps(bigMapTable(6000, 'overlapping'));
    expect(found).toHaveLength(maxRowsReported + 1);
    // Rows 2..6000 each clash with row 1 or row 2 (alternating values): 5999 rows, 100 shown.
    expect(found.filter((d) => d.message.startsWith('5899 more row(s) of map fn overlap an earlier row that gives a different value (the first 100 are shown)'))).toHaveLength(1);
  });

  it('agrees with comparing every pair, on scattered rows of many shapes', () => {
    const machine = analyse(bigMapTable(600, 'scattered')).machine;
    const map = machine.maps.get('fn')!;
    const fixed = (p: string, q: string) => [...p].every((c, i) => c === '-' || q[i] === '-' || c === q[i]);
    const expected = map.rows.map((b, j) => map.rows.findIndex((a, i) => i < j && a.code !== b.code && fixed(a.patterns[0], b.patterns[0])));
    const result = findOverlaps(map);
    expect(result.shapes).toBeGreaterThan(100);
    expect(result.checkedRows).toBe(600);
    expect([...result.partner]).toEqual(expected);
  });

  it('says which rows it could not compare when a map is beyond the bound, as an error', () => {
    const text = bigMapTable(600, 'distinct');
    const map = analyse(text).machine.maps.get('fn')!;
    // One shape: the grouped walk costs 2 x 600 steps; a budget below that forces the pairwise walk.
    const bounded = findOverlaps(map, 1000);
    expect(bounded.checkedRows).toBe(45); // rows 1..45 cost 0 + 1 + ... + 44 = 990 comparisons
    expect(findOverlaps(map, 1200).checkedRows).toBe(600);
    const ctx = new CheckContext(analyse(text).machine, text);
    checkMap(ctx, map, 1000);
    expect(ctx.diagnostics.map((d) => [d.severity, text.slice(d.span.start, d.span.end), d.message])).toEqual([
      ['error', 'fn', "map fn has 600 rows in 1 different patterns of don't-cares: too many to show that overlapping rows agree (rows after row 45 were not compared); write fewer patterns of don't-cares, or split the map"],
    ]);
  });
});
