// Runs the benchmarks: bundles each bench/*.bench.ts with esbuild (so they import the
// TypeScript core directly) and runs them one after another in fresh Node processes.
// `npm run bench` runs all; `npm run bench -- analysis lsp` runs the named ones.
import { build } from 'esbuild';
import { readdirSync, mkdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';

const wanted = process.argv.slice(2);
const files = readdirSync('bench')
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => wanted.length === 0 || wanted.some((w) => f.startsWith(w)))
  .sort();
mkdirSync('bench/.tmp', { recursive: true });
let failed = 0;
for (const file of files) {
  const outfile = join('bench/.tmp', file.replace(/\.ts$/, '.cjs'));
  await build({ entryPoints: [join('bench', file)], outfile, bundle: true, platform: 'node', target: 'node20', format: 'cjs', logLevel: 'warning' });
  console.log(`\n== ${file.replace('.bench.ts', '')} ==`);
  const result = spawnSync(process.execPath, ['--expose-gc', outfile], { stdio: 'inherit' });
  if (result.status !== 0) failed++;
}
if (failed) {
  console.error(`${failed} benchmark(s) failed`);
  process.exit(1);
}
