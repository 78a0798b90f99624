// When is the complement of an output not worth minimising? Polarity "best" keeps the
// complement's cover only when it has fewer terms than the output's own, and minimising the
// complement of a sparse control output (a dense ON-set) costs far more than the output itself.
// A lower bound settles most outputs without that work: minterms of the complement no two of
// which can lie in one implicant (the smallest cube holding both contains a minterm where the
// output is 1) each need a term of their own, so k of them prove every cover of the complement
// has at least k terms. The search is greedy and deterministic (a fixed permutation of the
// minterms, a fixed number of candidates); it never proves a bound that does not hold, so
// skipping on it never loses a smaller cover: the result is the one the full search would keep.

/** Candidates tried before giving up on the bound (then the complement is minimised in full). */
const MAX_CANDIDATES = 512;
/** Greedy passes, each with its own order of candidates. */
const PASSES = 4;
const MULTIPLIERS = [0x9e3779b1, 0x85ebca6b, 0xc2b2ae35, 0x27d4eb2f];
/** Above this many ON minterms of the output the compatibility test costs more than it saves. */
const MAX_ON_MINTERMS = 4096;

export function complementNeedsAtLeast(f: { readonly on: Uint32Array; readonly dc: Uint32Array; readonly nInputs: number }, k: number): boolean {
  if (k <= 0) return true;
  const size = 2 ** f.nInputs;
  const bit = (set: Uint32Array, m: number) => (set[m >>> 5] >>> (m & 31)) & 1;
  const ones: number[] = [];
  for (let m = 0; m < size; m++) {
    if (bit(f.on, m)) {
      if (ones.length === MAX_ON_MINTERMS) return false;
      ones.push(m);
    }
  }
  const full = size - 1;
  /** Whether the smallest cube holding a and b holds a minterm where the output is 1. */
  const apart = (a: number, b: number): boolean => {
    const free = (a ^ b) & full;
    const fixed = a & ~free & full;
    const d = popcount(free);
    if (2 ** d <= ones.length) {
      // Enumerate the cube's minterms: the subsets of the free bits.
      for (let s = free; ; s = (s - 1) & free) {
        if (bit(f.on, fixed | s)) return true;
        if (s === 0) return false;
      }
    }
    const keep = ~free & full;
    return ones.some((m) => (m & keep) === fixed);
  };
  // Several greedy passes, each over its own fixed permutation of the minterms (an odd
  // multiplier permutes 0..size-1 and spreads the candidates over the space).
  for (let pass = 0; pass < PASSES; pass++) {
    const chosen: number[] = [];
    const multiplier = MULTIPLIERS[pass];
    for (let i = 0, tried = 0; i < size && tried < MAX_CANDIDATES; i++) {
      const m = (Math.imul(i + pass * 7919, multiplier) >>> 0) & full;
      if (bit(f.on, m) || bit(f.dc, m)) continue; // not a minterm of the complement
      tried++;
      if (chosen.every((c) => apart(c, m))) {
        chosen.push(m);
        if (chosen.length >= k) return true;
      }
    }
  }
  return false;
}

function popcount(v: number): number {
  v = v - ((v >>> 1) & 0x55555555);
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
  return (Math.imul((v + (v >>> 4)) & 0x0f0f0f0f, 0x01010101) >>> 24);
}
