// Every editor feature must answer (possibly with nothing) on any text: broken fault
// examples, every prefix of the demo, and random edits of it, at many cursor positions.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { quickFixes } from '../../server/src/core/ide/codeActions';
import { classLenses } from '../../server/src/core/ide/codeLens';
import { complete } from '../../server/src/core/ide/completion';
import { foldingRanges } from '../../server/src/core/ide/folding';
import { formatDocument } from '../../server/src/core/ide/format';
import { hover } from '../../server/src/core/ide/hover';
import { stepWordHints } from '../../server/src/core/ide/inlayHints';
import { definition, prepareRename, references, rename } from '../../server/src/core/ide/navigation';
import { semanticTokens } from '../../server/src/core/ide/semanticTokens';
import { documentSymbols, flatSymbols } from '../../server/src/core/ide/symbols';
import { demoText, faultFiles } from './support';

/** Runs every feature on a text; positional ones every `stride` characters. Returns how many answered. */
function exercise(text: string, stride: number): number {
  const analysis = analyse(text);
  let answers = 0;
  const count = (value: unknown) => {
    if (value !== undefined && !(Array.isArray(value) && value.length === 0)) answers++;
  };
  count(documentSymbols(analysis));
  count(flatSymbols(analysis));
  count(foldingRanges(analysis));
  count(semanticTokens(analysis));
  count(formatDocument(analysis));
  count(stepWordHints(analysis, { start: 0, end: text.length }));
  count(classLenses(analysis));
  count(quickFixes(analysis, { start: 0, end: text.length }, []));
  for (let offset = 0; offset <= text.length; offset += stride) {
    count(hover(analysis, offset));
    count(complete(analysis, offset).items);
    count(definition(analysis, offset));
    count(references(analysis, offset, true));
    count(prepareRename(analysis, offset));
    count(rename(analysis, offset, 'renamed_here'));
  }
  return answers;
}

describe('features on broken and partial text', () => {
  it('answer on every fault example at every offset', () => {
    for (const fault of faultFiles) expect(exercise(fault.text, 1)).toBeGreaterThan(0);
  });

  it('answer on every prefix of the demo (cut every 97 characters)', () => {
    for (let cut = 0; cut <= demoText.length; cut += 97) exercise(demoText.slice(0, cut), 13);
  });

  it('answer on random edits of the demo', () => {
    fc.assert(
      fc.property(fc.nat(demoText.length), fc.nat(40), fc.string({ maxLength: 12 }), (at, remove, insert) => {
        exercise(demoText.slice(0, at) + insert + demoText.slice(at + remove), 31);
      }),
      { numRuns: 40, seed: 7 },
    );
  });
});
