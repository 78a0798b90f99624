// The `accept CODE` clause in the editor: hover explains the keyword and the accepted code,
// the semantic tokens mark `accept` as a keyword, and formatting keeps the clause on its line.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { applyEdits } from '../../server/src/core/ide/codeActions';
import { formatDocument } from '../../server/src/core/ide/format';
import { hover } from '../../server/src/core/ide/hover';
import { semanticTokens } from '../../server/src/core/ide/semanticTokens';
import { dedent } from '../support/annotated';
import { offsetOf } from './support';

const text = dedent(`
  bus result 32
  part t register 16
  strobe t.oe enable t -> result  active low   accept width-mismatch   "16-bit t on the low lines."
  strobe t.ck clock result -> t accept width-mismatch
  strobe done end
  word 8 as 1 x 8
    t.oe 0  t.ck 1  done 2
  address 1
    step 0
  class OP opcode=0110011
    0: t.oe, t.ck, done
`);
const analysis = analyse(text);

describe('accept in the editor', () => {
  it('checks clean: both width changes are accepted on their lines', () => {
    expect(analysis.diagnostics).toEqual([]);
  });

  it('hover explains the keyword and the accepted code', () => {
    expect(hover(analysis, offsetOf(text, 'accept', 1))?.markdown).toContain('the width change on this line is deliberate');
    expect(hover(analysis, offsetOf(text, 'width-mismatch', 2))?.markdown).toContain('**diagnostic `width-mismatch`** (accepted on this line) — a part and its bus differ in width');
  });

  it('the semantic tokens mark `accept` as a keyword', () => {
    const start = offsetOf(text, 'accept');
    expect(semanticTokens(analysis).find((t) => t.start === start)).toMatchObject({ length: 6, type: 'keyword' });
  });

  it('formatting keeps the clause before the description and changes no meaning', () => {
    const formatted = applyEdits(text, formatDocument(analysis));
    expect(formatted).toMatch(/strobe t\.oe enable t -> result +active low +accept width-mismatch +"16-bit t on the low lines\."/);
    expect(formatted).toMatch(/strobe t\.ck clock +result -> t +accept width-mismatch\n/);
    expect(analyse(formatted).diagnostics).toEqual([]);
  });
});
