// Hostile inputs and outputs for the command line: an unreadable file; a build killed at
// random moments mid-write, which must leave every image either the previous build's or the
// new one's (never a torn file), and a folder a later build can still write into; two builds
// racing into one folder; `fit` and `build` sharing a folder; names that are not UTF-8 and a
// file stem of 230 characters.
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

const sha = (file: string) => createHash('sha256').update(readFileSync(file)).digest('hex');
const manifestOf = (dir: string) => JSON.parse(readFileSync(join(dir, 'phasewright-manifest.json'), 'utf8')) as { files: { name: string; sha256: string; command: string }[] };

describe('two builds racing into one folder', () => {
  it('run one after the other under the folder lock: the folder ends as one whole build, its printed checksums on disk', async () => {
    const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
    const other = join(tmp, 'race', 'halyard-32.pwt');
    mkdirSync(join(tmp, 'race'), { recursive: true });
    writeFileSync(other, demo.replace('000 0 add   000 1 sub', '000 0 sub   000 1 add'));
    const tables = [join(root, 'examples/halyard-32.pwt'), other];
    // What each table builds to on its own.
    const reference = tables.map((table, i) => {
      const dir = join(tmp, 'race', `ref${i}`);
      expect(spawnSync(process.execPath, [cli, 'build', table, '--out', dir], { cwd: root }).status).toBe(0);
      return Object.fromEntries(manifestOf(dir).files.map((f) => [f.name, f.sha256]));
    });
    const run = (table: string, out: string) =>
      new Promise<{ code: number | null; stdout: string }>((resolveRun) => {
        const child = spawn(process.execPath, [cli, 'build', table, '--out', out], { cwd: root });
        let stdout = '';
        child.stdout.on('data', (d) => (stdout += d));
        child.on('exit', (code) => resolveRun({ code, stdout }));
      });
    for (let pair = 0; pair < 10; pair++) {
      const out = join(tmp, 'race', `out${pair}`);
      const results = await Promise.all([run(tables[0], out), run(tables[1], out)]);
      expect(results.map((r) => r.code)).toEqual([0, 0]);
      const onDisk = Object.fromEntries(manifestOf(out).files.map((f) => [f.name, sha(join(out, f.name))]));
      // The folder is exactly one table's build, file for file, and the manifest says so.
      expect(reference).toContainEqual(onDisk);
      expect(Object.fromEntries(manifestOf(out).files.map((f) => [f.name, f.sha256]))).toEqual(onDisk);
      // Each build printed the checksums of its own files (the later one's are what is on disk).
      results.forEach((r, i) => {
        for (const [name, hash] of Object.entries(reference[i])) expect(r.stdout).toMatch(new RegExp(`${name.replace(/\./g, '\\.')} .* sha256 ${hash.slice(0, 16)}`));
      });
      expect(readdirSync(out).filter((f) => f.startsWith('.'))).toEqual([]);
    }
  }, 180_000);
});

describe('outputs of different commands in one folder', () => {
  it('fit keeps the images build wrote, and build keeps the fuse maps fit wrote; both are listed', () => {
    const out = join(tmp, 'shared');
    const cmd = (...args: string[]) => spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8' });
    expect(cmd('build', 'examples/halyard-32.pwt', '--out', out, '--format', 'bin').status).toBe(0);
    const images = readdirSync(out).filter((f) => f.endsWith('.bin'));
    expect(images).toHaveLength(4);
    const fit = cmd('fit', 'examples/halyard-32.pwt', '--device', 'gal22v10', '--out', out);
    expect(fit.status, fit.stderr).toBe(0);
    const build = cmd('build', 'examples/halyard-32.pwt', '--out', out, '--format', 'bin');
    expect(build.status, build.stderr).toBe(0);
    expect(build.stdout).not.toContain('left in place');
    const names = readdirSync(out);
    for (const image of images) expect(names).toContain(image);
    expect(names.filter((f) => f.endsWith('.jed')).length).toBeGreaterThan(0);
    const byCommand = manifestOf(out).files.map((f) => [f.command, f.name.split('.').pop()]);
    expect(new Set(byCommand.map((c) => c.join(' ')))).toEqual(new Set(['build bin', 'fit jed', 'fit eqn', 'fit v']));
  }, 60_000);
});

describe('names', () => {
  it('builds a table whose name is not UTF-8 into a folder whose name is not UTF-8, byte for byte', () => {
    const dir = join(tmp, 'names');
    mkdirSync(dir, { recursive: true });
    // 0xE9 alone is not UTF-8; printf makes the bytes and the shell passes them on untouched.
    const r = spawnSync('sh', ['-c', `cp "$1" "$(printf 'caf\\351.pwt')" && exec "$2" "$3" build "$(printf 'caf\\351.pwt')" --out "$(printf 'out\\351')" --format bin,list`, 'sh', join(root, 'examples/halyard-32.pwt'), process.execPath, cli], { cwd: dir, encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const folder = Buffer.concat([Buffer.from(`${dir}/out`), Buffer.from([0xe9])]);
    const written = readdirSync(folder, { encoding: 'buffer' }).map((b) => b.toString('latin1')).sort();
    expect(written).toEqual(['caf\xe9.main.chip0.bin', 'caf\xe9.main.chip1.bin', 'caf\xe9.main.chip2.bin', 'caf\xe9.main.chip3.bin', 'caf\xe9.main.lst', 'phasewright-manifest.json']);
    expect(readdirSync(dir, { encoding: 'buffer' }).map((b) => b.toString('latin1')).sort()).toEqual(['caf\xe9.pwt', 'out\xe9']);
  });

  it('builds a table whose stem is 230 characters long (output names of 251)', () => {
    const dir = join(tmp, 'long');
    mkdirSync(dir, { recursive: true });
    const table = join(dir, `${'t'.repeat(230)}.pwt`);
    writeFileSync(table, readFileSync(join(root, 'examples/halyard-32.pwt')));
    const r = spawnSync(process.execPath, [cli, 'build', table, '--out', join(dir, 'out')], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    expect(readdirSync(join(dir, 'out'))).toContain(`${'t'.repeat(230)}.main.chip0.memh`);
  });
});

