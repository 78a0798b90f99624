// Bundles the four entry points with esbuild: the CLI, the language server, the debug adapter
// and the VS Code client. Everything is CommonJS for Node 20; `vscode` stays external because
// the editor provides it at run time.
import { build } from 'esbuild';
import { chmodSync } from 'node:fs';

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

await Promise.all([
  build({ ...common, entryPoints: ['server/src/cli/main.ts'], outfile: 'dist/cli.js', banner: { js: '#!/usr/bin/env node' } }),
  build({ ...common, entryPoints: ['server/src/lsp/main.ts'], outfile: 'dist/server.js' }),
  build({ ...common, entryPoints: ['server/src/debug/main.ts'], outfile: 'dist/debug.js' }),
  build({ ...common, entryPoints: ['client/src/extension.ts'], outfile: 'dist/client.js', external: ['vscode'] }),
]);
chmodSync('dist/cli.js', 0o755);
