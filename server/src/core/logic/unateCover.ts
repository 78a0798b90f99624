// Minimum unate covering with unit column costs: choose the fewest columns so that every row
// holds at least one chosen column. Reductions (essential columns, row dominance, column
// dominance) then branch-and-bound with an independent-row lower bound, bounded by a node
// budget after which the best cover found so far is returned and marked as not proven minimal.
// It deliberately knows nothing about cubes; rows are plain lists of column numbers.
import { popcount } from './bits';
import { invariant } from './errors';

export interface CoverSolution {
  /** Chosen column numbers, ascending. */
  readonly columns: number[];
  /** True when the search finished, so no smaller cover exists. */
  readonly optimal: boolean;
}

export interface CoverOptions {
  /** Branch-and-bound nodes to explore before settling for the best cover found. */
  readonly nodeLimit?: number;
}

/** Rows over which dominance checks are still affordable at every node. */
const DOMINANCE_ROW_LIMIT = 3000;

type Bitset = Uint32Array;

function hasBit(set: Bitset, index: number): boolean {
  return (set[index >>> 5] & (1 << (index & 31))) !== 0;
}

function bitsetCount(set: Bitset): number {
  let count = 0;
  for (let i = 0; i < set.length; i++) count += popcount(set[i]);
  return count;
}

function isSubset(a: Bitset, b: Bitset): boolean {
  for (let i = 0; i < a.length; i++) if ((a[i] & ~b[i]) !== 0) return false;
  return true;
}

function intersectsSet(a: Bitset, b: Bitset): boolean {
  for (let i = 0; i < a.length; i++) if ((a[i] & b[i]) !== 0) return true;
  return false;
}

function members(set: Bitset): number[] {
  const result: number[] = [];
  for (let i = 0; i < set.length; i++) {
    let word = set[i];
    while (word !== 0) {
      result.push(i * 32 + (31 - Math.clz32(word & -word)));
      word &= word - 1;
    }
  }
  return result;
}

interface SearchState {
  best: number[];
  nodes: number;
  readonly nodeLimit: number;
  exhausted: boolean;
  readonly nWords: number;
}

/**
 * Reduces a matrix in place of a copy: returns the remaining rows and the columns forced in,
 * or null when some row can no longer be covered.
 */
function reduceMatrix(inputRows: Bitset[], nWords: number): { rows: Bitset[]; forced: number[] } | null {
  let rows = inputRows;
  const forced: number[] = [];
  for (;;) {
    let changed = false;
    // Essential columns: a row with a single column forces it.
    for (const row of rows) {
      const count = bitsetCount(row);
      if (count === 0) return null;
      if (count === 1) {
        const column = members(row)[0];
        forced.push(column);
        rows = rows.filter((r) => !hasBit(r, column));
        changed = true;
        break;
      }
    }
    if (changed) continue;
    if (rows.length === 0 || rows.length > DOMINANCE_ROW_LIMIT) break;
    // Row dominance: a row that contains another row is satisfied whenever that row is.
    const sorted = [...rows].sort((a, b) => bitsetCount(a) - bitsetCount(b));
    const keptRows: Bitset[] = [];
    for (const row of sorted) {
      if (!keptRows.some((k) => isSubset(k, row))) keptRows.push(row);
    }
    if (keptRows.length !== rows.length) changed = true;
    rows = keptRows;
    // Column dominance: a column whose rows are a subset of another column's rows is never needed.
    const columnRows = new Map<number, Bitset>();
    const rowWords = Math.ceil(rows.length / 32);
    rows.forEach((row, rowIndex) => {
      for (const column of members(row)) {
        let set = columnRows.get(column);
        if (!set) {
          set = new Uint32Array(rowWords);
          columnRows.set(column, set);
        }
        set[rowIndex >>> 5] |= 1 << (rowIndex & 31);
      }
    });
    const columns = [...columnRows.keys()].sort((a, b) => a - b);
    const dropped = new Set<number>();
    for (const a of columns) {
      const rowsOfA = columnRows.get(a)!;
      // Only columns sharing a's first row can dominate a.
      const firstRow = members(rowsOfA)[0];
      for (const b of members(rows[firstRow])) {
        if (a === b || dropped.has(b)) continue;
        const rowsOfB = columnRows.get(b)!;
        if (isSubset(rowsOfA, rowsOfB)) {
          // Equal columns: keep the lower-numbered one so the choice is deterministic.
          if (isSubset(rowsOfB, rowsOfA) && a < b) continue;
          dropped.add(a);
          break;
        }
      }
    }
    if (dropped.size > 0) {
      const keepMask = new Uint32Array(nWords).fill(0xffffffff);
      for (const column of dropped) keepMask[column >>> 5] &= ~(1 << (column & 31));
      rows = rows.map((row) => row.map((word, i) => word & keepMask[i]) as Bitset);
      changed = true;
    }
    if (!changed) break;
  }
  return { rows, forced };
}

/** Rows pairwise sharing no column: each needs its own chosen column. */
function independentRowBound(rows: Bitset[]): number {
  const sorted = [...rows].sort((a, b) => bitsetCount(a) - bitsetCount(b));
  const chosen: Bitset[] = [];
  for (const row of sorted) if (!chosen.some((c) => intersectsSet(c, row))) chosen.push(row);
  return chosen.length;
}

function greedyCover(rows: Bitset[]): number[] {
  let remaining = rows;
  const chosen: number[] = [];
  while (remaining.length > 0) {
    const counts = new Map<number, number>();
    for (const row of remaining) for (const column of members(row)) counts.set(column, (counts.get(column) ?? 0) + 1);
    let bestColumn = -1;
    let bestCount = 0;
    for (const [column, count] of counts) {
      if (count > bestCount || (count === bestCount && column < bestColumn)) {
        bestColumn = column;
        bestCount = count;
      }
    }
    invariant(bestColumn >= 0, 'greedy cover found an empty row');
    chosen.push(bestColumn);
    remaining = remaining.filter((row) => !hasBit(row, bestColumn));
  }
  return chosen;
}

function search(rows: Bitset[], chosen: number[], state: SearchState): void {
  if (state.nodes >= state.nodeLimit) {
    state.exhausted = true;
    return;
  }
  state.nodes++;
  const reduced = reduceMatrix(rows, state.nWords);
  if (!reduced) return;
  const picked = [...chosen, ...reduced.forced];
  if (picked.length >= state.best.length) return;
  if (reduced.rows.length === 0) {
    state.best = picked;
    return;
  }
  if (picked.length + independentRowBound(reduced.rows) >= state.best.length) return;
  // Branch on the shortest row: one of its columns must be chosen.
  let branchRow = reduced.rows[0];
  for (const row of reduced.rows) if (bitsetCount(row) < bitsetCount(branchRow)) branchRow = row;
  const frequency = (column: number) => reduced.rows.filter((r) => hasBit(r, column)).length;
  const branchColumns = members(branchRow).sort((a, b) => frequency(b) - frequency(a) || a - b);
  let remainingRows = reduced.rows;
  for (const column of branchColumns) {
    search(
      remainingRows.filter((r) => !hasBit(r, column)),
      [...picked, column],
      state,
    );
    if (state.exhausted) return;
    // Later branches need not consider this column again: covers using it were searched.
    const clearWord = column >>> 5;
    const clearBit = ~(1 << (column & 31));
    remainingRows = remainingRows.map((r) => {
      const copy = r.slice();
      copy[clearWord] &= clearBit;
      return copy;
    });
  }
}

/**
 * Solves a unate covering problem. Every row must be non-empty (an empty row has no cover and
 * is an internal error here: the callers build rows from implicants that do cover them).
 */
export function solveUnateCover(rows: readonly (readonly number[])[], nColumns: number, options: CoverOptions = {}): CoverSolution {
  const nWords = Math.max(1, Math.ceil(nColumns / 32));
  const bitRows: Bitset[] = rows.map((row) => {
    invariant(row.length > 0, 'covering problem with an empty row');
    const set = new Uint32Array(nWords);
    for (const column of row) {
      invariant(column >= 0 && column < nColumns, `covering column ${column} out of range`);
      set[column >>> 5] |= 1 << (column & 31);
    }
    return set;
  });
  const reduced = reduceMatrix(bitRows, nWords);
  invariant(reduced, 'covering problem without a solution');
  const greedy = [...reduced.forced, ...greedyCover(reduced.rows)];
  const state: SearchState = {
    best: greedy,
    nodes: 0,
    nodeLimit: options.nodeLimit ?? 20000,
    exhausted: false,
    nWords,
  };
  if (reduced.rows.length > 0 && reduced.forced.length + independentRowBound(reduced.rows) < greedy.length) {
    search(reduced.rows, reduced.forced, state);
  }
  const columns = [...new Set(state.best)].sort((a, b) => a - b);
  return { columns, optimal: !state.exhausted };
}
