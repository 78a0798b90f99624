// A register file or the byte memory as terms, in the quantifier-free bit-vector logic (no
// arrays, no functions: QF_BV). The contents before the instruction are unknown: every distinct
// index read gets its own variable, and for each two reads "same index, same value" is an
// assumption (Ackermann's reduction, common practice, no source). What the instruction writes is
// a list of (index, value, condition) in order; a read after writes is a chain of tests from the
// latest write back to the initial contents.
import type { Term, Terms } from './term';

export interface ArrayWrite {
  readonly index: Term;
  readonly value: Term;
  /** The write happens only when this holds (one bit). */
  readonly when: Term;
  /** Where the machine wrote it: the step and the strobe (absent for the specification's writes). */
  readonly step?: number;
  readonly strobe?: string;
}

export class InitialContents {
  private readonly reads = new Map<number, { index: Term; value: Term }>();

  /**
   * `name` prefixes the variables; `known(index)` gives what the contents are known to hold at
   * an index as a chain of tests around the unknown rest (x0 reads 0; the instruction's bytes at pc).
   */
  constructor(
    private readonly T: Terms,
    private readonly name: string,
    readonly elementWidth: number,
    private readonly known: (index: Term, unknown: Term) => Term = (_i, u) => u,
  ) {}

  /** The element at `index` before the instruction. */
  read(index: Term): Term {
    let entry = this.reads.get(index.id);
    if (!entry) {
      const value = this.T.variable(`${this.name}.${this.reads.size}`, this.elementWidth);
      entry = { index, value };
      this.reads.set(index.id, entry);
    }
    return this.known(index, entry.value);
  }

  /** The element at `index` after `writes` (in order). */
  readAfter(writes: readonly ArrayWrite[], index: Term): Term {
    let value = this.read(index);
    for (const w of writes) value = this.T.ite(this.T.and(w.when, this.T.eq(w.index, index)), w.value, value);
    return value;
  }

  /** The unknown elements read so far: their index and variable. */
  unknowns(): { index: Term; value: Term }[] {
    return [...this.reads.values()];
  }

  /** Same index, same value, for every two reads. */
  consistency(): Term[] {
    const all = this.unknowns();
    const out: Term[] = [];
    for (let i = 0; i < all.length; i++) {
      for (let j = i + 1; j < all.length; j++) {
        const fact = this.T.implies(this.T.eq(all[i].index, all[j].index), this.T.eq(all[i].value, all[j].value));
        if (!(fact.k === 'const' && fact.v === 1n)) out.push(fact);
      }
    }
    return out;
  }
}
