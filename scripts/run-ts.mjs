// Runs a TypeScript script of this repository: bundles it with esbuild into a temporary file
// and runs it with the remaining arguments. Used for documentation generators and tools.
import { build } from 'esbuild';
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { basename } from 'node:path';

const [entry, ...args] = process.argv.slice(2);
if (!entry) {
  console.error('usage: node scripts/run-ts.mjs FILE.ts [ARGS...]');
  process.exit(2);
}
mkdirSync('dist/scripts', { recursive: true });
const outfile = `dist/scripts/${basename(entry, '.ts')}.cjs`;
await build({ entryPoints: [entry], outfile, bundle: true, platform: 'node', target: 'node20', format: 'cjs', logLevel: 'warning' });
const result = spawnSync(process.execPath, [outfile, ...args], { stdio: 'inherit' });
process.exit(result.status ?? 1);
