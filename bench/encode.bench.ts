// Encoding and writing every format for a store with 16 address lines and a 32-bit word (the
// demo machine with three more instruction bits on its address, in 27C512 chips): output
// megabytes per second in-process, and the wall time of the whole `phasewright build` run.
// Targets from the project's issue: >= 50 MB/s in-process; the CLI run <= 0.5 s wall.
import { readFileSync, mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyse } from '../server/src/core/analysis';
import { planBuild } from '../server/src/core/encode/plan';
import { imageFormats } from '../server/src/core/encode/formats';
import { nowMs, median, row, withProgress } from './stats';

const demo = readFileSync('examples/halyard-32.pwt', 'utf8');
const wide = demo
  .replace('word 32 as 4 x 8 chip=28C64 unused=0', 'word 32 as 4 x 8 chip=27C512 unused=0')
  .replace('address 13\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12', 'address 16\n  step 0..2   taken 3   f7b5 4   funct3 5..7   opcode 8..12   ir[20] 13   ir[21] 14   ir[22] 15');
const analysis = analyse(wide);
if (analysis.diagnostics.length) throw new Error(`benchmark table: ${analysis.diagnostics[0].message}`);

function encodeAndWrite(): number {
  const plan = planBuild(analysis.machine, { stem: 'bench', source: 'bench.pwt' });
  let bytes = 0;
  for (const f of plan.files) {
    if (f.kind === 'image') bytes += imageFormats[f.format].write(f.image).length;
    else for (const chunk of f.chunks()) bytes += chunk.length;
  }
  return bytes;
}

const outputBytes = encodeAndWrite();
const times: number[] = [];
withProgress('encode and write', (update) => {
  for (let i = 0; i < 7; i++) {
    update(i, 7);
    const start = nowMs();
    encodeAndWrite();
    times.push(nowMs() - start);
  }
});
const ms = median(times);

const dir = mkdtempSync(join(tmpdir(), 'pw-bench-'));
writeFileSync(join(dir, 'wide.pwt'), wide);
const walls: number[] = [];
withProgress('phasewright build', (update) => {
  for (let i = 0; i < 5; i++) {
    update(i, 5);
    rmSync(join(dir, 'out'), { recursive: true, force: true });
    const start = nowMs();
    const r = spawnSync(process.execPath, ['dist/cli.js', 'build', join(dir, 'wide.pwt'), '--out', join(dir, 'out')], { encoding: 'utf8' });
    walls.push(nowMs() - start);
    if (r.status !== 0) throw new Error(r.stderr);
  }
});
rmSync(dir, { recursive: true, force: true });

console.log('encode + write all formats (ihex, srec, bin, memh, listing): 16 address lines, 32-bit word, 4 chips');
row('output per build', `${(outputBytes / 1e6).toFixed(2)} MB`);
row('in-process time (median of 7)', `${ms.toFixed(0)} ms`);
row('in-process throughput', `${(outputBytes / 1e6 / (ms / 1000)).toFixed(0)} MB/s`, '>= 50 MB/s');
row('CLI `phasewright build` wall (median of 5)', `${median(walls).toFixed(0)} ms`, '<= 500 ms');
