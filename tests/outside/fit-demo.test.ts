// `phasewright fit` on the demo machine's whole control store: it must fit GAL22V10 devices,
// write fuse maps identical to an in-process build of the same fit, and Debian mame-tools'
// jedutil must read every file and print equations that, evaluated at every address of the
// store, give the encoded ROM's value wherever the table cares. For the GAL16V8 the store does
// not fit (since addresses no step covers hold every acting strobe idle, `done` needs 14 product
// terms and a GAL16V8 cell holds 8), and the report must say exactly why.
import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, rmSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { analyse } from '../../server/src/core/analysis';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { storeTruthTable } from '../../server/src/core/encode/storeTable';
import { buildGalImage, fitDevices, minimise, type FitResult } from '../../server/src/core/logic';
import { countMinterms, type TruthTable } from '../../server/src/core/logic/truthTable';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { haveTools } from '../support/tools';
import { evaluatePrinted, parseJedutilEquations } from '../support/jedutil';

const root = join(__dirname, '../..');
const out = join(root, 'tests/.tmp/fit-demo');
const available = haveTools(['jedutil'], 'mame-tools');
let table: TruthTable;
let fit: FitResult;
let cliOutput = '';

beforeAll(async () => {
  rmSync(out, { recursive: true, force: true });
  const io = memoryIo(root);
  const code = await runCommand(['fit', 'examples/halyard-32.pwt', '--device', 'gal22v10', '--out', 'tests/.tmp/fit-demo'], io);
  cliOutput = io.stdout + io.stderr;
  if (code !== 0) throw new Error(cliOutput);
  const { machine } = analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8'));
  const encoded = encodeMachine(machine);
  table = storeTruthTable(machine, encoded, encoded.stores[0]).table;
  fit = fitDevices(minimise(table, { polarity: 'best' }), { device: 'GAL22V10' });
}, 120_000);

describe('the demo store in GAL22V10 devices', () => {
  it('fits, and the CLI wrote exactly the in-process fuse maps', () => {
    expect(fit.ok).toBe(true);
    expect(cliOutput).toContain(`fitted into ${fit.devices.length} GAL22V10 devices`);
    for (const d of fit.devices) {
      const written = readFileSync(join(out, `halyard-32.main.gal22v10-${d.index + 1}.jed`), 'latin1');
      const expected = buildGalImage(table, d, fit.devices.length, { designName: `Halyard-32 main GAL22V10 ${d.index + 1}/${fit.devices.length}`, notes: [`phasewright 0.1.0`] }).jedec;
      expect(written).toBe(expected);
    }
  });

  it.skipIf(!available)('jedutil reads every fuse map and its equations equal the ROM at every cared-for address', () => {
    let comparisons = 0;
    for (const d of fit.devices) {
      const file = join(out, `halyard-32.main.gal22v10-${d.index + 1}.jed`);
      const r = spawnSync('jedutil', ['-view', file, 'GAL22V10'], { encoding: 'utf8' });
      expect(r.status, r.stderr).toBe(0);
      const printed = parseJedutilEquations(r.stdout);
      for (let address = 0; address < 2 ** table.nInputs; address++) {
        const levels = new Map<number, 0 | 1>(d.inputs.map((input) => [input.pin, ((address >>> input.inputIndex) & 1) as 0 | 1]));
        for (const o of d.outputs) {
          const bits = table.outputs[o.outputIndex];
          const bit = 1 << (address & 31);
          if (bits.dc[address >>> 5] & bit) continue;
          expect(evaluatePrinted(printed.get(o.pin)!, levels), `${o.name} at address ${address}`).toBe(bits.on[address >>> 5] & bit ? 1 : 0);
          comparisons++;
        }
      }
    }
    // Every cared-for (address, output) pair of the table was compared once.
    const cared = table.outputs.reduce((n, _, k) => n + countMinterms(table, k).care, 0);
    expect(comparisons).toBe(cared);
    expect(cared).toBeGreaterThan(20_000);
  });

  it('says exactly why it does not fit GAL16V8 devices, or when a pin map makes it impossible', async () => {
    const io = memoryIo(root);
    expect(await runCommand(['fit', 'examples/halyard-32.pwt', '--device', 'gal16v8', '--out', 'tests/.tmp/fit-demo-16v8'], io)).toBe(1);
    expect(io.stdout).toContain('does not fit GAL16V8 devices:');
    expect(io.stdout).toContain('output "done" needs 14 product terms after minimisation, but the largest GAL16V8 cell (pins 12, 13, 14, 15, 16, 17, 18 and 19) holds 8');
    expect(io.stderr).toBe('phasewright fit: nothing was written\n');
    const pins = join(out, '..', 'fit-pins.json');
    require('node:fs').writeFileSync(pins, JSON.stringify({ 'pc.ck': 1 }));
    const bad = memoryIo(root);
    expect(await runCommand(['fit', 'examples/halyard-32.pwt', '--device', 'gal22v10', '--pins', pins, '--out', 'tests/.tmp/fit-demo-pins'], bad)).toBe(1);
    expect(bad.stdout).toContain('does not fit GAL22V10 devices:');
    expect(bad.stdout).toContain('pc.ck');
    expect(bad.stderr).toBe('phasewright fit: nothing was written\n');
  });
});
