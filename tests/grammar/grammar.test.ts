// The TextMate grammar as the editor will load it: the unit tests in tests/grammar/*.test.pwt
// (scope assertions under each line) and token snapshots of the demo and every fault example,
// run with vscode-tmgrammar-test / vscode-tmgrammar-snap (the tools built on VS Code's own
// vscode-textmate and oniguruma). Both tools read the grammar the manifest contributes
// (`--config package.json`), which is what ships. A missing snapshot would be written and pass,
// so this test fails when one is missing. Refresh snapshots after an intended grammar change
// with `UPDATE_GRAMMAR_SNAPSHOTS=1 npx vitest run tests/grammar` and review the diff.
import { execFileSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = resolve(__dirname, '../..');
const manifest = join(root, 'package.json');
const unitTool = join(root, 'node_modules/vscode-tmgrammar-test/dist/unit.js');
const snapTool = join(root, 'node_modules/vscode-tmgrammar-test/dist/snapshot.js');
const snapshots = join(root, 'tests/grammar/snapshots');
const scratch = join(root, 'tests/.tmp/grammar');
const updating = process.env.UPDATE_GRAMMAR_SNAPSHOTS === '1';

function run(tool: string, args: string[]): { code: number; output: string } {
  try {
    const output = execFileSync(process.execPath, [tool, '--config', manifest, ...args], { cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
    return { code: 0, output };
  } catch (err) {
    const e = err as { status: number | null; stdout?: string; stderr?: string };
    return { code: e.status ?? -1, output: `${e.stdout ?? ''}${e.stderr ?? ''}` };
  }
}

/** The examples, relative to examples/: the demo and every fault file. */
function exampleFiles(): string[] {
  const faults = readdirSync(join(root, 'examples/faults')).filter((f) => f.endsWith('.pwt')).sort();
  return ['halyard-32.pwt', ...faults.map((f) => `faults/${f}`)];
}

function fresh(dir: string): string {
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  return dir;
}

describe('TextMate grammar', () => {
  it('is the grammar the manifest contributes for .pwt files', () => {
    const pkg = JSON.parse(readFileSync(manifest, 'utf8'));
    expect(pkg.contributes.languages).toContainEqual(expect.objectContaining({ id: 'phasewright', extensions: ['.pwt'] }));
    expect(pkg.contributes.grammars).toEqual([{ language: 'phasewright', scopeName: 'source.phasewright', path: './syntaxes/phasewright.tmLanguage.json' }]);
    const grammar = JSON.parse(readFileSync(join(root, 'syntaxes/phasewright.tmLanguage.json'), 'utf8'));
    expect(grammar.scopeName).toBe('source.phasewright');
  });

  it('passes its unit tests (scope assertions in tests/grammar/*.test.pwt)', () => {
    const files = readdirSync(join(root, 'tests/grammar')).filter((f) => f.endsWith('.test.pwt'));
    expect(files.length).toBeGreaterThan(0);
    const result = run(unitTool, ['tests/grammar/*.test.pwt']);
    expect(result.output).not.toMatch(/failed/);
    expect(result.code, result.output).toBe(0);
  });

  it('fails a unit test whose assertion is wrong (the tool is really checking)', () => {
    const dir = fresh(join(scratch, 'wrong'));
    const file = join(dir, 'wrong.test.pwt');
    // The keyword is a keyword, so asserting it is a string must fail.
    writeFileSync(file, '# SYNTAX TEST "source.phasewright"\nbus left 8\n#<-- string.quoted.double.phasewright\n');
    const result = run(unitTool, [file]);
    expect(result.code).not.toBe(0);
    expect(result.output).toMatch(/missing required scopes: string\.quoted\.double\.phasewright/);
  });

  it('has a committed snapshot for the demo and every fault example', () => {
    const missing = exampleFiles().filter((f) => !existsSync(join(snapshots, `${f}.snap`)));
    if (!updating) expect(missing, 'snapshots missing; run with UPDATE_GRAMMAR_SNAPSHOTS=1 and commit them').toEqual([]);
  });

  it('tokenises the demo and every fault example as in the snapshots', () => {
    const dir = fresh(join(scratch, 'snap'));
    for (const f of exampleFiles()) {
      mkdirSync(dirname(join(dir, f)), { recursive: true });
      copyFileSync(join(root, 'examples', f), join(dir, f));
      const snap = join(snapshots, `${f}.snap`);
      if (existsSync(snap)) copyFileSync(snap, join(dir, `${f}.snap`));
    }
    const result = run(snapTool, [...(updating ? ['--updateSnapshot'] : []), `${dir}/**/*.pwt`]);
    expect(result.code, result.output).toBe(0);
    if (updating) {
      for (const f of exampleFiles()) {
        mkdirSync(dirname(join(snapshots, f)), { recursive: true });
        copyFileSync(join(dir, `${f}.snap`), join(snapshots, `${f}.snap`));
      }
    }
  });

  it('fails a snapshot when the tokens change (the comparison is real)', () => {
    const dir = fresh(join(scratch, 'changed'));
    const f = 'faults/bus-contention.pwt';
    const snap = join(snapshots, `${f}.snap`);
    if (!existsSync(snap)) return expect.fail(`missing ${snap}`);
    // Same text length, different tokens: `active low` becomes `active 1ow` (a number, not a level).
    const source = readFileSync(join(root, 'examples', f), 'utf8').replace('active low', 'active 1ow');
    writeFileSync(join(dir, 'bus-contention.pwt'), source);
    copyFileSync(snap, join(dir, 'bus-contention.pwt.snap'));
    const result = run(snapTool, [join(dir, 'bus-contention.pwt')]);
    expect(result.code).not.toBe(0);
  });
});
