// `phasewright fit` and safety: on every example the fit either refuses a table with errors or
// reports every address checked and none unsafe; the same for a subset of outputs (the rest stay
// in the ROM) and with --keep-fill; the report names the drivers left free.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';

const root = join(__dirname, '../..');

async function fit(file: string, ...extra: string[]) {
  const io = memoryIo(root);
  const code = await runCommand(['fit', file, '--device', 'gal22v10', '--out', `tests/.tmp/cli-fit/${file.replace(/[/.]/g, '_')}${extra.join('')}`, ...extra], io);
  return { code, out: io.stdout, err: io.stderr };
}

const examples = [
  'examples/halyard-32.pwt',
  ...readdirSync(join(root, 'examples/faults'))
    .filter((f) => f.endsWith('.pwt'))
    .map((f) => `examples/faults/${f}`),
];

describe('phasewright fit is safe on every example', () => {
  it('fits with 0 unsafe addresses out of all, or refuses a table with errors', async () => {
    let fitted = 0;
    for (const file of examples) {
      const { code, out, err } = await fit(file);
      if (code === 1) {
        expect(err, file).toMatch(/has \d+ error\(s\); nothing was fitted/);
        continue;
      }
      expect(code, `${file}: ${err}`).toBe(0);
      const safety = /safety: (\d+) of (\d+) addresses checked, (\d+) unsafe/.exec(out);
      expect(safety, file).not.toBeNull();
      expect(safety![1], file).toBe(safety![2]);
      expect(Math.log2(Number(safety![2])) % 1, file).toBe(0);
      expect(safety![3], file).toBe('0');
      fitted++;
    }
    expect(fitted).toBeGreaterThanOrEqual(5);
  }, 120_000);

  it('reports the demo: every one of the 8192 addresses checked, and the one free driver per bus', async () => {
    const { code, out } = await fit('examples/halyard-32.pwt');
    expect(code).toBe(0);
    expect(out).toContain('6990 of 8192 addresses are never reached: there fields and one driver per bus (pc.oe on left, imm.oe on right, alu.oe on result) may take any value, every other strobe keeps the fill word');
    expect(out).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe (equations, Verilog and every fuse map)');
    expect(out).toContain("use the programmer's verify");
  }, 60_000);

  it('is safe for a subset of outputs, and with --keep-fill', async () => {
    const subset = await fit('examples/halyard-32.pwt', '--outputs', 't.oe,mem.rd,done');
    expect(subset.code).toBe(0);
    expect(subset.out).toContain('one driver per bus (mem.rd on result)');
    expect(subset.out).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe');
    const kept = await fit('examples/halyard-32.pwt', '--keep-fill');
    expect(kept.code).toBe(0);
    expect(kept.out).toContain('the fill word is kept at every address no step reaches (--keep-fill)');
    expect(kept.out).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe');
  }, 60_000);
});
