// `phasewright fit` and safety: on every example the fit either refuses a table with errors or
// reports every address checked and none unsafe; the same for a subset of outputs (the rest stay
// in the ROM) and with --keep-fill; the report names the drivers left free, is laid out per
// device, and the equations file it writes reads back.
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { storeTruthTable } from '../../server/src/core/encode/storeTable';
import { minimise, readEquations } from '../../server/src/core/logic';

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
    expect(out).toContain('free drivers: pc.oe on left, imm.oe on right, alu.oe on result (one per bus at the 6990 of 8192 addresses no step reaches; fields are free there too, every other strobe keeps the fill word)');
    expect(out).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe (equations, Verilog and every fuse map)');
    expect(out).toContain("use the programmer's verify");
  }, 60_000);

  it('is safe for a subset of outputs, and with --keep-fill', async () => {
    const subset = await fit('examples/halyard-32.pwt', '--outputs', 't.oe,mem.rd,done');
    expect(subset.code).toBe(0);
    expect(subset.out).toContain('free drivers: mem.rd on result (one per bus at the 6990 of 8192 addresses');
    expect(subset.out).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe');
    const kept = await fit('examples/halyard-32.pwt', '--keep-fill');
    expect(kept.code).toBe(0);
    expect(kept.out).toContain('free drivers: none; the fill word is kept at every address no step reaches (--keep-fill)');
    expect(kept.out).toContain('safety: 8192 of 8192 addresses checked, 0 unsafe');
  }, 60_000);

  it('lays the report out per device: a table of outputs, then the safety line, the free drivers and the files', async () => {
    const { code, out } = await fit('examples/halyard-32.pwt');
    expect(code).toBe(0);
    const lines = out.split('\n');
    expect(lines[0]).toMatch(/^Halyard-32, store main: 28 outputs of 13 address inputs, 111 product terms \(minimised in \d+ ms\)$/);
    expect(lines[1]).toBe('fitted into 3 GAL22V10 devices, combinational mode');
    const at = (text: string) => lines.findIndex((l) => l === text || l.startsWith(text));
    const order = ['device 1 of 3 (GAL22V10)', 'device 2 of 3', 'device 3 of 3', 'safety: ', 'free drivers: ', 'files in ', 'Caution: '].map(at);
    expect(order.every((k) => k > 0)).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    const device1 = lines.slice(order[0] + 1, order[1]);
    expect(device1[0]).toMatch(/^ {2}output +pin +terms +polarity$/);
    // Each placed output is a row: name, pin, terms used of the cell's, polarity.
    expect(device1).toContainEqual(expect.stringMatching(/^ {2}done +18 +14\/16 +high$/));
    expect(device1).toContainEqual(expect.stringMatching(/^ {2}pc\.oe +15 +5\/10 +low$/));
    expect(device1).toContain('  input pins: 1 step[0], 2 step[1], 3 step[2], 4 taken, 5 f7b5, 6 funct3[0], 7 funct3[1], 8 funct3[2], 9 opcode[0], 10 opcode[1], 11 opcode[2], 13 opcode[3], 14 opcode[4]');
    const files = lines.slice(order[5] + 1, order[6]);
    expect(files.map((l) => l.trim().split(/ +/)[0])).toEqual(['halyard-32.main.gal22v10-1.jed', 'halyard-32.main.gal22v10-2.jed', 'halyard-32.main.gal22v10-3.jed', 'halyard-32.main.eqn', 'halyard-32.main.v']);
  }, 60_000);

  it('writes equations in the expression language, which read back from the file', async () => {
    const { code } = await fit('examples/halyard-32.pwt');
    expect(code).toBe(0);
    const written = readFileSync(join(root, 'tests/.tmp/cli-fit/examples_halyard-32_pwt/halyard-32.main.eqn'), 'utf8');
    expect(written).toContain('\nkind main_logic "Halyard-32, store main: 28 fitted outputs"\n  input step 3 "address lines 0 to 2"\n');
    expect(written).toMatch(/^ {2}drive done 1 = [^;!]+ "done"$/m);
    expect(written).toMatch(/^ {2}drive pc_oe 1 = ~\(.+\) "pc\.oe"$/m);
    const { machine } = analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8'));
    const encoded = encodeMachine(machine);
    const read = readEquations(written, minimise(storeTruthTable(machine, encoded, encoded.stores[0]).table, { polarity: 'best' }));
    expect(read.ok && read.equations.length).toBe(28);
  }, 60_000);
});

describe('phasewright fit on a large store: bounded, interruptible', () => {
  it('refuses a time bound that is not a number of seconds', async () => {
    const { code, err } = await fit('examples/halyard-32.pwt', '--time-per-output', 'soon');
    expect(code).toBe(2);
    expect(err).toContain('--time-per-output takes a number of seconds');
  });

  it('stops on Ctrl-C during minimisation of a 20-line store with nothing written and no lock left', async () => {
    const { spawn } = await import('node:child_process');
    const { existsSync, mkdirSync, writeFileSync, readdirSync: list } = await import('node:fs');
    const { store24Table } = await import('../support/hostile');
    const dir = join(root, 'tests/.tmp/cli-fit-interrupt');
    mkdirSync(dir, { recursive: true });
    const demo = readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8');
    writeFileSync(join(dir, 's20.pwt'), store24Table(demo).replace('address 24', 'address 20').replace('ir[25:15] 13..23', 'ir[22:16] 13..19'));
    const out = join(dir, `out-${process.pid}`);
    const child = spawn(process.execPath, [join(root, 'dist/cli.js'), 'fit', join(dir, 's20.pwt'), '--device', 'gal22v10', '--out', out], { stdio: 'ignore' });
    // Minimising the 20-line store takes tens of seconds; interrupt it well inside that.
    await new Promise((r) => setTimeout(r, 3000));
    child.kill('SIGINT');
    const ended = await new Promise<{ code: number | null; signal: string | null }>((r) => child.on('exit', (code, signal) => r({ code, signal })));
    expect(ended.signal ?? ended.code).toBe(ended.signal ? 'SIGINT' : 130);
    // Files are written only after minimisation, all or nothing: there is nothing to clean up.
    expect(existsSync(out) ? list(out) : []).toEqual([]);
  }, 60_000);
});
