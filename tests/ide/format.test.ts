// Document formatting: the expected layout on a fixture, and the properties that must always
// hold: formatting twice changes nothing, the model and the diagnostics stay the same, no
// token or comment is lost, and declarations with syntax errors are left as written.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { applyEdits } from '../../server/src/core/ide/codeActions';
import { formatDocument } from '../../server/src/core/ide/format';
import { scan } from '../../server/src/core/syntax/scanner';
import { T } from '../../server/src/core/syntax/tokens';
import { dedent } from '../support/annotated';
import { demoText, faultFiles, modelDump } from './support';

const format = (text: string) => applyEdits(text, formatDocument(analyse(text)));
const significant = (text: string) =>
  scan(text)
    .filter((t) => t.kind !== T.Whitespace)
    .map((t) => (t.kind === T.Comment ? t.text.trimEnd() : t.text));

function expectSafe(text: string): string {
  const once = format(text);
  expect(format(once)).toBe(once);
  expect(significant(once)).toEqual(significant(text));
  const before = analyse(text);
  const after = analyse(once);
  expect(modelDump(after)).toBe(modelDump(before));
  expect(after.diagnostics.map((d) => `${d.code} ${d.message}`)).toEqual(before.diagnostics.map((d) => `${d.code} ${d.message}`));
  return once;
}

describe('layout', () => {
  it('aligns declarations, placements, sources, map rows and step heads; keeps comments', () => {
    const messy = dedent(`
      # Header comment.
        bus left 32 keeper   "Left."
      bus result   32 "Result."
      part a   register 32 "A."
      part alu alu left   left
      strobe a.oe enable a->result active low "a drives result."
      strobe done end   "Last step."
      field alu.fn 4 ->alu {add=0 sub=8}  "ALU function."
      word 16 as 2 x 8
          a.oe 0 done 1
        alu.fn 4 .. 7
      address 5
        step 0..1  taken 2   funct3 3..4
      map fn ( funct3 ) -> alu.fn
        000 add  001 sub
        010 add
      class OP opcode = 0110011   # the OP class
        0 : a.oe ,alu.fn=fn
          # a comment inside the class
        1 if taken : a.oe,
              done
        1 else: done
    `);
    expect(format(messy)).toBe(
      dedent(`
        # Header comment.
        bus left   32 keeper  "Left."
        bus result 32         "Result."
        part a   register 32  "A."
        part alu alu      left left
        strobe a.oe enable a -> result active low  "a drives result."
        strobe done end                            "Last step."
        field alu.fn 4 -> alu { add=0 sub=8 } "ALU function."
        word 16 as 2 x 8
          a.oe   0      done 1
          alu.fn 4..7
        address 5
          step 0..1   taken 2   funct3 3..4
        map fn (funct3) -> alu.fn
          000 add   001 sub
          010 add
        class OP opcode=0110011  # the OP class
          0:          a.oe, alu.fn=fn
          # a comment inside the class
          1 if taken: a.oe,
                      done
          1 else:     done
      `),
    );
    expectSafe(messy);
  });

  it('indents word and address layouts under a store line', () => {
    const text = 'store decode\nword 8 as 1 x 8\n    b.ck 0\naddress 5\nopcode 0..4\n';
    expect(format(text)).toBe('store decode\n  word 8 as 1 x 8\n    b.ck 0\n  address 5\n    opcode 0..4\n');
  });

  it('keeps line ends (CRLF) and the lack of a final newline', () => {
    const text = 'bus a  8\r\nbus bb 8   \r\n\r\nbus c 8';
    expect(format(text)).toBe('bus a  8\r\nbus bb 8\r\n\r\nbus c 8');
  });

  it('leaves a declaration with a syntax error exactly as written, formats the rest', () => {
    const text = 'bus   a 8\nclass OP opcode=0110011\n  0 :   a.oe;  done\n    1:x\nbus   b 8\n';
    const once = format(text);
    expect(once).toBe('bus a 8\nclass OP opcode=0110011\n  0 :   a.oe;  done\n    1:x\nbus b 8\n');
    expectSafe(text);
  });

  it('gives no edits for a file already formatted', () => {
    const once = format(demoText);
    expect(formatDocument(analyse(once))).toEqual([]);
  });
});

describe('formatting never changes meaning', () => {
  it('on the demo', () => {
    expectSafe(demoText);
  });

  for (const fault of faultFiles) {
    it(`on the fault example ${fault.name}`, () => {
      expectSafe(fault.text);
    });
  }

  it('on random edits of the demo (spaces, tabs, commas, stray characters, broken lines)', () => {
    const lines = demoText.split('\n');
    const edit = fc.record({
      line: fc.integer({ min: 0, max: lines.length - 1 }),
      column: fc.nat(120),
      insert: fc.constantFrom(' ', '   ', '\t', ',', ':', '#', ' x ', '=', '..', '"', '{', '}', '\n', '->', ';', ''),
      remove: fc.nat(3),
    });
    fc.assert(
      fc.property(fc.array(edit, { minLength: 1, maxLength: 4 }), (edits) => {
        const copy = [...lines];
        for (const e of edits) {
          const line = copy[e.line] ?? '';
          const at = Math.min(e.column, line.length);
          copy[e.line] = line.slice(0, at) + e.insert + line.slice(Math.min(line.length, at + e.remove));
        }
        const text = copy.join('\n');
        const once = format(text);
        // Tokens, comments and line breaks survive; a second pass is a no-op.
        expect(significant(once)).toEqual(significant(text));
        expect(format(once)).toBe(once);
        expect(modelDump(analyse(once))).toBe(modelDump(analyse(text)));
      }),
      { numRuns: 150, seed: 20240611 },
    );
  });
});
