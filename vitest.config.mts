import { defineConfig } from 'vitest/config';

export default defineConfig({
  // The client's modules import `vscode`, which only the editor provides: tests of those
  // modules get the stand-in in tests/support/fakeVscode.ts.
  resolve: { alias: { vscode: new URL('./tests/support/fakeVscode.ts', import.meta.url).pathname } },
  test: {
    include: ['tests/**/*.test.ts'],
    exclude: ['tests/e2e/**', 'node_modules/**'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
