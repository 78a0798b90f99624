// map-overlap: two rows of a decode map that match a common input combination must give the
// same value, or the field's code there is undefined.
//
// The check must stay cheap on maps of any size, so it never compares every pair of rows:
// each row becomes a mask (the bits its patterns fix) and a value over all the map's input
// bits, and rows are grouped by mask ("shape"). Two rows overlap exactly when they agree on the
// bits both fix, so for a pair of shapes one hash of the rows of one shape, keyed by those
// common bits, answers every row of the other in constant time: the work is (number of
// shapes) x (rows), near-linear for real maps, which have a handful of shapes. For each row it
// finds the earliest earlier row that overlaps it with a different value, and reports at most
// `maxRowsReported` rows one by one, then one line with the exact number of the others; so
// the cap applies while the diagnostics are made, not after. A map so irregular that even this
// would exceed `workBudget` is checked row by row up to the budget and the rest is reported
// as not checked (an error: a map whose rows cannot be shown to agree is not safe to burn).
import type { DecodeMap } from '../model/types';
import { type Check, type CheckContext } from './context';

/** Overlapping rows reported one by one per map; the rest are counted in one diagnostic. */
export const maxRowsReported = 100;
/** Row-against-row-or-bucket steps one map may take (a few tenths of a second at most). */
export const workBudget = 30_000_000;

export const mapOverlap: Check = {
  codes: ['map-overlap'],
  run(ctx) {
    for (const map of ctx.machine.maps.values()) checkMap(ctx, map);
  },
};

/** The rows of a map as masks and values over all its input bits, 32 bits a lane. */
interface EncodedRows {
  lanes: number;
  /** Row r's lane l is at r * lanes + l. */
  masks: Uint32Array;
  values: Uint32Array;
  /** Rows whose patterns fit the inputs; the others (reported elsewhere) overlap nothing. */
  valid: boolean[];
}

function encodeRows(map: DecodeMap): EncodedRows {
  const width = map.inputs.reduce((sum, input) => sum + input.width, 0);
  const lanes = Math.max(1, Math.ceil(width / 32));
  const n = map.rows.length;
  const masks = new Uint32Array(n * lanes);
  const values = new Uint32Array(n * lanes);
  const valid = map.rows.map((row, r) => {
    if (row.patterns.length !== map.inputs.length) return false;
    let bit = 0;
    for (let k = 0; k < map.inputs.length; k++) {
      const pattern = row.patterns[k]!;
      if (pattern.length !== map.inputs[k]!.width) return false;
      for (let i = 0; i < pattern.length; i++, bit++) {
        const ch = pattern[i];
        if (ch === '-') continue;
        const at = r * lanes + (bit >>> 5);
        masks[at] |= 1 << (bit & 31);
        if (ch === '1') values[at] |= 1 << (bit & 31);
      }
    }
    return true;
  });
  return { lanes, masks, values, valid };
}

export interface MapOverlaps {
  /** For each row, the earliest earlier row overlapping it with a different value, or -1. */
  partner: Int32Array;
  /** Rows (from the first) compared with every earlier row; fewer than all when the budget ran out. */
  checkedRows: number;
  /** Different patterns of don't-cares among the rows. */
  shapes: number;
}

/** The overlaps of a map's rows, within `budget` steps of work (see the module comment). */
export function findOverlaps(map: DecodeMap, budget = workBudget): MapOverlaps {
  const rows = encodeRows(map);
  const n = map.rows.length;
  const codes = map.rows.map((row) => row.code);
  const shapes = shapesOf(rows, n);
  const partner = new Int32Array(n).fill(-1);
  const joinWork = 2 * shapes.length * n;
  const pairWork = (n * (n - 1)) / 2;
  let checkedRows = n;
  if (joinWork <= pairWork && joinWork <= budget) joinShapes(rows, codes, shapes, partner);
  else checkedRows = comparePairs(rows, codes, partner, budget);
  return { partner, checkedRows, shapes: shapes.length };
}

/** Reports the overlaps of one map (exported with its budget for tests of the bound). */
export function checkMap(ctx: CheckContext, map: DecodeMap, budget = workBudget): void {
  const n = map.rows.length;
  const { partner, checkedRows, shapes } = findOverlaps(map, budget);
  let reported = 0;
  let more = 0;
  for (let b = 0; b < n; b++) {
    const a = partner[b]!;
    if (a < 0) continue;
    if (reported === maxRowsReported) {
      more++;
      continue;
    }
    reported++;
    const rowA = map.rows[a]!;
    const rowB = map.rows[b]!;
    const common = rowA.patterns.map((p, k) => merge(p, rowB.patterns[k]!)).join(' ');
    ctx.report('map-overlap', rowB.span, `this row (${rowB.value}) and an earlier one (${rowA.value}) both match ${common} in map ${map.name}; narrow one of the patterns`, [{ span: rowA.span, message: `row giving ${rowA.value}` }]);
  }
  if (more > 0) {
    ctx.report('map-overlap', map.symbol.span, `${more} more row(s) of map ${map.name} overlap an earlier row that gives a different value (the first ${maxRowsReported} are shown); narrow their patterns`);
  }
  if (checkedRows < n) {
    ctx.report(
      'map-overlap',
      map.symbol.span,
      `map ${map.name} has ${n} rows in ${shapes} different patterns of don't-cares: too many to show that overlapping rows agree (rows after row ${checkedRows} were not compared); write fewer patterns of don't-cares, or split the map`,
    );
  }
}

interface Shape {
  /** Lanes of the mask all rows of this shape share. */
  mask: Uint32Array;
  /** Rows of this shape, in file order. */
  rows: number[];
}

function shapesOf(rows: EncodedRows, n: number): Shape[] {
  const byMask = new Map<string | number, Shape>();
  for (let r = 0; r < n; r++) {
    if (!rows.valid[r]) continue;
    const mask = rows.masks.subarray(r * rows.lanes, (r + 1) * rows.lanes);
    const key = rows.lanes === 1 ? mask[0]! : mask.join(',');
    let shape = byMask.get(key);
    if (!shape) byMask.set(key, (shape = { mask, rows: [] }));
    shape.rows.push(r);
  }
  return [...byMask.values()];
}

/** The key of a row's value restricted to the bits of `common`. */
function keyOf(rows: EncodedRows, r: number, common: Uint32Array): string | number {
  if (rows.lanes === 1) return (rows.values[r]! & common[0]!) >>> 0;
  let key = '';
  for (let l = 0; l < rows.lanes; l++) key += `${(rows.values[r * rows.lanes + l]! & common[l]!) >>> 0},`;
  return key;
}

/**
 * For every ordered pair of shapes (g, h): hashes the rows of h by the bits both shapes fix,
 * keeping per key the earliest row and the earliest row whose code differs from that one's;
 * those two suffice to name, for any row of g, the earliest earlier row of h that overlaps it
 * with a different code.
 */
function joinShapes(rows: EncodedRows, codes: number[], shapes: Shape[], partner: Int32Array): void {
  const common = new Uint32Array(rows.lanes);
  const largest = Math.max(0, ...shapes.map((shape) => shape.rows.length));
  // Per bucket (a slot), its earliest row and its earliest row of another code; reused.
  const first = new Int32Array(largest);
  const second = new Int32Array(largest);
  for (const h of shapes) {
    for (const g of shapes) {
      for (let l = 0; l < rows.lanes; l++) common[l] = g.mask[l]! & h.mask[l]!;
      const slots = new Map<string | number, number>();
      for (const r of h.rows) {
        const key = keyOf(rows, r, common);
        const slot = slots.get(key);
        if (slot === undefined) {
          first[slots.size] = r;
          second[slots.size] = -1;
          slots.set(key, slots.size);
        } else if (second[slot]! < 0 && codes[r] !== codes[first[slot]!]) second[slot] = r;
      }
      for (const b of g.rows) {
        const slot = slots.get(keyOf(rows, b, common));
        if (slot === undefined) continue;
        const candidate = codes[first[slot]!] !== codes[b] ? first[slot]! : second[slot]!;
        if (candidate >= 0 && candidate < b && (partner[b]! < 0 || candidate < partner[b]!)) partner[b] = candidate;
      }
    }
  }
}

/**
 * Row against every earlier row (stopping at the first overlap), for maps with few rows per
 * shape, while fewer than `budget` comparisons are spent: a row is started only if the budget
 * covers comparing it with every earlier row. Returns how many rows, from the first, were
 * fully compared.
 */
function comparePairs(rows: EncodedRows, codes: number[], partner: Int32Array, budget: number): number {
  const { lanes, masks, values, valid } = rows;
  let spent = 0;
  for (let b = 0; b < codes.length; b++) {
    if (spent + b > budget) return b;
    if (!valid[b]) continue;
    for (let a = 0; a < b; a++) {
      spent++;
      if (!valid[a] || codes[a] === codes[b]) continue;
      let overlaps = true;
      for (let l = 0; l < lanes && overlaps; l++) {
        const both = masks[a * lanes + l]! & masks[b * lanes + l]!;
        overlaps = ((values[a * lanes + l]! ^ values[b * lanes + l]!) & both) === 0;
      }
      if (overlaps) {
        partner[b] = a;
        break;
      }
    }
  }
  return codes.length;
}

function merge(a: string, b: string): string {
  let out = '';
  for (let i = 0; i < a.length; i++) out += a[i] === '-' ? b[i] : a[i];
  return out;
}
