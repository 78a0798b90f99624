// Part kinds written in the notation: the parser keeps every line and expression with its exact
// span, the kind builder holds a table's kinds and the standard library to the same rules, and
// the standard library itself reads clean.
import { describe, expect, it } from 'vitest';
import { parse } from '../../server/src/core/syntax/parser';
import { analyse } from '../../server/src/core/analysis';
import { standardLibrary, standardLibraryText } from '../../server/src/core/parts/library';
import type { KindDecl } from '../../server/src/core/syntax/ast';
import { dedent, expectDiagnostics } from '../support/annotated';
import { formatDocument } from '../../server/src/core/ide/format';

const machineTail = dedent(`
  bus result 8
  part t register 8
  strobe t.oe enable t -> result active low
  strobe t.ck clock result -> t
  strobe done end
  word 8 as 1 x 8
    t.oe 0  t.ck 1  done 2
  address 1
    step 0
  class OP opcode=0110011
    0: t.oe, t.ck, done
`);

describe('kind declarations', () => {
  it('parse every line, with expressions kept as text at their exact place', () => {
    const text = dedent(`
      kind mux2 "two-way multiplexer"
        setting width number = 8 "bits"
        setting mode choice fast slow
        input a width
        input b width "second input"
        input src 32 after from
        control pick: first second
        state hold width x 4 = 0
        drive y width = select pick { first: a, second: b }
        flag same = a == b
        on load width: hold[pick] <= in when a != b, hold[0] <= {a[3:0], b[3:0]}
    `);
    const { tree, errors } = parse(text);
    expect(errors).toEqual([]);
    const decl = tree.decls[0] as KindDecl;
    expect(decl.kind).toBe('kind');
    expect(decl.items.map((i) => `${i.item} ${i.name?.text}`)).toEqual([
      'setting width', 'setting mode', 'input a', 'input b', 'input src', 'control pick', 'state hold', 'drive y', 'flag same', 'on load',
    ]);
    const drive = decl.items[7];
    expect(drive.item === 'drive' && text.slice(drive.expr!.span.start, drive.expr!.span.end)).toBe('select pick { first: a, second: b }');
    const edge = decl.items[9];
    if (edge.item !== 'on') throw new Error('not an edge line');
    // The comma inside `{a[3:0], b[3:0]}` does not split the second assignment.
    expect(edge.assigns.map((a) => [a.target.text, a.index?.text, a.expr?.text, a.when?.text])).toEqual([
      ['hold', 'pick', 'in', 'a != b'],
      ['hold', '0', '{a[3:0], b[3:0]}', undefined],
    ]);
    expect(text.slice(edge.assigns[1].expr!.span.start, edge.assigns[1].expr!.span.end)).toBe('{a[3:0], b[3:0]}');
  });

  it('report a line that is not a kind line, and an edge action without `<=`, at their place', () => {
    expectDiagnostics(
      dedent(`
        kind k
          output y 8 = 0
        # ^^^^^^ syntax-error: expected a line of the kind
          state q 8
          on load 8: q = in
        #              ^ syntax-error: expected \`<=\`
      `),
      ['syntax-error'],
    );
  });

  it('hold the definition to its rules, each problem at its exact range', () => {
    expectDiagnostics(
      dedent(`
        kind k
          setting width number = 8
          setting mode choice fast slow = medium
        #                                 ^^^^^^ kind-definition: not one of the choices
          input a wide
        #         ^^^^ kind-definition: no number setting \`wide\`
          state q width
          state r width x 4
          drive a width = q
        #       ^ duplicate-name: already a name in kind
          on load width: q <= in, r <= in, s <= in
        #                         ^ kind-definition: say which
        #                                  ^ kind-definition: not state
          on clear: q[0] <= 0
        #             ^ kind-definition: one register
        kind nothing
        #    ^^^^^^^ kind-definition: no drive port
          setting width number = 8
      ` + machineTail),
    );
  });

  it('a table may not reuse a standard-library name', () => {
    expectDiagnostics(
      dedent(`
        kind alu
        #    ^^^ duplicate-name: standard library
          drive y 8 = 0
      ` + machineTail),
    );
  });

  it('a part of the table\'s own kind is built from its part line; an array in a table\'s kind is reported', () => {
    const a = expectDiagnostics(
      dedent(`
        kind mux2
          setting width number = 8
          input a width
          input b width
          control pick: first second
          drive y width = select pick { first: a, second: b }
        kind bank
          state r 8 x 4
        #       ^ kind-not-wired: array of registers
          drive out 8 = 0
        part m mux2 4 result result
        field m.pick 1 -> m { first=0 second=1 }
        strobe m.oe enable m -> result
       #^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^ width-mismatch: \`m.y\` is 4 bits wide
      ` + machineTail),
      ['kind-not-wired', 'width-mismatch', 'wrong-wiring', 'expr-width'],
    );
    const part = a.machine.parts.get('m');
    expect(part?.kind).toBe('custom');
    if (part?.kind !== 'custom') return;
    expect(part.settings.get('width')).toBe(4);
    expect([...part.inputs]).toEqual([['a', { from: 'bus', name: 'result' }], ['b', { from: 'bus', name: 'result' }]]);
    expect([...part.controlFields]).toEqual([['pick', 'm.pick']]);
  });
});

describe('the standard library', () => {
  it('reads clean and defines the nine built-in kinds', () => {
    const library = standardLibrary();
    expect(library.diagnostics).toEqual([]);
    expect([...library.kinds.keys()].sort()).toEqual(['alu', 'compare', 'constant', 'counter', 'immediate', 'instruction', 'memory', 'regfile', 'register']);
    for (const kind of library.kinds.values()) {
      expect(kind.origin).toBe('library');
      expect(kind.description, kind.name).toBeTruthy();
      expect(standardLibraryText.slice(kind.span.start, kind.span.end)).toBe(kind.name);
    }
  });

  it('offers every control value the built-in vocabulary names (model/vocabulary.ts)', async () => {
    const { controlVocabulary } = await import('../../server/src/core/model/vocabulary');
    for (const kind of standardLibrary().kinds.values()) {
      const vocabulary = controlVocabulary(kind.name as never);
      const values = kind.controls.flatMap((c) => c.values);
      if (vocabulary) expect(new Set(values), kind.name).toEqual(new Set(vocabulary));
    }
  });

  it('the demo still checks clean with library kinds resolved for its parts', () => {
    const text = parse(standardLibraryText);
    expect(text.errors).toEqual([]);
    const demo = analyse(machineTail);
    expect(demo.diagnostics).toEqual([]);
    const ref = demo.machine.references.find((r) => r.symbol.kind === 'kind');
    expect(ref?.symbol).toMatchObject({ name: 'register', origin: 'library' });
  });
});

describe('formatting a kind', () => {
  it('changes only the indentation of its lines: the spacing inside expressions is the author\'s', () => {
    const text = 'kind   mux2 "two-way"\n      input a 8\n  drive y 8 = select pick { first: a,  second: b }\n     on load 8: q <= in when a != b\n';
    const analysis = analyse(text);
    const edits = formatDocument(analysis);
    let out = text;
    for (const e of [...edits].sort((a, b) => b.span.start - a.span.start)) out = out.slice(0, e.span.start) + e.newText + out.slice(e.span.end);
    expect(out).toBe('kind mux2 "two-way"\n  input a 8\n  drive y 8 = select pick { first: a,  second: b }\n  on load 8: q <= in when a != b\n');
  });

  it('leaves the standard library exactly as written', () => {
    expect(formatDocument(analyse(standardLibraryText))).toEqual([]);
  });
});
