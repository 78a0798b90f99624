// Quick fixes: the four kinds the checks attach (undefined name -> closest name, contention ->
// remove a driver, class without end -> add the end strobe, unused strobe -> remove it), the
// text each produces, and the matching of fixes to the diagnostics a request names.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { applyEdits, quickFixes } from '../../server/src/core/ide/codeActions';
import { faultFiles } from './support';

const fault = (name: string) => faultFiles.find((f) => f.name === name)!.text;

function fixesFor(text: string, code: string) {
  const analysis = analyse(text);
  const diagnostic = analysis.diagnostics.find((d) => d.code === code)!;
  expect(diagnostic).toBeDefined();
  const fixes = quickFixes(analysis, diagnostic.span, [{ code, span: diagnostic.span, message: diagnostic.message }]);
  return fixes.map((f) => ({ title: f.title, preferred: f.preferred, text: applyEdits(text, f.edits), requestIndex: f.requestIndex }));
}

describe('the four kinds of quick fix', () => {
  it('undefined name: change it to the closest declared name', () => {
    const text = fault('undefined-name');
    const [fix, ...rest] = fixesFor(text, 'undefined-name');
    expect(rest).toEqual([]);
    expect(fix.title).toBe('Change to `a.oe`');
    expect(fix.preferred).toBe(true);
    expect(fix.text).toBe(text.replace('0: a.oe, a.ce, b.ck, done', '0: a.oe, a.oe, b.ck, done'));
  });

  it('bus contention: remove one of the enables, either one', () => {
    const text = fault('bus-contention');
    const fixes = fixesFor(text, 'bus-contention');
    expect(fixes.map((f) => f.title)).toEqual(['Remove `a.oe` from this step', 'Remove `b.oe` from this step']);
    expect(fixes[0].text).toBe(text.replace('0: a.oe, b.oe, b.ck, done', '0: b.oe, b.ck, done'));
    expect(fixes[1].text).toBe(text.replace('0: a.oe, b.oe, b.ck, done', '0: a.oe, b.ck, done'));
    for (const fix of fixes) expect(analyse(fix.text).diagnostics.map((d) => d.code)).not.toContain('bus-contention');
  });

  it('class without end: add the end strobe to the last step', () => {
    const text = fault('class-no-end');
    const [fix] = fixesFor(text, 'class-no-end');
    expect(fix.title).toBe('Add `done` to step 0');
    expect(fix.text).toBe(text.replace('class OP opcode=0110011\n  0: a.oe, b.ck\n', 'class OP opcode=0110011\n  0: a.oe, b.ck, done\n'));
    expect(analyse(fix.text).diagnostics).toEqual([]);
  });

  it('unused strobe: remove its declaration and its placement', () => {
    const text = fault('unused-name');
    const [fix] = fixesFor(text, 'unused-name');
    expect(fix.title).toBe('Remove the unused strobe `b.oe`');
    const expected = text.replace('strobe b.oe enable b -> result active low\n', '').replace('  a.oe 0  b.oe 1  b.ck 2  done 3', '  a.oe 0    b.ck 2  done 3');
    expect(fix.text).toBe(expected);
    expect(analyse(fix.text).diagnostics).toEqual([]);
  });
});

describe('matching fixes to the request', () => {
  it('offers nothing for a diagnostic whose message differs (a different problem at the same place)', () => {
    const text = fault('bus-contention');
    const analysis = analyse(text);
    const d = analysis.diagnostics[0];
    expect(quickFixes(analysis, d.span, [{ code: d.code, span: d.span, message: 'something else' }])).toEqual([]);
    expect(quickFixes(analysis, d.span, [{ code: 'bus-contention', span: { start: d.span.start + 1, end: d.span.end }, message: d.message }])).toEqual([]);
  });

  it('says which requested diagnostic each fix answers', () => {
    const text = fault('bus-contention');
    const analysis = analyse(text);
    const d = analysis.diagnostics[0];
    const fixes = quickFixes(analysis, d.span, [{ code: 'x', span: d.span, message: 'unrelated' }, { code: d.code, span: d.span, message: d.message }]);
    expect(fixes.map((f) => f.requestIndex)).toEqual([1, 1]);
    expect(fixes.every((f) => f.diagnostic === d)).toBe(true);
  });

  it('without named diagnostics, offers the fixes of diagnostics in the range', () => {
    const text = fault('undefined-name');
    const analysis = analyse(text);
    const at = text.indexOf('a.oe, a.ce') + 6;
    expect(quickFixes(analysis, { start: at, end: at }, []).map((f) => f.title)).toEqual(['Change to `a.oe`']);
    expect(quickFixes(analysis, { start: 0, end: 5 }, [])).toEqual([]);
  });
});
