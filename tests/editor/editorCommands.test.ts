// The language server's editor commands (server/src/lsp/editorCommands.ts) called as the
// executeCommand registry calls them: building images of an open file, the listing, the
// diagram of the class under the cursor, and the status-bar summary; arguments from outside
// are checked and refusals come back as `{ ok: false, reason }`.
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, realpathSync, rmSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeEach, describe, expect, it } from 'vitest';
import { type Analysis, analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { writeListing } from '../../server/src/core/encode/listing';
import { editorCommandIds, registerEditorCommands, runBuild, runDiagram, runListing, runSummary } from '../../server/src/lsp/editorCommands';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/editor-commands');
const demoUri = 'file:///work/examples/halyard-32.pwt';
const faultUri = 'file:///work/examples/faults/bus-contention.pwt';
const demoText = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
const windlassUri = 'file:///work/examples/windlass-32.pwt';
const open = new Map<string, Analysis>([
  [demoUri, analyse(demoText)],
  [windlassUri, analyse(readFileSync(join(root, 'examples/windlass-32.pwt'), 'utf8'))],
  [faultUri, analyse(readFileSync(join(root, 'examples/faults/bus-contention.pwt'), 'utf8'))],
]);
// The repository is the workspace: the build may write into tests/.tmp inside it.
const context = { analysisOf: (uri: string) => open.get(uri), workspaceFolders: () => [root] };

beforeEach(() => {
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(tmp, { recursive: true });
});

describe('phasewright.build', () => {
  it('writes the images and listing of the open file and answers the build summary', () => {
    const answer = runBuild([{ uri: demoUri, outputFolder: tmp, formats: ['bin', 'list'] }], context);
    if (!answer.ok) throw new Error(answer.reason);
    expect(answer.files).toEqual(['halyard-32.main.chip0.bin', 'halyard-32.main.chip1.bin', 'halyard-32.main.chip2.bin', 'halyard-32.main.chip3.bin', 'halyard-32.main.lst']);
    expect(readdirSync(tmp).sort()).toEqual([...answer.files, 'phasewright-manifest.json'].sort());
    expect(answer.summary).toContain('store main: 13 address lines (8192 words)');
    expect(answer.summary).toContain('Caution: check every image');
    // 8K words per chip (28C64 capacity: 8192 x 8).
    expect(readFileSync(join(tmp, 'halyard-32.main.chip0.bin')).length).toBe(8192);
  });

  it('refuses a table with errors, a relative folder, unknown formats and closed files', () => {
    const refused = (args: unknown) => {
      const a = runBuild([args], context);
      return a.ok ? 'built' : a.reason;
    };
    expect(refused({ uri: faultUri, outputFolder: tmp })).toMatch(/has 1 error\(s\); no images were written/);
    expect(refused({ uri: faultUri, outputFolder: tmp })).not.toContain('--force');
    expect(refused({ uri: demoUri, outputFolder: 'out' })).toMatch(/absolute path/);
    expect(refused({ uri: demoUri, outputFolder: tmp, formats: ['gif'] })).toMatch(/phasewright.formats must list some of ihex/);
    expect(refused({ uri: 'file:///nowhere.pwt', outputFolder: tmp })).toMatch(/not open/);
    expect(runBuild([], context)).toMatchObject({ ok: false });
    expect(runBuild(['text'], context)).toMatchObject({ ok: false });
    expect(existsSync(join(tmp, 'phasewright-manifest.json'))).toBe(false);
  });

  it('writes only inside the workspace folders, after following links; the table\'s own folder when none is open', () => {
    const outside = mkdtempSync(join(tmpdir(), 'phasewright-outside-'));
    try {
      const refused = (folder: string, ctx: Parameters<typeof runBuild>[1] = context) => {
        const a = runBuild([{ uri: demoUri, outputFolder: folder, formats: ['bin'] }], ctx);
        return a.ok ? 'built' : a.reason;
      };
      expect(refused(join(outside, 'out'))).toBe(`the output folder ${join(outside, 'out')} is outside the workspace folder (${root}); choose a folder inside`);
      expect(refused(join(tmp, '..', '..', '..', '..', 'elsewhere'))).toMatch(/is outside the workspace folder/);
      // A link inside the workspace that leads out is outside.
      symlinkSync(outside, join(tmp, 'link'));
      expect(refused(join(tmp, 'link', 'out'))).toBe(`the output folder ${join(tmp, 'link', 'out')} is outside the workspace folder (${root}) once links are followed (it is ${join(realpathSync(outside), 'out')}); choose a folder inside`);
      expect(readdirSync(outside)).toEqual([]);
      // Without workspace folders, the table's folder (here /work/examples) is the limit.
      expect(refused(tmp, { analysisOf: context.analysisOf })).toBe(`the output folder ${tmp} is outside the table's folder /work/examples (no workspace folder is open); choose a folder inside`);
      expect(refused(join(tmp, 'inside'))).toBe('built');
    } finally {
      rmSync(outside, { recursive: true, force: true });
    }
  });

  it('applies the severity setting it is given', () => {
    // Turning the contention error off lets the fault build (the caution stays the user's call).
    const answer = runBuild([{ uri: faultUri, outputFolder: tmp, severity: { 'bus-contention': 'off' } }], context);
    expect(answer.ok).toBe(true);
  });
});

describe('phasewright.listing', () => {
  it('answers the listing the build writes', () => {
    const answer = runListing([{ uri: demoUri }], context);
    if (!answer.ok) throw new Error(answer.reason);
    const machine = open.get(demoUri)!.machine;
    const encoded = encodeMachine(machine);
    expect(answer.listings).toHaveLength(1);
    expect(answer.listings[0].name).toBe('halyard-32.main.lst');
    expect(answer.listings[0].text).toBe(writeListing(machine, encoded, encoded.stores[0], { source: 'halyard-32.pwt' }));
    expect(answer.errors).toBe(0);
    expect(runListing([{ uri: demoUri, store: 'decoder' }], context)).toEqual({ ok: false, reason: "no store named 'decoder'" });
  });
});

describe('phasewright.diagram', () => {
  it('draws the class under the cursor, else the one named, else the first', () => {
    const inBranch = demoText.indexOf('3 if taken');
    expect(runDiagram([{ uri: demoUri, offset: inBranch }], context)).toMatchObject({ ok: true, className: 'BRANCH', atCursor: true });
    const inHeader = demoText.indexOf('bus left');
    expect(runDiagram([{ uri: demoUri, offset: inHeader, className: 'JALR' }], context)).toMatchObject({ ok: true, className: 'JALR', atCursor: false });
    expect(runDiagram([{ uri: demoUri, offset: inHeader }], context)).toMatchObject({ ok: true, className: 'LUI' });
    expect(runDiagram([{ uri: demoUri, className: 'NOPE' }], context)).toEqual({ ok: false, reason: "no class named 'NOPE'" });
    // At the very start of a class line the cursor is in that class, not the one before it.
    expect(runDiagram([{ uri: demoUri, offset: demoText.indexOf('class JALR') }], context)).toMatchObject({ className: 'JALR', atCursor: true });
    expect(runDiagram([{ uri: demoUri, offset: demoText.indexOf('class JALR') - 1 }], context)).toMatchObject({ className: 'JAL', atCursor: true });
  });

  it('uses the guard choice of the class it draws and lists the inputs to choose', () => {
    const answer = runDiagram([{ uri: demoUri, className: 'OP', guards: { OP: 'funct3=000,f7b5=1', BRANCH: 'taken=1' } }], context);
    if (!answer.ok) throw new Error(answer.reason);
    expect(answer.instruction).toBe('sub');
    expect(answer.inputs.map((i) => `${i.name}=${i.bits}`)).toEqual(['funct3=000', 'f7b5=1']);
    expect(answer.svg).toContain('var(--vscode-editor-foreground');
    expect(runDiagram([{ uri: demoUri, className: 'OP', guard: 'funct3=9' }], context)).toMatchObject({ ok: false });
  });

  it('draws a sequencer machine\'s loop going round loopCount times (2 when not given), and refuses a bad count', () => {
    // windlass-32's shift loop holds step 3 while shz is 0: a shift by n runs 4 + n steps.
    const three = runDiagram([{ uri: windlassUri, className: 'OP', guard: 'funct3=001', loopCount: 3 }], context);
    expect(three).toMatchObject({ ok: true, instruction: 'sll', steps: 7, loopCount: 3 });
    if (!three.ok) throw new Error(three.reason);
    expect([...three.svg.matchAll(/data-step="(\d+)"/g)].map((m) => Number(m[1]))).toEqual([0, 1, 2, 3, 3, 3, 3]);
    expect(runDiagram([{ uri: windlassUri, className: 'OP', guard: 'funct3=001' }], context)).toMatchObject({ ok: true, steps: 6, loopCount: 2 });
    for (const loopCount of [-1, 65, 1.5, '3']) {
      expect(runDiagram([{ uri: windlassUri, className: 'OP', loopCount }], context), String(loopCount)).toMatchObject({ ok: false, reason: expect.stringContaining('whole number from 0 to 64') });
    }
    // Without a sequencer the steps count up in number order; the answer has no loop count.
    expect(runDiagram([{ uri: demoUri, className: 'OP', loopCount: 3 }], context)).not.toHaveProperty('loopCount');
  });
});

describe('phasewright.summary', () => {
  it('answers the title, counts and store sizes for the status bar', () => {
    expect(runSummary([{ uri: demoUri }], context)).toEqual({
      ok: true,
      title: 'Halyard-32',
      errors: 0,
      warnings: 0,
      infos: 0,
      stores: [{ name: 'main', addressBits: 13, wordBits: 32, chips: 4, text: '8K×32' }],
    });
    expect(runSummary([{ uri: faultUri }], context)).toMatchObject({ ok: true, errors: 1, stores: [{ text: '2×8' }] });
  });
});

describe('registration', () => {
  it('registers the four commands under their ids', () => {
    const ids: string[] = [];
    registerEditorCommands((id) => ids.push(id));
    expect(ids).toEqual(Object.values(editorCommandIds));
    expect(ids).toEqual(['phasewright.build', 'phasewright.listing', 'phasewright.diagram', 'phasewright.summary']);
  });
});
