// The guides say what is true: every document they name exists, the README's Documentation list
// names every page in docs/, the editor sections name every command the extension contributes,
// the demo writes the files the README says, and .ci/run installs the packages the guides list.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = join(__dirname, '../..');
const read = (file: string) => readFileSync(join(root, file), 'utf8');
const readme = read('README.md');
const pkg = JSON.parse(read('package.json'));
const guides = ['README.md', 'DEVELOPERS.md', 'ARCHITECTURE.md', 'EXTENSION.md', '.ci/run', ...readdirSync(join(root, 'docs')).filter((f) => f.endsWith('.md')).map((f) => `docs/${f}`)];

/** The text of a markdown section, from its heading to the next heading of the same level or higher. */
function section(text: string, heading: string): string {
  const start = text.indexOf(`\n${heading}\n`);
  expect(start, heading).toBeGreaterThanOrEqual(0);
  const level = heading.match(/^#+/)![0].length;
  const rest = text.slice(start + heading.length + 2);
  const next = rest.search(new RegExp(`^#{1,${level}} `, 'm'));
  return next < 0 ? rest : rest.slice(0, next);
}

describe('the guides', () => {
  it('name only documents that exist', () => {
    for (const guide of guides) {
      for (const [, path] of read(guide).matchAll(/\b((?:docs|examples|scripts|tests)\/[\w./-]+\.(?:md|pwt|c|mjs|ts|sh))\b/g)) {
        expect(existsSync(join(root, path)) || existsSync(join(root, 'docs', path)), `${guide} names ${path}`).toBe(true);
      }
    }
  });

  it('the README lists every page of docs/ under Documentation', () => {
    const list = section(readme, '## Documentation');
    for (const page of readdirSync(join(root, 'docs')).filter((f) => f.endsWith('.md'))) expect(list, page).toContain(`\`docs/${page}\``);
  });

  it('the README and the details page name every command the extension contributes', () => {
    const inVsCode = section(readme, '## In VS Code');
    const details = section(read('EXTENSION.md'), '## Commands');
    for (const command of pkg.contributes.commands as { title: string }[]) {
      expect(inVsCode, command.title).toContain(`**${command.title}**`);
      expect(details, command.title).toContain(`**${command.title}**`);
    }
  });

  it('the demo writes what the README says: four formats per chip and the listing, 17 files, and the manifest', () => {
    const claimed = Number(/the control-word listing, (\d+) files in all, and the manifest/.exec(readme)?.[1]);
    const out = join(root, 'tests/.tmp/docs-demo');
    rmSync(out, { recursive: true, force: true });
    // The demo script's own command (package.json "demo"), into a scratch folder.
    expect(pkg.scripts.demo).toContain('node dist/cli.js build examples/halyard-32.pwt --out out');
    execFileSync(process.execPath, [join(root, 'dist/cli.js'), 'build', 'examples/halyard-32.pwt', '--out', out], { cwd: root });
    const files = readdirSync(out).filter((f) => f !== 'phasewright-manifest.json');
    expect(files).toHaveLength(claimed);
    expect(new Set(files.map((f) => f.split('.').pop()))).toEqual(new Set(['hex', 'srec', 'bin', 'memh', 'lst']));
    expect(files.filter((f) => /\.chip[0-3]\./.test(f))).toHaveLength(16);
    expect(existsSync(join(out, 'phasewright-manifest.json'))).toBe(true);
  });

  it('.ci/run installs the Debian packages DEVELOPERS.md lists, and says which', () => {
    const ci = read('.ci/run');
    const packages = /^packages=\(([^)]*)\)/m.exec(ci)![1].trim().split(/\s+/);
    const developers = /sudo apt-get install -y --no-install-recommends ([^`]*?)\n```/s.exec(read('DEVELOPERS.md'))![1].replace(/\\\n/g, ' ').trim().split(/\s+/);
    expect(developers.sort()).toEqual([...packages].sort());
    expect(ci).toContain('echo "Debian packages for the outside checks: ${packages[*]}"');
  });
});
