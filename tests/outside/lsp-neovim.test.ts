// Neovim's own LSP client (Debian's neovim 0.7.2, headless) against dist/server.js: it opens a
// fault example, and the diagnostics and hover it receives are the server's. The Lua side is
// tests/outside/lsp-neovim/check.lua; it follows the recipe in
// shared/design/toolchain-notes.md (start_client + buf_attach_client, `-c "luafile ..."`, always
// under `timeout`, XDG folders inside tests/.tmp so logs stay local).
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { haveTools } from '../support/tools';
import { ensureBuilt, root, serverPath } from '../lsp/support/client';

const available = haveTools(['nvim', 'timeout'], 'neovim');

describe.skipIf(!available)('Neovim 0.7 LSP client', () => {
  beforeAll(async () => {
    await ensureBuilt();
  });

  it('receives the bus-contention diagnostic and a strobe hover', () => {
    mkdirSync(join(root, 'tests/.tmp'), { recursive: true });
    const scratch = mkdtempSync(join(root, 'tests/.tmp/nvim-'));
    const fixture = join(root, 'examples/faults/bus-contention.pwt');
    const lines = readFileSync(fixture, 'utf8').split('\n');
    const hoverLine = lines.findIndex((l) => l.startsWith('strobe a.oe'));
    const out = join(scratch, 'out.json');
    let failure = '';
    try {
      execFileSync('timeout', ['60', 'nvim', '--headless', '-u', 'NONE', '-i', 'NONE', '-n', fixture, '-c', `luafile ${join(root, 'tests/outside/lsp-neovim/check.lua')}`], {
        cwd: root,
        env: {
          ...process.env,
          XDG_CACHE_HOME: join(scratch, 'cache'),
          XDG_STATE_HOME: join(scratch, 'state'),
          XDG_DATA_HOME: join(scratch, 'data'),
          XDG_CONFIG_HOME: join(scratch, 'config'),
          PW_SERVER: serverPath,
          PW_OUT: out,
          PW_HOVER_LINE: String(hoverLine),
          PW_HOVER_CHAR: '8',
        },
        stdio: 'pipe',
      });
    } catch (err) {
      failure = String((err as { stderr?: Buffer }).stderr ?? err);
    }
    const result = JSON.parse(readFileSync(out, 'utf8'));
    expect(result.error, failure).toBeUndefined();
    expect(result.diagnostics.map((d: { code: string }) => d.code)).toEqual(['bus-contention']);
    const d = result.diagnostics[0];
    expect([d.lnum, d.col, d.severity, d.source]).toEqual([lines.findIndex((l) => l.includes('0: a.oe, b.oe')), 11, 1, 'phasewright']);
    expect(d.message).toContain('`a.oe` and `b.oe` both drive bus `result`');
    expect(result.hover.kind).toBe('markdown');
    expect(result.hover.value.split('\n').slice(0, 5)).toEqual([
      '**strobe `a.oe`** — a drives the result bus.',
      '',
      '- **kind** `enable` — output enable: the part drives the bus for the whole step',
      '- **part** `a`, kind `register` — register: loads a bus at the closing edge, can drive a bus',
      '- **bus** `result` — 8 lines, no keepers (floats when undriven)',
    ]);
    expect(result.hover.value).toContain('- **bit** 0 of the word of store `main` → **chip 0, D0**');
  });
});
