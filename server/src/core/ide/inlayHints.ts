// Inlay hints: at the end of every step line, the control word it puts in each store, as hex
// per chip with chip 0 first (`⟶ c0:4A c1:10 c2:23 c3:00`). Where a field comes from a decode
// map the digits that change from row to row show as `?`; the tooltip and the step's hover give
// the word of every row. Step lines only; it does not annotate declarations.
import type { Analysis } from '../analysis';
import type { Span } from '../text/span';
import { usageOf } from './usage';
import { mergedHex, stepWords } from './words';

export interface InlayHint {
  /** Where the hint stands: the end of the step line. */
  offset: number;
  label: string;
  tooltip: string;
}

export function stepWordHints(analysis: Analysis, range: Span): InlayHint[] {
  const machine = analysis.machine;
  const hints: InlayHint[] = [];
  const several = machine.stores.filter((s) => s.word).length > 1;
  for (const { alt } of usageOf(machine).written) {
    if (alt.span.end < range.start || alt.span.start > range.end) continue;
    const stores = stepWords(machine, alt);
    if (stores.length === 0) continue;
    const pieces: string[] = [];
    const tips: string[] = [];
    for (const { store, variants } of stores) {
      const hex = mergedHex(variants);
      pieces.push((several ? `${store.name} ` : '') + hex.map((h, chip) => `c${chip}:${h}`).join(' '));
      const maps = [...new Set(variants[0]?.rows.map((r) => r.map.name) ?? [])];
      tips.push(
        `Control word of store \`${store.name}\` for step ${alt.step}, hex per chip, chip 0 first (chip 0 holds the lowest bits).` +
          (maps.length ? ` Digits shown as ? change with ${maps.map((m) => `map \`${m}\``).join(', ')}: ${variants.map((v) => `${v.rows.map((r) => r.row.value).join('/')} → ${v.hex.join(' ')}`).join('; ')}.` : ''),
      );
    }
    hints.push({ offset: alt.span.end, label: `⟶ ${pieces.join(' · ')}`, tooltip: tips.join('\n\n') });
  }
  return hints;
}
