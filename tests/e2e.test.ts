// Runs the end-to-end test of the packaged extension in a real VS Code (tests/e2e/run.mjs:
// code-server and Debian's chromium, installed by tests/e2e/install.sh, which .ci/run calls).
// Where they are not installed the test is skipped on a developer machine and fails under CI,
// so a broken install step can never pass silently. Screenshots land in tests/e2e/artifacts/.
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { underCi } from './support/tools';

const root = join(__dirname, '..');
const needs = [join(root, 'tests/e2e/node_modules/.bin/code-server'), join(root, 'tests/e2e/node_modules/playwright-core/package.json'), '/usr/bin/chromium'];
const installed = needs.every((p) => existsSync(p));

describe('the extension in VS Code (code-server + chromium)', () => {
  it.skipIf(!installed && !underCi)('shows status, problems, hover, builds images, lists words, runs a program, draws the timing diagram, debugs a program and shows the bring-up view', { timeout: 420_000 }, () => {
    if (!installed) throw new Error(`end-to-end tools missing under CI (${needs.filter((p) => !existsSync(p)).join(', ')}): run tests/e2e/install.sh`);
    let output = '';
    try {
      output = execFileSync(process.execPath, [join(root, 'tests/e2e/run.mjs')], { cwd: root, encoding: 'utf8', timeout: 400_000, stdio: ['ignore', 'pipe', 'pipe'] });
    } catch (err) {
      const e = err as { stdout?: string; stderr?: string; message: string };
      throw new Error(`${e.stdout ?? ''}${e.stderr ?? ''}${e.message}`);
    }
    for (const line of [
      'e2e: status bar: Halyard-32: 0 errors · 8K×32',
      'e2e: hover explains alu.oe',
      'e2e: build wrote 18 files into rom-images/',
      'e2e: listing document opened',
      'e2e: ran crc_sieve.elf through the table in lock-step: exit code 0, its summary in the Phasewright channel',
      'e2e: timing diagram draws BRANCH and follows the guard choice',
      'e2e: timing diagram follows the cursor to JALR',
      'e2e: saved the diagram as a standalone SVG',
      'e2e: debugger stopped on class OP step 2; Variables shows x1 (ra) = 0x0001000c and x10 (a0) = 0x00000005',
      'e2e: bring-up view shows cycles 0-12 at the stop: x10 = 5, result = 12, step 010; picking cycle 3 redraws it',
      'e2e: all checks passed',
    ]) {
      expect(output).toContain(line);
    }
  });
});
