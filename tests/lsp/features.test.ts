// The language features over a real LSP connection to dist/server.js: hover (every strobe of
// the demo, exact text for a field value, a step, a class, a bus and a part), completion,
// definition, references, rename, symbols, folding, semantic tokens, formatting, quick fixes,
// inlay hints, code lenses and commands. Positions are found in the text, not hard-coded.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { TextDocument } from 'vscode-languageserver-textdocument';
import type { CodeAction, CompletionItem, DocumentSymbol, FoldingRange, Hover, InlayHint, Location, Position, SemanticTokens, TextEdit, WorkspaceEdit, CodeLens } from 'vscode-languageserver-protocol';
import { analyse } from '../../server/src/core/analysis';
import { LspClient, ensureBuilt, root } from './support/client';

const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
const fault = (name: string) => readFileSync(join(root, 'examples/faults', `${name}.pwt`), 'utf8');
const demoUri = 'file:///features/demo.pwt';
const demoDoc = TextDocument.create(demoUri, 'phasewright', 1, demo);

/** The position of the `nth` occurrence of `needle` in `text`, moved by `delta` characters. */
function pos(text: string, needle: string, delta = 0, nth = 0): Position {
  let at = -1;
  for (let i = 0; i <= nth; i++) at = text.indexOf(needle, at + 1);
  if (at < 0) throw new Error(`\`${needle}\` not in the text`);
  return TextDocument.create('x', 'x', 0, text).positionAt(at + delta);
}

let client: LspClient;
const opened = new Map<string, number>();

async function open(uri: string, text: string): Promise<void> {
  const version = (opened.get(uri) ?? 0) + 1;
  opened.set(uri, version);
  if (version === 1) client.open(uri, text, version);
  else client.change(uri, version, [{ text }]);
  await client.diagnosticsOf(uri, version);
}

const hoverAt = async (needle: string, delta = 0, nth = 0) =>
  (await client.request<Hover | null>('textDocument/hover', { textDocument: { uri: demoUri }, position: pos(demo, needle, delta, nth) }))?.contents as { kind: string; value: string } | undefined;

beforeAll(async () => {
  await ensureBuilt();
  client = await LspClient.start();
  await open(demoUri, demo);
});

afterAll(() => client?.kill());

describe('hover', () => {
  const strobes = [...demo.matchAll(/^strobe (\S+)\s+(\w+)/gm)].map((m) => ({ name: m[1], kind: m[2] }));

  it('explains every strobe of the demo completely', async () => {
    expect(strobes.length).toBe(18);
    for (const { name, kind } of strobes) {
      const hover = await hoverAt(`strobe ${name} `, 7);
      expect(hover?.kind).toBe('markdown');
      const text = hover!.value;
      const description = new RegExp(`^strobe ${name.replace(/\./g, '\\.')} [^"\\n]*"([^"\\n]*)"`, 'm').exec(demo)![1];
      expect(text).toContain(`**strobe \`${name}\`** — ${description}`);
      expect(text).toContain(`- **kind** \`${kind}\` — `);
      expect(text).toMatch(/- \*\*part\*\* (`[\w.]+`|none)/);
      expect(text).toMatch(/- \*\*bus\*\* (`\w+`|none)/);
      expect(text).toMatch(/- \*\*level\*\* active (low: the ROM bit is 0|high: the ROM bit is 1) when asserted/);
      const bit = Number(new RegExp(`\\b${name.replace(/\./g, '\\.')} (\\d+)\\b`).exec(demo.slice(demo.indexOf('word 32')))![1]);
      // `word 32 as 4 x 8`: chip n carries bits 8n..8n+7 on data pins D0..D7.
      expect(text).toContain(`- **bit** ${bit} of the word of store \`main\` → **chip ${bit >> 3}, D${bit & 7}**`);
      expect(text).toMatch(/- \*\*used\*\* asserted in \d+ steps? of \d+ class(es)?/);
      expect(text).toMatch(/- \*\*effect\*\* \S/);
    }
  });

  it('gives the code of a field value in decimal and binary', async () => {
    // The U immediate: instruction bits 31..12 above 12 zero bits (RISC-V Unprivileged ISA 20191213, 2.3, figure 2.4).
    expect((await hoverAt('imm.fmt=u', 8))!.value).toBe('**value `u`** of field `imm.fmt` — code **3** = 0b011 (3 bits)\n\n`imm`: `imm` = `{ir[31:12], 0x000}`');
  });

  it('shows the word of a step per chip', async () => {
    // Worked by hand from the demo's layout: chip 1 holds bits 8..15 = t.ck 0, t.oe asserted
    // (active low) 0, imm.oe 1, four.oe 1, alu.oe 1 (idle, active low), cmp.ck 0, mem.rd 1,
    // mem.wr 1 -> 0b11011100 = 0xDC.
    expect((await hoverAt('  4: t.oe', 2))!.value).toBe(
      [
        '**step 4 of class JALR** — always applies',
        '',
        '- **asserts** `t.oe`, `pc.ck`, `done`',
        '- **word** of store `main`, hex per chip (chip 0 holds bits 0..7): chip 0 `0x1B`, chip 1 `0xDC`, chip 2 `0x8E`, chip 3 `0x00`',
      ].join('\n'),
    );
  });

  it('lists the instructions of a class', async () => {
    expect((await hoverAt('class LOAD', 6))!.value).toBe(
      [
        '**class `LOAD`** — rd = memory[rs1 + offset]',
        '',
        '- **opcode** 0000011 — RV32I LOAD (I format)',
        '- **instructions** lb, lh, lw, lbu, lhu (5)',
        '- **steps** 4 (0..3), 4 alternatives',
        '- **phases** `fetch` from step 0',
        '- **steps to end** min 4, max 4 (fetch included)',
        '  - lb, lh, lw, lbu, lhu: min 4, max 4',
      ].join('\n'),
    );
  });

  it('tells who drives and loads a bus', async () => {
    const text = (await hoverAt('bus right', 4))!.value;
    expect(text.split('\n').slice(0, 11)).toEqual([
      '**bus `right`** — Right operand: register rs2, the immediate or the constant 4.',
      '',
      '- **width** 32 lines',
      '- **keeper** yes: when nothing drives the bus its lines keep the last driven value (a load then stores a stale value: a warning)',
      '- **driven by** `x.rs2.oe` (x.rs2), `imm.oe` (imm), `four.oe` (four)',
      '- **loaded by** `mem.wr` (mem)',
      '- **read by** `alu` (input `b`), `cmp` (input `b`)',
      '- **load per line** driven by `x`: reaches 28 inputs and an LED (0.97 mA): 1.50 mA; `x` is rated 6 mA, margin 4.50 mA — an estimate from the figures in the table',
      '- **load per line** driven by `imm`: reaches 148 inputs and an LED (0.97 mA): 1.62 mA; `imm` is rated 6 mA, margin 4.38 mA — an estimate from the figures in the table',
      '- **load per line** driven by `four`: reaches 148 inputs and an LED (0.97 mA): 1.62 mA; `four` is rated 6 mA, margin 4.38 mA — an estimate from the figures in the table',
      '',
    ]);
    expect(text).toContain('- step 3 of class STORE: driven by `x.rs2.oe`; loaded by `mem.wr`');
  });

  it('describes a part', async () => {
    expect((await hoverAt('part mem ', 5))!.value).toBe(
      [
        '**part `mem`** — Memory port, addressed by the memory address register.',
        '',
        '- **kind** `memory` — memory port: reads and writes bytes, halfwords and words (little-endian, spec 2.6)',
        '- **settings** width=32; addr from part `mar` (the byte address: a register part or a bus); `size` from field `mem.size`',
        "- **ports** `data`: output, drives a bus through a read strobe: the data at the address, of the size the field selects; `write`: input, stores a bus at a write strobe's closing edge: stores the bus at the address, as many bytes as the size",
        '- **strobes** `mem.rd` read mem.data → `result`; `mem.wr` write `right` → mem.write',
      ].join('\n'),
    );
  });
});

describe('completion', () => {
  const labels = async (uri: string, text: string, position: Position) => {
    await open(uri, text);
    const items = await client.request<CompletionItem[]>('textDocument/completion', { textDocument: { uri }, position });
    return items.map((i) => i.label);
  };

  it('offers strobes and fields in a step, values and maps after `field=`, phases after `use`', async () => {
    const uri = 'file:///features/complete.pwt';
    const text = demo.replace('  2: pc.inc, done', '  2: pc.inc, alu.fn=, done');
    expect(await labels(uri, text, pos(text, 'alu.fn=, done', 7))).toEqual(['add', 'sll', 'slt', 'sltu', 'xor', 'srl', 'or', 'and', 'sub', 'sra', 'passa', 'passb', 'op_fn', 'imm_fn']);
    const step = await labels(uri, text, pos(text, '2: pc.inc, alu', 11));
    expect(step.slice(0, 4)).toEqual(['alu.fn', 'imm.fmt', 'mem.size', 'x.rs1.oe']);
    expect(step.length).toBe(21);
    const use = demo.replace('class SYSTEM opcode=1110011 "ecall and ebreak: the monitor takes over"\n  use fetch', 'class SYSTEM opcode=1110011 "ecall and ebreak: the monitor takes over"\n  use ');
    expect(await labels(uri, use, pos(use, '  use \n', 6))).toEqual(['fetch']);
  });

  it('replaces the partial word and documents each item', async () => {
    const uri = 'file:///features/complete2.pwt';
    const text = demo.replace('  2: pc.inc, done', '  2: pc.inc, x.r');
    await open(uri, text);
    const at = pos(text, '2: pc.inc, x.r', 14);
    const items = await client.request<CompletionItem[]>('textDocument/completion', { textDocument: { uri }, position: at });
    const item = items.find((i) => i.label === 'x.rs1.oe')!;
    expect(item.textEdit).toEqual({ range: { start: { line: at.line, character: at.character - 3 }, end: at }, newText: 'x.rs1.oe' });
    expect(item.documentation).toEqual({ kind: 'markdown', value: 'Card selected by rs1 drives the left bus.' });
    expect(item.detail).toBe('strobe · enable x.rs1 → left · active low');
  });

  it('offers part kinds after a new part name and buses after `->` in a strobe', async () => {
    const uri = 'file:///features/complete3.pwt';
    const text = demo.replace('part four constant 32 value=4', 'part four constant 32 value=4\npart extra \nstrobe e.oe enable four -> ');
    expect(await labels(uri, text, pos(text, 'part extra ', 11))).toEqual(['regfile', 'register', 'counter', 'instruction', 'immediate', 'alu', 'compare', 'memory', 'constant', 'sequencer', 'callseq', 'nextstep', 'loopcount', 'presetcount']);
    expect(await labels(uri, text, pos(text, 'enable four -> ', 15))).toEqual(['left', 'right', 'result']);
  });
});

describe('navigation', () => {
  it('goes to the definition and finds references', async () => {
    const definition = await client.request<Location>('textDocument/definition', { textDocument: { uri: demoUri }, position: pos(demo, '4: t.oe', 4) });
    expect(definition).toEqual({ uri: demoUri, range: { start: pos(demo, 'strobe t.oe', 7), end: pos(demo, 'strobe t.oe', 11) } });
    const refs = await client.request<Location[]>('textDocument/references', { textDocument: { uri: demoUri }, position: pos(demo, 'strobe t.oe', 8), context: { includeDeclaration: true } });
    expect(refs.map((r) => r.range.start)).toEqual([pos(demo, 'strobe t.oe', 7), pos(demo, 't.oe 9'), pos(demo, '4: t.oe', 3)]);
  });

  it('goes from a part\'s kind to its definition in the read-only standard library, and hovers it', async () => {
    const { standardLibraryText } = await import('../../server/src/core/parts/library');
    const definition = await client.request<Location>('textDocument/definition', { textDocument: { uri: demoUri }, position: pos(demo, 'part alu  alu', 10) });
    expect(definition.uri).toBe('phasewright-library:/standard.pwt');
    expect(definition.range).toEqual({ start: pos(standardLibraryText, 'kind alu ', 5), end: pos(standardLibraryText, 'kind alu ', 8) });
    const hover = await hoverAt('part alu  alu', 10);
    expect(hover?.value).toContain('**part kind `alu`** — ALU: combines its two operand buses');
    expect(hover?.value).toContain('the standard library (read-only');
    expect(hover?.value).toContain('control fn: add sub sll slt sltu xor srl sra or and passa passb');
  });

  it('renames a field value across steps, idle settings and map rows', async () => {
    const prepared = await client.request<{ range: unknown; placeholder: string }>('textDocument/prepareRename', { textDocument: { uri: demoUri }, position: pos(demo, 'idle=passa', 6) });
    expect(prepared.placeholder).toBe('passa');
    const edit = await client.request<WorkspaceEdit>('textDocument/rename', { textDocument: { uri: demoUri }, position: pos(demo, 'idle=passa', 6), newName: 'passb' }).catch((e: Error) => e);
    expect(edit).toBeInstanceOf(Error);
    expect((edit as Error).message).toBe('cannot rename: `passb` is already the name of a value of `alu.fn`; names must be unique among the values of one field');
    const ok = await client.request<WorkspaceEdit>('textDocument/rename', { textDocument: { uri: demoUri }, position: pos(demo, 'map imm_fn', 5), newName: 'opimm_fn' });
    const edits = ok.changes![demoUri];
    expect(edits.length).toBe(2);
    const after = TextDocument.applyEdits(demoDoc, edits);
    expect(after).toContain('map opimm_fn (funct3, f7b5)');
    expect(after).toContain('alu.fn=opimm_fn');
  });

  it('refuses a strobe name that collides, with a clear message', async () => {
    const result = await client.request('textDocument/rename', { textDocument: { uri: demoUri }, position: pos(demo, 'strobe t.ck', 8), newName: 't.oe' }).catch((e: { message: string; code: number }) => e);
    expect(result).toMatchObject({ code: -32803, message: 'cannot rename: `t.oe` is already the name of a strobe; names must be unique among strobes and fields' });
  });
});

describe('symbols and folding', () => {
  it('outlines the document by section', async () => {
    const symbols = await client.request<DocumentSymbol[]>('textDocument/documentSymbol', { textDocument: { uri: demoUri } });
    expect(symbols.map((s) => s.name)).toEqual(['Halyard-32', 'buses', 'parts', 'strobes', 'fields', 'stores', 'maps', 'phases', 'classes']);
    const classes = symbols.find((s) => s.name === 'classes')!;
    const jalr = classes.children!.find((c) => c.name === 'JALR')!;
    expect(jalr.children!.map((c) => c.name)).toEqual(['use fetch', '2', '3', '4']);
    expect(jalr.selectionRange.start).toEqual(pos(demo, 'class JALR', 6));
  });

  it('finds workspace symbols over open documents', async () => {
    const found = await client.request<{ name: string; location: Location }[]>('workspace/symbol', { query: 'mem.rd' });
    const inDemo = found.filter((s) => s.location.uri === demoUri).map((s) => s.name);
    expect(inDemo).toEqual(['mem.rd']);
  });

  it('folds declarations with bodies and the opening comment', async () => {
    const ranges = await client.request<FoldingRange[]>('textDocument/foldingRange', { textDocument: { uri: demoUri } });
    expect(ranges[0]).toMatchObject({ startLine: 0, kind: 'comment' });
    expect(ranges).toContainEqual({ startLine: pos(demo, 'class JALR').line, endLine: pos(demo, '4: t.oe').line, kind: 'region' });
  });
});

describe('semantic tokens', () => {
  it('decodes to sensible types for a step line', async () => {
    const legend = client.initializeResult!.capabilities.semanticTokensProvider!.legend;
    const tokens = await client.request<SemanticTokens>('textDocument/semanticTokens/full', { textDocument: { uri: demoUri } });
    expect(tokens.data.length % 5).toBe(0);
    let line = 0;
    let character = 0;
    const decoded: { line: number; character: number; text: string; type: string; modifiers: string[] }[] = [];
    const lines = demo.split('\n');
    for (let i = 0; i < tokens.data.length; i += 5) {
      const [dLine, dChar, length, type, mods] = tokens.data.slice(i, i + 5);
      line += dLine;
      character = dLine ? dChar : character + dChar;
      decoded.push({ line, character, text: lines[line].slice(character, character + length), type: legend.tokenTypes[type], modifiers: legend.tokenModifiers.filter((_, b) => mods & (1 << b)) });
    }
    const step = pos(demo, '2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn').line;
    expect(decoded.filter((t) => t.line === step).map((t) => `${t.text}:${t.type}`)).toEqual([
      '2:number',
      'x.rs1.oe:variable',
      'x.rs2.oe:variable',
      'alu.fn:property',
      '=:operator',
      'op_fn:function',
      'alu.oe:variable',
      'x.rd.ck:variable',
      'pc.inc:variable',
      'done:variable',
    ]);
    const declaration = decoded.find((t) => t.text === 'op_fn' && t.line === pos(demo, 'map op_fn').line)!;
    expect(declaration.modifiers).toEqual(['declaration']);
    expect(decoded.filter((t) => t.type === 'comment').length).toBe(demo.split('\n').filter((l) => l.trim().startsWith('#')).length);
  });
});

describe('formatting', () => {
  const formatted = async (uri: string, text: string) => {
    await open(uri, text);
    const edits = await client.request<TextEdit[]>('textDocument/formatting', { textDocument: { uri }, options: { tabSize: 2, insertSpaces: true } });
    return TextDocument.applyEdits(TextDocument.create(uri, 'phasewright', 0, text), edits);
  };
  const shape = (text: string) => {
    const a = analyse(text);
    return JSON.stringify({ m: a.machine, codes: a.diagnostics.map((d) => d.code) }, (k, v) => (/span$/i.test(k) || k === 'references' ? undefined : v instanceof Map ? Object.fromEntries(v) : v));
  };

  for (const [name, text] of [['demo', demo], ...['bus-contention', 'syntax-error', 'store-ambiguous', 'guard-gap', 'map-overlap', 'unused-name', 'bad-number', 'field-conflict'].map((n) => [n, fault(n)])]) {
    it(`is idempotent and keeps the model on ${name}`, async () => {
      const uri = `file:///features/format-${name}.pwt`;
      const once = await formatted(uri, text);
      expect(shape(once)).toBe(shape(text));
      expect(await formatted(uri, once)).toBe(once);
    });
  }
});

describe('quick fixes', () => {
  const fixed = async (name: string, code: string) => {
    const uri = `file:///features/fix-${name}.pwt`;
    const text = fault(name);
    await open(uri, text);
    const published = client.published.filter((p) => p.uri === uri).at(-1)!;
    const diagnostic = published.diagnostics.find((d) => d.code === code)!;
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', { textDocument: { uri }, range: diagnostic.range, context: { diagnostics: [diagnostic] } });
    const doc = TextDocument.create(uri, 'phasewright', 1, text);
    return actions.map((a) => {
      expect(a.kind).toBe('quickfix');
      expect(a.diagnostics).toEqual([diagnostic]);
      const change = a.edit!.documentChanges![0] as { textDocument: { uri: string; version: number }; edits: TextEdit[] };
      expect(change.textDocument).toEqual({ uri, version: opened.get(uri) });
      return { title: a.title, preferred: a.isPreferred, text: TextDocument.applyEdits(doc, change.edits), original: text };
    });
  };

  it('undefined name -> the closest name', async () => {
    const [fix] = await fixed('undefined-name', 'undefined-name');
    expect(fix.title).toBe('Change to `a.oe`');
    expect(fix.preferred).toBe(true);
    expect(fix.text).toBe(fix.original.replace('0: a.oe, a.ce, b.ck', '0: a.oe, a.oe, b.ck'));
  });

  it('contention -> remove one of the enables', async () => {
    const fixes = await fixed('bus-contention', 'bus-contention');
    expect(fixes.map((f) => f.text.split('\n').find((l) => l.startsWith('  0:')))).toEqual(['  0: b.oe, b.ck, done', '  0: a.oe, b.ck, done']);
  });

  it('class without end -> add the end strobe', async () => {
    const [fix] = await fixed('class-no-end', 'class-no-end');
    expect(fix.text).toBe(fix.original.replace('  0: a.oe, b.ck\nclass LUI', '  0: a.oe, b.ck, done\nclass LUI'));
  });

  it('unused strobe -> remove it and its placement', async () => {
    const [fix] = await fixed('unused-name', 'unused-name');
    expect(fix.text).toBe(fix.original.replace('strobe b.oe enable b -> result active low\n', '').replace('a.oe 0  b.oe 1  b.ck 2', 'a.oe 0    b.ck 2'));
  });

  it('offers nothing for a diagnostic the server did not publish', async () => {
    const uri = 'file:///features/fix-bus-contention.pwt';
    const published = client.published.filter((p) => p.uri === uri).at(-1)!;
    const diagnostic = { ...published.diagnostics[0], message: 'edited by someone' };
    expect(await client.request('textDocument/codeAction', { textDocument: { uri }, range: diagnostic.range, context: { diagnostics: [diagnostic] } })).toEqual([]);
  });
});

describe('inlay hints and code lenses', () => {
  it('ends step lines with their words per chip', async () => {
    // By hand, chip 0 (bits 0..7: x.rs1.oe, x.rs2.oe, x.rd.ck, pc.oe, pc.ck, pc.inc, ir.ck,
    // mar.ck): JAL step 2 = 1,1,1,0,0,0,0,0 -> 0x07; step 3 = 1,1,0,0,1,0,0,0 -> 0x13.
    const hints = await client.request<InlayHint[]>('textDocument/inlayHint', { textDocument: { uri: demoUri }, range: { start: pos(demo, 'class JAL '), end: pos(demo, 'class JALR') } });
    expect(hints.map((h) => [h.position.line, h.label])).toEqual([
      [pos(demo, '2: pc.oe, four.oe').line, '⟶ c0:07 c1:C6 c2:00 c3:00'],
      [pos(demo, '3: pc.oe, imm.fmt=j').line, '⟶ c0:13 c1:CA c2:C0 c3:00'],
    ]);
    expect(hints[0].paddingLeft).toBe(true);
    expect(hints[0].position.character).toBe(demo.split('\n')[hints[0].position.line].length);
  });

  it('puts a lens on each class', async () => {
    const lenses = await client.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri: demoUri } });
    expect(lenses.length).toBe(11);
    const branch = lenses.find((l) => l.range.start.line === pos(demo, 'class BRANCH').line)!;
    expect(branch.command?.title).toBe('4 steps · instructions: beq, bne, blt, bge, bltu, bgeu');
  });
});

describe('commands', () => {
  it('runs a registered command and refuses an unknown one', async () => {
    expect(await client.request('workspace/executeCommand', { command: 'phasewright._testEcho', arguments: [1, 'two'] })).toEqual({ echo: [1, 'two'] });
    const refused = await client.request('workspace/executeCommand', { command: 'phasewright.nothing', arguments: [] }).catch((e: { message: string }) => e);
    expect(refused).toMatchObject({ message: expect.stringContaining("unknown command 'phasewright.nothing'") });
  });
});
