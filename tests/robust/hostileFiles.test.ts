// Hostile inputs and outputs for the command line: an unreadable file, and a build killed at
// random moments mid-write, which must leave every image either the previous build's or the
// new one's (never a torn file), and a folder a later build can still write into.
import { beforeAll, describe, expect, it } from 'vitest';
import { chmodSync, mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { spawn, spawnSync, execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { join } from 'node:path';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/hostile');
const cli = join(root, 'dist/cli.js');

beforeAll(() => {
  execFileSync('npm', ['run', 'build', '--silent'], { cwd: root });
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(tmp, { recursive: true });
});

describe('unreadable files', () => {
  it('get a one-line permission error and exit 2', () => {
    const file = join(tmp, 'locked.pwt');
    writeFileSync(file, 'bus a 8\n');
    chmodSync(file, 0o000);
    // Root reads any file, so drop to an unprivileged user for the check when running as root.
    const asRoot = process.getuid?.() === 0;
    const r = asRoot
      ? spawnSync('setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, cli, 'check', file], { encoding: 'utf8' })
      : spawnSync(process.execPath, [cli, 'check', file], { encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr.trim()).toBe(`phasewright check: ${file}: permission denied`);
  });
});

describe('a build killed mid-write', () => {
  it('leaves each image whole (old or new) and the folder usable, over many kill times', async () => {
    const out = join(tmp, 'images');
    const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
    const changed = join(tmp, 'halyard-32.pwt');
    writeFileSync(changed, demo.replace('000 0 add   000 1 sub', '000 0 sub   000 1 add'));
    const hashes = (dir: string) =>
      Object.fromEntries(readdirSync(dir).filter((f) => !f.endsWith('.json') && !f.startsWith('.')).map((f) => [f, createHash('sha256').update(readFileSync(join(dir, f))).digest('hex')]));
    // The previous build, and what the new table builds to, for reference.
    expect(spawnSync(process.execPath, [cli, 'build', 'examples/halyard-32.pwt', '--out', out], { cwd: root }).status).toBe(0);
    const before = hashes(out);
    const refDir = join(tmp, 'reference');
    expect(spawnSync(process.execPath, [cli, 'build', changed, '--out', refDir], { cwd: root }).status).toBe(0);
    const after = hashes(refDir);
    let interrupted = 0;
    for (const delayMs of [40, 120, 250, 400, 600, 800]) {
      const child = spawn(process.execPath, [cli, 'build', changed, '--out', out], { cwd: root, stdio: 'ignore' });
      // Listen for the exit before killing: a fast build may end before the kill.
      const exited = new Promise<number | null>((r) => child.on('exit', (c) => r(c)));
      await new Promise((r) => setTimeout(r, delayMs));
      child.kill('SIGKILL');
      const code = await exited;
      if (code === null) interrupted++;
      for (const [name, hash] of Object.entries(hashes(out))) {
        expect([before[name], after[name]], `${name} after a kill at ${delayMs} ms`).toContain(hash);
      }
      // A leftover temporary file may remain after SIGKILL; the next build must still work.
      const next = spawnSync(process.execPath, [cli, 'build', 'examples/halyard-32.pwt', '--out', out], { cwd: root, encoding: 'utf8' });
      expect(next.status, next.stderr).toBe(0);
      expect(hashes(out)).toEqual(before);
    }
    console.log(`interrupted builds: ${interrupted} of 6 kills landed before the build finished`);
    expect(interrupted).toBeGreaterThan(0);
  }, 120_000);
});
