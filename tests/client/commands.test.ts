// The client's commands, run against the stand-in `vscode` module (tests/support/fakeVscode.ts):
// "New machine" writes the starter table (the snippet at its defaults, which checks clean) under
// the typed name, never over an existing file, and opens it; the commands that wait on the
// language server show a progress notification while they wait.
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeEach, describe, expect, it } from 'vitest';
import { ProgressLocation, Uri, recorded } from '../support/fakeVscode';
import { newMachineCommand } from '../../client/src/newMachine';
import { buildImagesCommand } from '../../client/src/buildCommand';
import { ListingProvider, showListingCommand } from '../../client/src/listingView';
import { expandSnippet, starterTable, tableFileName } from '../../client/src/starterTable';
import type { ServerCommands } from '../../client/src/serverCommands';
import { analyse } from '../../server/src/core/analysis';

const root = join(__dirname, '../..');
const scratch = join(root, 'tests/.tmp/client');
// The stand-in's Uri has only what the commands use; the commands' signatures name the real one.
const extensionUri = Uri.file(root) as never;
const snippetsText = readFileSync(join(root, 'snippets/phasewright.json'), 'utf8');

beforeEach(() => {
  recorded.reset();
  rmSync(scratch, { recursive: true, force: true });
  mkdirSync(scratch, { recursive: true });
  recorded.folders.push({ name: 'work', uri: Uri.file(scratch), index: 0 });
});

describe('the starter table', () => {
  it('is the "New machine" snippet with every placeholder at its default, and checks clean', () => {
    const table = starterTable(snippetsText)!;
    expect(table).toBe(expandSnippet(JSON.parse(snippetsText)['New machine'].body));
    expect(table).not.toMatch(/\$\{?\d/);
    expect(table).toContain('machine "Machine"');
    expect(analyse(table).diagnostics).toEqual([]);
  });

  it('takes a bare name and adds .pwt; refuses folders and empty names', () => {
    expect(tableFileName(' cpu ')).toEqual({ ok: true, name: 'cpu.pwt' });
    expect(tableFileName('cpu.PWT')).toEqual({ ok: true, name: 'cpu.PWT' });
    expect(tableFileName('../cpu.pwt').ok).toBe(false);
    expect(tableFileName('sub/cpu').ok).toBe(false);
    expect(tableFileName('').ok).toBe(false);
  });
});

describe('New machine', () => {
  it('writes the starter table under the typed name into the workspace folder and opens it', async () => {
    recorded.pickAnswers.push('Starter table');
    recorded.inputAnswers.push('cpu');
    const written = await newMachineCommand(extensionUri);
    const path = join(scratch, 'cpu.pwt');
    expect(written?.fsPath).toBe(path);
    expect(readFileSync(path, 'utf8')).toBe(starterTable(snippetsText));
    expect(recorded.opened).toEqual([Uri.file(path).toString()]);
    expect(recorded.messages).toEqual([]);
  });

  it('writes a copy of the demo machine when asked, and it checks clean', async () => {
    recorded.pickAnswers.push('Halyard-32 demo');
    recorded.inputAnswers.push('halyard-32.pwt');
    const written = await newMachineCommand(extensionUri);
    const text = readFileSync(written!.fsPath, 'utf8');
    expect(text).toBe(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8'));
    expect(analyse(text).diagnostics).toEqual([]);
  });

  it('never replaces an existing file', async () => {
    writeFileSync(join(scratch, 'mine.pwt'), 'my own table\n');
    recorded.pickAnswers.push('Starter table');
    recorded.inputAnswers.push('mine.pwt');
    expect(await newMachineCommand(extensionUri)).toBeUndefined();
    expect(readFileSync(join(scratch, 'mine.pwt'), 'utf8')).toBe('my own table\n');
    expect(recorded.messages).toEqual([{ kind: 'error', text: 'Phasewright: mine.pwt already exists in work or cannot be created; choose another name.' }]);
  });

  it('asks for a folder to be opened first, and writes nothing when the name is cancelled', async () => {
    recorded.pickAnswers.push('Starter table');
    recorded.inputAnswers.push(undefined);
    expect(await newMachineCommand(extensionUri)).toBeUndefined();
    expect(await newMachineCommand(extensionUri)).toBeUndefined(); // the choice of table cancelled
    recorded.folders.length = 0;
    expect(await newMachineCommand(extensionUri)).toBeUndefined();
    expect(recorded.messages.map((m) => m.text)).toEqual(['Phasewright: open a folder first; the new control table is written into it.']);
    expect(existsSync(join(scratch, 'machine.pwt'))).toBe(false);
  });
});

describe('progress notifications', () => {
  const table = { uri: Uri.file(join(scratch, 'demo.pwt')), languageId: 'phasewright' };
  const server = {
    build: async () => ({ ok: true, folder: join(scratch, 'out'), files: ['a', 'b'], summary: 'wrote 2 files\n' }),
    listing: async () => ({ ok: true, errors: 0, listings: [{ text: 'listing\n' }] }),
  } as unknown as ServerCommands;
  const output = { appendLine() {}, append() {}, show() {} };

  it('show while the images are built and while the listing is made', async () => {
    await buildImagesCommand(server, output as never, table as never);
    const provider = new ListingProvider(server);
    await showListingCommand(provider, table as never);
    expect(recorded.progress).toEqual([
      { location: ProgressLocation.Notification, title: 'Phasewright: building control-store images' },
      { location: ProgressLocation.Notification, title: 'Phasewright: encoding the control-word listing' },
    ]);
  });
});
