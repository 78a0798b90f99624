// `phasewright check` and `phasewright explain`, in-process through runCommand and once as a
// real process through the package's bin, as a user runs them.
import { describe, expect, it, beforeAll } from 'vitest';
import { mkdirSync, writeFileSync } from 'node:fs';
import { execFileSync, spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';

const tmp = join(__dirname, '../.tmp/cli-check');

async function run(...args: string[]) {
  const io = memoryIo(join(__dirname, '../..'));
  const code = await runCommand(args, io);
  return { code, out: io.stdout, err: io.stderr };
}

beforeAll(() => {
  mkdirSync(tmp, { recursive: true });
});

describe('phasewright check', () => {
  it('exits 0 on the demo and says so', async () => {
    const r = await run('check', 'examples/halyard-32.pwt');
    expect(r).toEqual({ code: 0, out: '', err: 'no errors or warnings in 1 file\n' });
  });

  it('counts warnings in the summary too', async () => {
    expect((await run('check', 'examples/faults/unused-name.pwt')).err).toBe('no errors, 1 warning in 1 file\n');
    expect((await run('check', 'examples/faults/bus-contention.pwt', 'examples/faults/unused-name.pwt', 'examples/halyard-32.pwt')).err).toBe('1 error, 1 warning in 3 files\n');
  });

  it('says how many it shows of how many when the cap cuts a flooded file short', async () => {
    // 1500 strobes nobody uses (a warning each) and 1500 that name a line the bus lacks (an error each).
    const flood = 'bus result 8\npart a register 8\n' + Array.from({ length: 3000 }, (_, i) => `strobe s${i} enable a -> result${i % 2 ? '[99]' : ''}\n`).join('');
    writeFileSync(join(tmp, 'flood.pwt'), flood);
    const r = await run('check', 'tests/.tmp/cli-check/flood.pwt');
    expect(r.code).toBe(1);
    const shown = r.out.split('\n').filter((l) => / (error|warning): /.test(l)).length;
    expect(shown).toBe(1000);
    const all = JSON.parse((await run('check', '--json', 'tests/.tmp/cli-check/flood.pwt')).out).files[0];
    expect(all.shown).toBe(1000);
    expect(all.errors + all.warnings).toBeGreaterThan(1000);
    expect(r.out).toContain(`tests/.tmp/cli-check/flood.pwt: 1000 shown of ${all.errors + all.warnings} diagnostics (errors first)`);
    expect(r.err).toBe(`${all.errors} errors, ${all.warnings} warnings in 1 file (1000 shown of ${all.errors + all.warnings})\n`);
  });

  it('prints file:line:col: severity: message [code] with related notes, and exits 1 on errors', async () => {
    const r = await run('check', 'examples/faults/bus-contention.pwt');
    expect(r.code).toBe(1);
    expect(r.out.split('\n')[0]).toBe(
      'examples/faults/bus-contention.pwt:15:12: error: `a.oe` and `b.oe` both drive bus `result` in step 0 of class OP; keep one driver. Caution: fighting outputs can overheat and damage parts; fix this before powering the board. [bus-contention]',
    );
    expect(r.out).toContain('examples/faults/bus-contention.pwt:15:6: note: `a.oe` drives `result`');
  });

  it('exits 0 when only warnings are found', async () => {
    const r = await run('check', 'examples/faults/unused-name.pwt');
    expect(r.code).toBe(0);
    expect(r.out).toContain('warning: strobe `b.oe` is never used [unused-name]');
  });

  it('gives the same diagnostics as JSON data', async () => {
    const r = await run('check', '--no-proof', '--json', 'examples/faults/step-gap.pwt');
    const data = JSON.parse(r.out);
    expect(data.files[0]).toMatchObject({ file: 'examples/faults/step-gap.pwt', errors: 0, warnings: 1 });
    expect(data.files[0].diagnostics[0]).toMatchObject({ code: 'step-gap', severity: 'warning', start: { line: 14, column: 3 }, end: { line: 14, column: 4 } });
  });

  it('proves a table without errors: a wrong decode-map row is a proof-refuted error on that row; --no-proof skips the proof', { timeout: 120_000 }, async () => {
    // RISC-V Unprivileged ISA 20191213, section 2.4: SLT compares signed, SLTU unsigned; the example swaps their rows.
    const r = await run('check', 'examples/faults/proof/proof-refuted.pwt');
    expect(r.code).toBe(1);
    const errors = r.out.split('\n').filter((l) => / error: /.test(l));
    expect(errors.map((l) => l.replace(/: error: (\w+) .*\[(.*)\]$/, ' $1 $2'))).toEqual(['examples/faults/proof/proof-refuted.pwt:66:39 slt proof-refuted', 'examples/faults/proof/proof-refuted.pwt:66:51 sltu proof-refuted']);
    expect(errors[0]).toMatch(/expected 0x00000001 \(RV32I\), obtained 0x00000000 \(table\)|expected 0x00000000 \(RV32I\), obtained 0x00000001 \(table\)/);
    expect(r.err).toBe('2 errors, 0 warnings in 1 file\n');
    const skipped = await run('check', '--no-proof', 'examples/faults/proof/proof-refuted.pwt');
    expect([skipped.code, skipped.out]).toEqual([0, '']);
    const demo = await run('check', 'examples/halyard-32.pwt');
    expect([demo.code, demo.out, demo.err]).toEqual([0, '', 'no errors or warnings in 1 file\n']);
  });

  it('honours a severity configuration file, in its own form or the editor settings form', async () => {
    const config = join(tmp, 'severity.json');
    writeFileSync(config, JSON.stringify({ severities: { 'bus-contention': 'warning' } }));
    const r = await run('check', '--no-proof', '--config', config, 'examples/faults/bus-contention.pwt');
    expect(r.code).toBe(0);
    expect(r.out).toContain('warning: `a.oe` and `b.oe`');
    writeFileSync(config, JSON.stringify({ 'phasewright.severity': { 'bus-contention': 'off' } }));
    expect((await run('check', '--no-proof', '--config', config, 'examples/faults/bus-contention.pwt')).out).toBe('');
    writeFileSync(config, JSON.stringify({ severities: { 'bus-contension': 'off' } }));
    const bad = await run('check', '--no-proof', '--config', config, 'examples/faults/bus-contention.pwt');
    expect(bad.code).toBe(2);
    expect(bad.err).toContain("unknown diagnostic code 'bus-contension'");
  });

  it('refuses what is not a table with one line and exit 2: missing, directory, binary, not UTF-8, too large', async () => {
    writeFileSync(join(tmp, 'nul.pwt'), Buffer.from([0x62, 0x75, 0x73, 0x00, 0x01]));
    writeFileSync(join(tmp, 'latin1.pwt'), Buffer.from([0x62, 0xe9, 0x0a]));
    writeFileSync(join(tmp, 'huge.pwt'), Buffer.alloc(50 * 1024 * 1024, 0x23));
    const cases: [string, string][] = [
      ['tests/.tmp/cli-check/missing.pwt', 'missing.pwt: no such file'],
      ['examples', 'examples is a directory; give a .pwt file'],
      ['tests/.tmp/cli-check/nul.pwt', 'contains NUL bytes: it looks like a binary file'],
      ['tests/.tmp/cli-check/latin1.pwt', 'is not valid UTF-8 text'],
      ['tests/.tmp/cli-check/huge.pwt', 'is 50.0 MB; control tables larger than 5 MB are refused'],
    ];
    for (const [file, message] of cases) {
      const r = await run('check', file);
      expect(r.code, file).toBe(2);
      expect(r.err, file).toContain(message);
      expect(r.err.trim().split('\n'), file).toHaveLength(1);
    }
  });

  it('rejects bad usage with exit 2', async () => {
    expect((await run('check')).code).toBe(2);
    expect((await run('check', '--nope', 'x.pwt')).err).toContain('unknown option --nope');
    expect((await run('frobnicate')).code).toBe(2);
  });
});

describe('phasewright explain', () => {
  it('prints the long explanation of a code, and suggests near misses', async () => {
    const r = await run('explain', 'bus-contention');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^bus-contention \(error by default\): two outputs drive one bus in the same step\n\n/);
    expect(r.out).toContain('overheat');
    const miss = await run('explain', 'bus-contension');
    expect(miss).toMatchObject({ code: 2 });
    expect(miss.err).toContain("did you mean 'bus-contention'?");
  });
});

describe('the installed command', () => {
  it('runs through npx --no-install phasewright after the build', () => {
    execFileSync('npm', ['run', 'build', '--silent'], { cwd: join(__dirname, '../..') });
    const ok = spawnSync('npx', ['--no-install', 'phasewright', 'check', 'examples/halyard-32.pwt'], { cwd: join(__dirname, '../..'), encoding: 'utf8' });
    expect(ok.status).toBe(0);
    const bad = spawnSync('npx', ['--no-install', 'phasewright', 'check', 'examples/faults/guard-gap.pwt'], { cwd: join(__dirname, '../..'), encoding: 'utf8' });
    expect(bad.status).toBe(1);
    expect(bad.stdout).toContain('[guard-gap]');
  });
});
