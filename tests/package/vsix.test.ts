// The packaged extension: `npm run package` (build, then vsce offline with no prompts) writes a VSIX holding
// exactly the whitelist (bundles, grammar, language configuration, snippets, the demo table, icon,
// the details page from EXTENSION.md with its pictures, the notation page, LICENSE and the
// manifest) and nothing else: no sources, tests, source maps, node_modules or developer README.
// The archive is listed with Info-ZIP's unzip, outside the project. The test runs the packaging
// half (`npm run package:vsix`) on the bundles `npm test` has just built: rebuilding them here
// would rewrite dist/ while other test files start the server and the CLI from it.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { haveTools } from '../support/tools';

const root = join(__dirname, '../..');
const vsix = join(root, 'phasewright-0.1.0.vsix');

describe('npm run package:vsix', () => {
  it('writes a VSIX with exactly the whitelisted files', { timeout: 180_000 }, () => {
    if (!haveTools(['unzip'], 'unzip')) return;
    const output = execFileSync('npm', ['run', 'package:vsix'], { cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
    // vsce reports the file count and size of what it packed.
    expect(output).toMatch(/DONE {2}Packaged: .*phasewright-0\.1\.0\.vsix \(22 files, [\d.]+ (KB|MB)\)/);
    expect(existsSync(vsix)).toBe(true);
    const names = execFileSync('unzip', ['-Z1', vsix], { encoding: 'utf8' }).trim().split('\n').sort();
    expect(names).toEqual(
      [
        '[Content_Types].xml',
        'extension.vsixmanifest',
        'extension/LICENSE.txt',
        'extension/dist/cli.js',
        'extension/dist/client.js',
        'extension/dist/debug.js',
        'extension/dist/server.js',
        'extension/dist/proofWorker.js',
        'extension/dist/z3/LICENSE.txt',
        'extension/dist/z3/solver.js',
        'extension/dist/z3/z3-built.js',
        'extension/dist/z3/z3-built.wasm',
        'extension/docs/images/hover.png',
        'extension/docs/images/timing-diagram.png',
        'extension/docs/notation.md',
        'extension/examples/halyard-32.pwt',
        'extension/images/icon.png',
        'extension/language-configuration.json',
        'extension/package.json',
        'extension/readme.md',
        'extension/snippets/phasewright.json',
        'extension/syntaxes/phasewright.tmLanguage.json',
      ].sort(),
    );
    // The details page is the user's README (EXTENSION.md), not the developers' README.md: no
    // developer steps, no placeholder links, every picture and link packaged or absolute.
    const readme = execFileSync('unzip', ['-p', vsix, 'extension/readme.md'], { encoding: 'utf8' });
    expect(readme).toBe(readFileSync(join(root, 'EXTENSION.md'), 'utf8'));
    expect(readme).not.toMatch(/npm ci|npx |npm run|example\.invalid|TODO/);
    for (const [, target] of readme.matchAll(/\]\(([^)\s]+)\)/g)) {
      if (/^https:\/\//.test(target)) continue;
      expect(names, `link ${target} is packaged`).toContain(`extension/${target}`);
    }
    expect(readme).toMatch(/\*\*New machine\*\*/);
    const manifestText = execFileSync('unzip', ['-p', vsix, 'extension/package.json'], { encoding: 'utf8' });
    expect(JSON.parse(manifestText).repository).toBeUndefined();
    // The bundles inside are the ones just built, byte for byte.
    for (const bundle of ['client', 'server', 'cli', 'debug']) {
      const packed = execFileSync('unzip', ['-p', vsix, `extension/dist/${bundle}.js`], { maxBuffer: 16 * 1024 * 1024 });
      expect(packed.equals(readFileSync(join(root, `dist/${bundle}.js`))), bundle).toBe(true);
    }
    const manifest = execFileSync('unzip', ['-p', vsix, 'extension.vsixmanifest'], { encoding: 'utf8' });
    expect(manifest).toMatch(/<Identity Language="en-US" Id="phasewright" Version="0\.1\.0" Publisher="phasewright"/);
    expect(manifest).toContain('Microsoft.VisualStudio.Code.Engine" Value="^1.91.0"');
    // The WebAssembly z3 (33 MB) is most of it; without it the VSIX is a few hundred kilobytes.
    const size = statSync(vsix).size;
    console.log(`VSIX: ${(size / 1024 / 1024).toFixed(1)} MB`);
    expect(size).toBeLessThan(16 * 1024 * 1024);
    const solver = execFileSync('unzip', ['-p', vsix, 'extension/dist/z3/z3-built.wasm'], { maxBuffer: 64 * 1024 * 1024 });
    expect(solver.equals(readFileSync(join(root, 'node_modules/z3-solver/build/z3-built.wasm'))), 'the packaged WebAssembly is the npm package\'s').toBe(true);
  });
});
