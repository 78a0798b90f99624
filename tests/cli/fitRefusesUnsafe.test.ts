// `phasewright fit` refuses an unsafe result: with the table builder replaced (for this file
// only) by one that makes every output a don't-care where no step covers the address, as fit
// once did, the safety check must find the fights, name the first address and its drivers,
// exit 1 and write nothing.
import { existsSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { unconstrainedTable } from '../support/unconstrained';

vi.mock('../../server/src/core/encode/storeTable', async (original) => {
  const real = await original<typeof import('../../server/src/core/encode/storeTable')>();
  return {
    ...real,
    storeTruthTable: (...args: Parameters<typeof real.storeTruthTable>) => {
      const built = real.storeTruthTable(...args);
      return { ...built, table: unconstrainedTable(built.table, built.unreachableBits) };
    },
  };
});

const root = join(__dirname, '../..');

describe('an unsafe fit', () => {
  it('is refused with the first unsafe address and its drivers, and nothing is written', async () => {
    const out = join(root, 'tests/.tmp/cli-fit-unsafe');
    rmSync(out, { recursive: true, force: true });
    const io = memoryIo(root);
    expect(await runCommand(['fit', 'examples/halyard-32.pwt', '--device', 'gal22v10', '--out', 'tests/.tmp/cli-fit-unsafe'], io)).toBe(1);
    expect(io.stdout).toContain('safety: 8192 of 8192 addresses checked, 6990 unsafe');
    expect(io.stderr).toMatch(/^phasewright fit: the equations would be unsafe at 6990 address\(es\), first at address 0x[0-9a-f]{4} \(step=\d{3} taken=\d f7b5=\d funct3=\d{3} opcode=\d{5}\): .*; nothing was written/);
    expect(existsSync(out)).toBe(false);
  }, 60_000);
});
