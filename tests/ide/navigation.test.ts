// Go to definition, find references and rename: every kind of name, and the renames that must
// be refused (collisions in the same namespace, invalid names, words of the notation).
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { applyEdits } from '../../server/src/core/ide/codeActions';
import { definition, prepareRename, references, rename } from '../../server/src/core/ide/navigation';
import { demoText, modelDump, offsetOf } from './support';

const demo = analyse(demoText);
const at = (needle: string, delta = 0, nth = 0) => offsetOf(demoText, needle, delta, nth);
const lineOf = (offset: number) => demo.lines.position(offset).line + 1;

function renamed(offset: number, newName: string): string {
  const result = rename(demo, offset, newName);
  if ('error' in result) throw new Error(result.error);
  return applyEdits(demoText, result.edits);
}

describe('definition and references', () => {
  it('goes from a use in a step to the strobe declaration', () => {
    const found = definition(demo, at('3: mem.size=load_size, mem.rd', 23))!;
    expect(demoText.slice(found.span.start, found.span.end)).toBe('mem.rd');
    expect(lineOf(found.span.start)).toBe(lineOf(at('strobe mem.rd')));
  });

  it('goes from a map name in a step, a phase in `use`, a bus in wiring and a flag in a guard', () => {
    const map = definition(demo, at('alu.fn=op_fn', 8))!;
    expect(lineOf(map.span.start)).toBe(lineOf(at('map op_fn')));
    const phase = definition(demo, at('use fetch', 5))!;
    expect(lineOf(phase.span.start)).toBe(lineOf(at('phase fetch')));
    const bus = definition(demo, at('-> left', 3))!;
    expect(lineOf(bus.span.start)).toBe(lineOf(at('bus left')));
    const flag = definition(demo, at('3 if taken', 5))!;
    expect(demoText.slice(flag.span.start, flag.span.end)).toBe('taken');
    expect(lineOf(flag.span.start)).toBe(lineOf(at('part cmp')));
  });

  it('finds every use of a strobe, with or without its declaration', () => {
    const spans = references(demo, at('strobe t.oe', 7), true);
    expect(spans.map((s) => lineOf(s.start))).toEqual([lineOf(at('strobe t.oe')), lineOf(at('t.oe 9')), lineOf(at('4: t.oe'))]);
    expect(references(demo, at('strobe t.oe', 7), false).length).toBe(2);
  });

  it('finds the uses of a field value: steps, idle settings and map rows', () => {
    const spans = references(demo, at('idle=passa', 5), true).map((s) => demoText.slice(s.start, s.end));
    expect(spans).toEqual(['passa', 'passa', 'passa']);
    const sub = references(demo, at('sub=8', 0), true).map((s) => lineOf(s.start));
    expect(sub).toEqual([lineOf(at('sub=8')), lineOf(at('000 1 sub'))]);
  });

  it('has nothing at a keyword or a number', () => {
    expect(definition(demo, at('strobe x.rs1.oe', 1))).toBeUndefined();
    expect(references(demo, at('address 13', 9), true)).toEqual([]);
  });
});

describe('rename', () => {
  it('renames a strobe everywhere: declaration, placement and steps', () => {
    const text = renamed(at('strobe t.oe', 7), 't.drive');
    expect(text).toContain('strobe t.drive      enable t -> result');
    expect(text).toContain('t.drive 9');
    expect(text).toContain('4: t.drive, pc.ck, done');
    expect(text).not.toMatch(/\bt\.oe\b/);
    expect(analyse(text).diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  });

  it('renames a part inside `part.port` wiring and keeps the model otherwise identical', () => {
    const text = renamed(at('part x ', 5), 'regs');
    expect(text).toContain('strobe x.rs1.oe  enable regs.rs1 -> left');
    expect(text).toContain('clock result -> regs.rd');
    const after = analyse(text);
    expect(after.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    expect(after.machine.parts.has('regs')).toBe(true);
  });

  it('renames a field value (steps, idle, map rows) and a map, a phase, a bus and a flag', () => {
    const value = renamed(at('passa=14'), 'passa');
    expect(value).toBe(demoText);
    const phase = renamed(at('phase fetch', 6), 'fetch_word');
    expect(phase.match(/use fetch_word/g)?.length).toBe(11);
    const map = renamed(at('map op_fn', 4), 'op_decode');
    expect(map).toContain('alu.fn=op_decode');
    const flag = renamed(at('-> taken', 3), 'branch_taken');
    expect(flag).toContain('3 if branch_taken:');
    expect(flag).toContain('branch_taken 3');
    const bus = renamed(at('bus right', 4), 'rhs');
    expect(analyse(bus).diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    expect(modelDump(analyse(renamed(at('bus right', 4), 'right')))).toBe(modelDump(demo));
  });

  it('refuses a name already used in the same namespace', () => {
    expect(rename(demo, at('strobe t.oe', 7), 'pc.oe')).toEqual({ error: '`pc.oe` is already the name of a strobe; names must be unique among strobes and fields' });
    expect(rename(demo, at('strobe t.oe', 7), 'alu.fn')).toEqual({ error: '`alu.fn` is already the name of a field; names must be unique among strobes and fields' });
    expect(rename(demo, at('bus left', 4), 'alu')).toEqual({ error: '`alu` is already the name of a part; names must be unique among buses, parts and flags' });
    expect(rename(demo, at('add=0'), 'sub')).toEqual({ error: '`sub` is already the name of a value of `alu.fn`; names must be unique among the values of one field' });
    expect(rename(demo, at('map op_fn', 4), 'imm_fn')).toEqual({ error: '`imm_fn` is already the name of a map; names must be unique among maps' });
    // A name taken in another namespace is fine: a phase may share a strobe's name.
    expect('edits' in rename(demo, at('phase fetch', 6), 'done')).toBe(true);
  });

  it('refuses invalid names and words of the notation', () => {
    expect(rename(demo, at('strobe t.oe', 7), '2fast')).toMatchObject({ error: expect.stringContaining('`2fast` is not a valid name') });
    expect(rename(demo, at('strobe t.oe', 7), 'a..b')).toMatchObject({ error: expect.stringContaining('is not a valid name') });
    expect(rename(demo, at('strobe t.oe', 7), 'class')).toEqual({ error: '`class` is a word of the notation; choose another name' });
    expect(rename(demo, at('part t ', 5), 't.x')).toMatchObject({ error: expect.stringContaining('a part name cannot contain a dot') });
    expect(rename(demo, at('-> taken', 3), 'funct3')).toMatchObject({ error: expect.stringContaining('names an address input') });
    expect(rename(demo, at('add=0'), 'plus')).toMatchObject({ error: expect.stringContaining('`plus` means nothing to control `fn` of `alu` (kind `alu`)') });
  });

  it('prepares a rename on a name and refuses elsewhere', () => {
    const ready = prepareRename(demo, at('alu.fn=op_fn', 8));
    expect(ready).toEqual({ span: { start: at('alu.fn=op_fn', 7), end: at('alu.fn=op_fn', 12) }, placeholder: 'op_fn' });
    expect(prepareRename(demo, at('word 32', 1))).toBeUndefined();
  });
});
