// Minimum unate covering with unit column costs: choose the fewest columns so that every row
// holds at least one chosen column. The matrix is first reduced (essential columns, row
// dominance, column dominance) and split into independent blocks; each block is then solved
// by branch and bound with an independent-row lower bound, within a node budget after which
// the best cover found so far is returned and marked as not proven minimal.
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
  /** Branch-and-bound nodes to explore (over all blocks) before settling for the best cover found. */
  readonly nodeLimit?: number;
}

/** Above this many rows the quadratic dominance checks are skipped. */
const DOMINANCE_ROW_LIMIT = 3000;

/** Inside the search, nodes with at most this many rows get the full reductions too. */
const NODE_DOMINANCE_ROW_LIMIT = 400;

type Bitset = Uint32Array;

function hasBit(set: Bitset, index: number): boolean {
  return (set[index >>> 5] & (1 << (index & 31))) !== 0;
}

function countWithin(row: Bitset, allowed: Bitset): number {
  let count = 0;
  for (let i = 0; i < row.length; i++) count += popcount(row[i] & allowed[i]);
  return count;
}

function firstWithin(row: Bitset, allowed: Bitset): number {
  for (let i = 0; i < row.length; i++) {
    const word = row[i] & allowed[i];
    if (word !== 0) return i * 32 + (31 - Math.clz32(word & -word));
  }
  return -1;
}

function membersWithin(row: Bitset, allowed: Bitset): number[] {
  const result: number[] = [];
  for (let i = 0; i < row.length; i++) {
    let word = row[i] & allowed[i];
    while (word !== 0) {
      result.push(i * 32 + (31 - Math.clz32(word & -word)));
      word &= word - 1;
    }
  }
  return result;
}

function isSubsetWithin(a: Bitset, b: Bitset, allowed: Bitset): boolean {
  for (let i = 0; i < a.length; i++) if ((a[i] & allowed[i] & ~b[i]) !== 0) return false;
  return true;
}

/**
 * Root reductions until nothing changes: returns the rows still open, the columns forced in,
 * and the columns still allowed.
 */
function reduceRoot(inputRows: Bitset[], allowed: Bitset, rowDominance = true): { rows: Bitset[]; forced: number[] } {
  let rows = inputRows;
  const forced: number[] = [];
  for (let changed = true; changed; ) {
    changed = false;
    // Essential columns: a row with a single allowed column forces it.
    const forcedNow = new Set<number>();
    for (const row of rows) {
      const count = countWithin(row, allowed);
      invariant(count > 0, 'covering problem with a row no column can cover');
      if (count === 1) forcedNow.add(firstWithin(row, allowed));
    }
    if (forcedNow.size > 0) {
      for (const column of forcedNow) forced.push(column);
      rows = rows.filter((row) => ![...forcedNow].some((column) => hasBit(row, column)));
      changed = true;
      continue;
    }
    if (rows.length === 0 || rows.length > DOMINANCE_ROW_LIMIT) break;
    if (rowDominance) {
      // Row dominance: a row containing another row is satisfied whenever that row is.
      const counts = new Map(rows.map((row) => [row, countWithin(row, allowed)]));
      const sorted = [...rows].sort((a, b) => counts.get(a)! - counts.get(b)!);
      const keptRows: Bitset[] = [];
      for (const row of sorted) {
        if (!keptRows.some((k) => isSubsetWithin(k, row, allowed))) keptRows.push(row);
      }
      if (keptRows.length !== rows.length) changed = true;
      rows = keptRows;
    }
    // Column dominance: a column whose rows are a subset of another column's rows is never needed.
    const rowWords = Math.ceil(rows.length / 32);
    const columnRows = new Map<number, Uint32Array>();
    rows.forEach((row, rowIndex) => {
      for (const column of membersWithin(row, allowed)) {
        let set = columnRows.get(column);
        if (!set) {
          set = new Uint32Array(rowWords);
          columnRows.set(column, set);
        }
        set[rowIndex >>> 5] |= 1 << (rowIndex & 31);
      }
    });
    const everyRow = new Uint32Array(rowWords).fill(0xffffffff);
    for (const [a, rowsOfA] of [...columnRows].sort((x, y) => x[0] - y[0])) {
      const firstRow = firstWithin(rowsOfA, everyRow);
      for (const b of membersWithin(rows[firstRow], allowed)) {
        if (a === b) continue;
        const rowsOfB = columnRows.get(b)!;
        if (!isSubsetWithin(rowsOfA, rowsOfB, everyRow)) continue;
        // Equal columns: keep the lower-numbered one so the choice is deterministic.
        if (isSubsetWithin(rowsOfB, rowsOfA, everyRow) && a < b) continue;
        allowed[a >>> 5] &= ~(1 << (a & 31));
        changed = true;
        break;
      }
    }
  }
  return { rows, forced };
}

/** Splits rows into blocks that share no column, so each block can be solved on its own. */
function independentBlocks(rows: Bitset[], allowed: Bitset): Bitset[][] {
  const parent = new Map<number, number>();
  const find = (x: number): number => {
    let root = x;
    while (parent.get(root)! !== root) root = parent.get(root)!;
    parent.set(x, root);
    return root;
  };
  for (const row of rows) {
    const columns = membersWithin(row, allowed);
    for (const column of columns) if (!parent.has(column)) parent.set(column, column);
    for (const column of columns.slice(1)) {
      const a = find(columns[0]);
      const b = find(column);
      if (a !== b) parent.set(b, a);
    }
  }
  const blocks = new Map<number, Bitset[]>();
  for (const row of rows) {
    const root = find(firstWithin(row, allowed));
    const block = blocks.get(root);
    if (block) block.push(row);
    else blocks.set(root, [row]);
  }
  return [...blocks.values()];
}

function greedyCover(rows: Bitset[], allowed: Bitset): number[] {
  let remaining = rows;
  const chosen: number[] = [];
  while (remaining.length > 0) {
    const counts = new Map<number, number>();
    for (const row of remaining) for (const column of membersWithin(row, allowed)) counts.set(column, (counts.get(column) ?? 0) + 1);
    let bestColumn = -1;
    let bestCount = 0;
    for (const [column, count] of counts) {
      if (count > bestCount || (count === bestCount && column < bestColumn)) {
        bestColumn = column;
        bestCount = count;
      }
    }
    invariant(bestColumn >= 0, 'greedy cover met a row without columns');
    chosen.push(bestColumn);
    remaining = remaining.filter((row) => !hasBit(row, bestColumn));
  }
  // Drop chosen columns that later choices made unnecessary.
  for (let k = chosen.length - 1; k >= 0; k--) {
    const others = chosen.filter((_, i) => i !== k);
    if (rows.every((row) => others.some((column) => hasBit(row, column)))) chosen.splice(k, 1);
  }
  return chosen;
}

interface SearchState {
  best: number[];
  nodes: number;
  readonly nodeLimit: number;
  exhausted: boolean;
}

/** Rows pairwise sharing no allowed column: each needs its own chosen column. */
function independentRowBound(rows: Bitset[], allowed: Bitset, counts: number[]): number {
  const order = rows.map((_, index) => index).sort((a, b) => counts[a] - counts[b]);
  const used = new Uint32Array(allowed.length);
  let bound = 0;
  for (const index of order) {
    const row = rows[index];
    let clash = false;
    for (let i = 0; i < row.length; i++) {
      if ((row[i] & allowed[i] & used[i]) !== 0) {
        clash = true;
        break;
      }
    }
    if (clash) continue;
    bound++;
    for (let i = 0; i < row.length; i++) used[i] |= row[i] & allowed[i];
  }
  return bound;
}

function search(inputRows: Bitset[], parentAllowed: Bitset, chosen: number[], state: SearchState): void {
  if (state.nodes >= state.nodeLimit) {
    state.exhausted = true;
    return;
  }
  state.nodes++;
  let allowed = parentAllowed;
  let rows = inputRows;
  const picked = [...chosen];
  if (rows.length <= NODE_DOMINANCE_ROW_LIMIT) {
    // Small enough for the full reductions, which shrink cyclic cores far better than essentials alone.
    allowed = allowed.slice();
    for (const row of rows) if (countWithin(row, allowed) === 0) return;
    const reduced = reduceRoot(rows, allowed, rows.length <= 64);
    rows = reduced.rows;
    for (const column of reduced.forced) picked.push(column);
  } else {
    // Essential columns under the current exclusions.
    for (;;) {
      let essential = -1;
      for (const row of rows) {
        const count = countWithin(row, allowed);
        if (count === 0) return;
        if (count === 1) {
          essential = firstWithin(row, allowed);
          break;
        }
      }
      if (essential < 0) break;
      picked.push(essential);
      rows = rows.filter((row) => !hasBit(row, essential));
    }
  }
  if (picked.length >= state.best.length) return;
  if (rows.length === 0) {
    state.best = picked;
    return;
  }
  const counts = rows.map((row) => countWithin(row, allowed));
  if (picked.length + independentRowBound(rows, allowed, counts) >= state.best.length) return;
  // Branch on the shortest row: one of its columns must be chosen.
  let branchIndex = 0;
  for (let index = 1; index < rows.length; index++) if (counts[index] < counts[branchIndex]) branchIndex = index;
  const branchColumns = membersWithin(rows[branchIndex], allowed);
  const frequency = new Map(branchColumns.map((column) => [column, rows.filter((row) => hasBit(row, column)).length]));
  branchColumns.sort((a, b) => frequency.get(b)! - frequency.get(a)! || a - b);
  let branchAllowed = allowed;
  for (const column of branchColumns) {
    search(
      rows.filter((row) => !hasBit(row, column)),
      branchAllowed,
      [...picked, column],
      state,
    );
    if (state.exhausted) return;
    // Later branches need not use this column again: covers using it were all searched.
    branchAllowed = branchAllowed.slice();
    branchAllowed[column >>> 5] &= ~(1 << (column & 31));
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
  const allowed = new Uint32Array(nWords).fill(0xffffffff);
  const reduced = reduceRoot(bitRows, allowed);
  const chosen = [...reduced.forced];
  let optimal = true;
  let budget = options.nodeLimit ?? 20000;
  const blocks = independentBlocks(reduced.rows, allowed).sort((a, b) => a.length - b.length);
  for (const block of blocks) {
    const state: SearchState = { best: greedyCover(block, allowed), nodes: 0, nodeLimit: budget, exhausted: false };
    const counts = block.map((row) => countWithin(row, allowed));
    if (independentRowBound(block, allowed, counts) < state.best.length) {
      search(block, allowed, [], state);
      budget = Math.max(0, budget - state.nodes);
      if (state.exhausted) optimal = false;
    }
    for (const column of state.best) chosen.push(column);
  }
  return { columns: [...new Set(chosen)].sort((a, b) => a - b), optimal };
}
