// Helpers for the editor-feature tests: a `$0` cursor marker in fixtures, the demo and fault
// examples, and a dump of the model without positions (to prove an edit changed no meaning).
import { readFileSync, readdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { Analysis } from '../../server/src/core/analysis';

export const root = resolve(__dirname, '../..');
export const demoText = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
export const faultFiles = readdirSync(join(root, 'examples/faults'))
  .filter((f) => f.endsWith('.pwt'))
  .sort()
  .map((f) => ({ name: f.replace(/\.pwt$/, ''), text: readFileSync(join(root, 'examples/faults', f), 'utf8') }));

/** Removes the `$0` marker and returns the text and the marker's offset. */
export function cursor(marked: string): { text: string; offset: number } {
  const offset = marked.indexOf('$0');
  if (offset < 0) throw new Error('fixture has no $0 cursor marker');
  return { text: marked.slice(0, offset) + marked.slice(offset + 2), offset };
}

/** The offset of the `nth` occurrence (from 0) of `needle`, plus `delta`. */
export function offsetOf(text: string, needle: string, delta = 0, nth = 0): number {
  let at = -1;
  for (let i = 0; i <= nth; i++) {
    at = text.indexOf(needle, at + 1);
    if (at < 0) throw new Error(`\`${needle}\` not found (occurrence ${nth})`);
  }
  return at + delta;
}

/** The model as JSON without any offsets: equal dumps mean equal meaning. */
export function modelDump(analysis: Analysis): string {
  return JSON.stringify(
    { machine: analysis.machine, references: analysis.machine.references.map((r) => `${r.symbol.kind}:${r.symbol.key}`) },
    (key, value) => {
      if (/span$/i.test(key) || key === 'references') return undefined;
      if (value instanceof Map) return Object.fromEntries(value);
      if (value instanceof Set) return [...value];
      return value;
    },
  );
}
