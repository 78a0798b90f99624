// Which control-store addresses a line of the table stands for, for breakpoints on table lines.
// The simulator runs the encoded words, so a breakpoint cannot ask "is this step running": it
// asks "does the address the hardware forms now hold a word this line wrote". The encoder
// remembers, for every address, the point of the table it encoded there (EncodedStore.origin);
// plan.sourceOf turns that back into the step alternative and class. A line is
//   - a step alternative's line: every address holding that alternative's word (a phase step's
//     line: in every class that uses the phase);
//   - a class's line: every address holding a word of that class;
//   - a `use PHASE` line inside a class: the phase's steps as that class runs them.
// A line that is none of these, or whose words are nowhere in the store (a step no input
// reaches), cannot take a breakpoint, and the reason says which.
//
// Deliberately not here: program addresses, conditions, running anything.
import type { LineIndex } from '../text/lineIndex';
import type { SimPlan } from '../sim/plan';

export type LineMarks =
  /** `marks[store][address]` is 1 where the line's word stands; `addresses` counts them. */
  | { ok: true; marks: Uint8Array[]; addresses: number; label: string }
  | { ok: false; reason: string };

export class StepLineIndex {
  private byLine: Map<number, { addresses: number[][]; label: string }> | null = null;

  constructor(
    private readonly plan: SimPlan,
    private readonly lines: LineIndex,
  ) {}

  /** The addresses behind a zero-based line of the table. */
  marksForLine(line: number): LineMarks {
    const entry = this.index().get(line);
    if (!entry) return { ok: false, reason: 'no step, class or `use` stands on this line whose word is in the control store' };
    const marks = this.plan.stores.map((s) => new Uint8Array(s.wordOfAddress.length));
    let addresses = 0;
    entry.addresses.forEach((list, store) => {
      for (const a of list) marks[store][a] = 1;
      addresses += list.length;
    });
    return { ok: true, marks, addresses, label: entry.label };
  }

  /** The zero-based line of a source offset. */
  lineOf(offset: number): number {
    return this.lines.position(offset).line;
  }

  private index(): Map<number, { addresses: number[][]; label: string }> {
    if (this.byLine) return this.byLine;
    const plan = this.plan;
    const byLine = new Map<number, { addresses: number[][]; label: string }>();
    const add = (line: number, store: number, address: number, label: string) => {
      let entry = byLine.get(line);
      if (!entry) byLine.set(line, (entry = { addresses: plan.stores.map(() => []), label }));
      entry.addresses[store].push(address);
    };
    plan.stores.forEach((s, store) => {
      for (let address = 0; address < s.wordOfAddress.length; address++) {
        const { alt, cls } = plan.sourceOf(store, address);
        if (!alt || !cls) continue;
        const stepLabel = alt.phase ? `phase ${alt.phase.name} step ${alt.step}` : `class ${cls.name} step ${alt.step}`;
        add(this.lineOf(alt.span.start), store, address, stepLabel);
        add(this.lineOf(cls.symbol.span.start), store, address, `class ${cls.name}`);
        if (alt.phase) add(this.lineOf(alt.phase.useSpan.start), store, address, `phase ${alt.phase.name} in class ${cls.name}`);
      }
    });
    this.byLine = byLine;
    return byLine;
  }
}
