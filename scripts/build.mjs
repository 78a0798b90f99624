// Bundles the four entry points with esbuild: the CLI, the language server, the debug adapter
// and the VS Code client. Everything is CommonJS for Node 20; `vscode` stays external because
// the editor provides it at run time.
import { build } from 'esbuild';
import { chmodSync, copyFileSync, mkdirSync } from 'node:fs';

const common = {
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  sourcemap: true,
  // Minified bundles load faster (the CLI starts for every command) and keep the VSIX small;
  // the source maps keep stack traces readable.
  minify: true,
  keepNames: true,
  logLevel: 'warning',
};

// The WebAssembly Z3 (npm z3-solver) is not bundled into the entry points: cli/z3Wasm.ts loads
// dist/z3/solver.js at run time, on the first proof. That file is the package's Node entry with
// its JavaScript dependencies bundled; Emscripten's glue (z3-built.js) and the WebAssembly stay
// separate files beside it, since the glue finds the .wasm (and starts its worker threads) from
// its own location.
const z3Package = 'node_modules/z3-solver/build';
mkdirSync('dist/z3', { recursive: true });
for (const file of ['z3-built.js', 'z3-built.wasm']) copyFileSync(`${z3Package}/${file}`, `dist/z3/${file}`);
copyFileSync('node_modules/z3-solver/LICENSE.txt', 'dist/z3/LICENSE.txt');

await Promise.all([
  build({ ...common, entryPoints: [`${z3Package}/node.js`], outfile: 'dist/z3/solver.js', external: ['./z3-built'], sourcemap: false }),
  build({ ...common, entryPoints: ['server/src/cli/main.ts'], outfile: 'dist/cli.js', banner: { js: '#!/usr/bin/env node' } }),
  build({ ...common, entryPoints: ['server/src/lsp/main.ts'], outfile: 'dist/server.js' }),
  // The language server's proof worker (lsp/proofs.ts forks it on the first proof).
  build({ ...common, entryPoints: ['server/src/lsp/proofWorker.ts'], outfile: 'dist/proofWorker.js' }),
  build({ ...common, entryPoints: ['server/src/debug/main.ts'], outfile: 'dist/debug.js' }),
  build({ ...common, entryPoints: ['client/src/extension.ts'], outfile: 'dist/client.js', external: ['vscode'] }),
]);
chmodSync('dist/cli.js', 0o755);
