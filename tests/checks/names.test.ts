// Names and declarations: undefined (with the closest name suggested and a fix), duplicate,
// unused, unknown kinds and settings, wrong wiring, bad numbers, width mismatches.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { dedent, expectDiagnostics } from '../support/annotated';

const base = dedent(`
  bus result 8
  part a register 8
  part b register 8
  strobe a.oe enable a -> result active low
  strobe b.ck clock result -> b
  strobe done end
  word 8 as 1 x 8
    a.oe 0  b.ck 1  done 2
  address 1
    step 0
`);

function applyFix(text: string, fix: { edits: { span: { start: number; end: number }; newText: string }[] }): string {
  const edits = [...fix.edits].sort((x, y) => y.span.start - x.span.start);
  for (const e of edits) text = text.slice(0, e.span.start) + e.newText + text.slice(e.span.end);
  return text;
}

describe('undefined-name', () => {
  it('suggests the closest declared name and offers it as a fix', () => {
    const a = expectDiagnostics(
      base +
        dedent(`
          class OP opcode=0110011
            0: a.oe, a.ce, b.ck, done
          #          ^^^^ undefined-name: did you mean \`a.oe\`?
        `),
      ['undefined-name'],
    );
    const fixed = applyFix(a.text, a.diagnostics.find((d) => d.code === 'undefined-name')!.fixes![0]);
    expect(fixed).toContain('0: a.oe, a.oe, b.ck, done');
  });

  it('covers field values, maps, phases, parts and buses', () => {
    expectDiagnostics(
      dedent(`
        bus left 8
        bus result 8
        part alu alu left rezult
        #                 ^^^^^^ undefined-name: did you mean \`result\`?
        part r register 8
        strobe r.ck clock result -> r
        strobe r.oe enable r -> left
        strobe q.oe enable q -> left
        #                  ^ undefined-name: no part is named \`q\`
        field f 2 { one=1 two=2 }
        class OP opcode=0110011
          use fetsh
        #     ^^^^^ undefined-name
          0: r.oe, f=tree, r.ck
        #            ^^^^ undefined-name: has no value or map named \`tree\`
      `),
      ['undefined-name'],
    );
  });

  it('is silent when every name is declared, including forward references', () => {
    expectDiagnostics(
      dedent(`
        class OP opcode=0110011
          0: a.oe, b.ck, done
      `) + base,
      ['undefined-name'],
    );
  });
});

describe('duplicate-name and unused-name', () => {
  it('duplicate-name points at the second declaration with the first as related', () => {
    const a = expectDiagnostics(
      base.replace('strobe done end', 'strobe done end\nstrobe a.oe enable b -> result\n#      ^^^^ duplicate-name: already declared as a strobe'),
      ['duplicate-name'],
    );
    const d = a.diagnostics.find((x) => x.code === 'duplicate-name')!;
    expect(a.text.slice(d.related![0].span.start, d.related![0].span.end)).toBe('a.oe');
  });

  it('buses and parts share names; strobes live apart from them', () => {
    expectDiagnostics(
      dedent(`
        bus a 8
        part a register 8
        #    ^ duplicate-name
        strobe result end
      `),
      ['duplicate-name'],
    );
  });

  it('unused-name warns, and its fix removes the strobe and its placement', () => {
    const text = base.replace('strobe done end', 'strobe done end\nstrobe b.oe enable b -> result active low').replace('done 2', 'done 2\n  b.oe 3') + 'class OP opcode=0110011\n  0: a.oe, b.ck, done\n';
    const a = analyse(text);
    const d = a.diagnostics.filter((x) => x.code === 'unused-name');
    expect(d.map((x) => [x.severity, x.message])).toEqual([['warning', 'strobe `b.oe` is never used']]);
    const fixed = applyFix(a.text, d[0].fixes![0]);
    expect(fixed).not.toContain('b.oe');
    expect(analyse(fixed).diagnostics).toEqual([]);
  });
});

describe('declarations', () => {
  it('unknown-kind: part kinds, strobe kinds, settings and chips, with suggestions', () => {
    expectDiagnostics(
      dedent(`
        bus result 8
        part a regster 8
        #      ^^^^^^^ unknown-kind: did you mean \`register\`?
        part c counter 8 incr=4
        #                ^^^^ unknown-kind: did you mean \`inc\`?
        strobe c.oe enabel c -> result
        #           ^^^^^^ unknown-kind: did you mean \`enable\`?
        word 8 as 1 x 8 chip=28C99
        #                    ^^^^^ unknown-kind: unknown chip
      `),
      ['unknown-kind'],
    );
  });

  it('wrong-wiring: ports used the wrong way, fields on parts without a function, bad value names', () => {
    expectDiagnostics(
      dedent(`
        bus result 32
        part ir instruction 32
        part x regfile 32
        part r register 32
        part alu alu result result
        strobe x.rd.oe enable x.rd -> result
        #                     ^^^^ wrong-wiring: \`x.rd\` is an input
        strobe x.rs1.ck clock result -> x.rs1
        #                               ^^^^^ wrong-wiring: is an output
        strobe r.inc count r
        #                  ^ wrong-wiring: cannot count
        field r.mode 2 -> r { a=0 }
        #                 ^ wrong-wiring: has no control for a field to drive
        field alu.fn 4 -> alu { add=0 plus=1 }
        #                             ^^^^ wrong-wiring: means nothing to control \`fn\` of part \`alu\` (kind \`alu\`)
      `),
      ['wrong-wiring'],
    );
  });

  it('bad-number: malformed widths, patterns of the wrong length, reversed ranges', () => {
    expectDiagnostics(
      dedent(`
        bus result 3z
        #          ^^ bad-number: is not a number
        strobe a end
        word 8 as 1 x 8
          a 3..1
        # ^^^^^^ bad-number: write the low bit first
        map m (funct3) -> f
          01 one
        # ^^ bad-number: has 3 bit(s)
      `),
      ['bad-number'],
    );
  });

  it('width-mismatch warns when a part and its bus differ', () => {
    const a = analyse(base.replace('part a register 8', 'part a register 16'));
    expect(a.diagnostics.filter((d) => d.code === 'width-mismatch').map((d) => d.severity)).toEqual(['warning']);
    expect(analyse(base).diagnostics.filter((d) => d.code === 'width-mismatch')).toEqual([]);
  });

  const twoWide = base.replace('part a register 8', 'part a register 16').replace('part b register 8', 'part b register 4');
  const mismatches = (text: string, options = {}) => analyse(text, options).diagnostics.filter((d) => d.code === 'width-mismatch');

  it('width-mismatch can be accepted on one line with `accept width-mismatch`; the other lines still report it', () => {
    expect(mismatches(twoWide)).toHaveLength(2);
    const accepted = twoWide.replace('strobe a.oe enable a -> result active low', 'strobe a.oe enable a -> result active low accept width-mismatch');
    const left = analyse(accepted);
    expect(left.diagnostics.filter((d) => d.code === 'width-mismatch').map((d) => left.text.slice(d.span.start, d.span.end))).toEqual(['strobe b.ck clock result -> b']);
    expect(left.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    // Before a description too, and on a strobe with no wiring after its kind.
    expect(mismatches(twoWide.replace('strobe b.ck clock result -> b', 'strobe b.ck clock result -> b accept width-mismatch "low nibble only"').replace('strobe a.oe enable a -> result active low', 'strobe a.oe enable a -> result active low accept width-mismatch'))).toEqual([]);
  });

  it('width-mismatch offers a fix that accepts the change on its line, and the fixed table is quiet there', () => {
    const described = twoWide.replace('strobe b.ck clock result -> b', 'strobe b.ck clock result -> b "loads the low nibble"');
    const a = analyse(described);
    const d = a.diagnostics.find((x) => x.code === 'width-mismatch' && a.text.slice(x.span.start, x.span.end).startsWith('strobe b.ck'))!;
    expect(d.message).toContain('If that is deliberate, end the line with `accept width-mismatch`');
    const fixed = applyFix(described, d.fixes![0]);
    expect(fixed).toContain('strobe b.ck clock result -> b accept width-mismatch "loads the low nibble"');
    expect(mismatches(fixed)).toHaveLength(1);
  });

  it('width-mismatch follows the severity setting like every code', () => {
    expect(mismatches(twoWide, { severities: { 'width-mismatch': 'off' } })).toEqual([]);
    expect(mismatches(twoWide, { severities: { 'width-mismatch': 'error' } }).map((d) => d.severity)).toEqual(['error', 'error']);
  });

  it('accept names only codes a line may accept: a hazard cannot be accepted, an unknown code is reported', () => {
    expectDiagnostics(
      dedent(`
        bus result 8
        part a register 16
        strobe a.oe enable a -> result accept bus-contention
        #                                     ^^^^^^^^^^^^^^ unknown-kind: \`bus-contention\` cannot be accepted on a line
        strobe a.ck clock result -> a accept widht-mismatch
        #                                    ^^^^^^^^^^^^^^ undefined-name: did you mean \`width-mismatch\`?
      `),
      ['unknown-kind', 'undefined-name'],
    );
  });
});

describe('bus indexes', () => {
  it('bus lines on a strobe: a line or range it has is read, one it does not have is an error on the index', () => {
    const a = expectDiagnostics(
      dedent(`
        bus result 8
        part a register 1
        part b register 8
        strobe a.oe enable a -> result[1] active low
        strobe b.oe enable b -> result[99]
        #                             ^^^^ wrong-wiring: \`result[99]\` names a line bus \`result\` does not have (its lines are 7..0)
        strobe c.oe enable b -> result[2:5]
        #                             ^^^^^ bad-number: write the high line first
        strobe b.ck clock result[7:4] -> b accept width-mismatch
        strobe d.ck clock result[9:8] -> b
        #                       ^^^^^ wrong-wiring: \`result[9:8]\` names a line bus \`result\` does not have (its lines are 7..0)
        strobe e.ck clock result[0:3] -> b
        #                       ^^^^^ bad-number: write the high line first
      `),
      ['wrong-wiring', 'bad-number'],
    );
    expect(a.machine.signals.get('a.oe')).toMatchObject({ bus: 'result', lines: { hi: 1, lo: 1 } });
    // A clock strobe loads lines 7..4 of the bus (docs/notation.md, "Bus lines and connections").
    expect(a.machine.signals.get('b.ck')).toMatchObject({ kind: 'clock', bus: 'result', lines: { hi: 7, lo: 4 }, part: 'b' });
  });
});

describe('severity settings', () => {
  it('change or silence a code', () => {
    const text = base + 'class OP opcode=0110011\n  0: a.oe, a.oe, b.ck, done\n';
    expect(analyse(text).diagnostics.map((d) => d.severity)).toEqual(['warning']);
    expect(analyse(text, { severities: { 'repeated-strobe': 'error' } }).diagnostics.map((d) => d.severity)).toEqual(['error']);
    expect(analyse(text, { severities: { 'repeated-strobe': 'off' } }).diagnostics).toEqual([]);
  });
});
