// `phasewright compile`: usage errors and a missing compiler are one-line refusals (exit 2);
// with Debian's cross compiler (gcc-riscv64-unknown-elf) a C program and an assembly program
// become executables `phasewright run` loads and runs, compiler errors pass through (exit 1)
// and nothing is written. The run under qemu-riscv32 is tests/outside/readme-program.test.ts.
import { existsSync, mkdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { haveTools } from '../support/tools';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/cli-compile');

async function run(...args: string[]) {
  const io = memoryIo(root);
  const code = await runCommand(args, io);
  return { code, out: io.stdout, err: io.stderr };
}

beforeAll(() => {
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(tmp, { recursive: true });
});

describe('phasewright compile refuses', () => {
  it('bad usage and a missing compiler with one line and exit 2', async () => {
    const cases: [string[], string][] = [
      [[], 'give at least one source file'],
      [['examples/programs/hello.c'], 'name the executable to write with -o PROGRAM.elf'],
      [['README.md', '-o', 'tests/.tmp/cli-compile/x.elf'], 'README.md is not a C (.c) or assembly (.S, .s) source'],
      [['missing.c', '-o', 'tests/.tmp/cli-compile/x.elf'], 'missing.c: no such file'],
    ];
    for (const [args, reason] of cases) {
      const r = await run('compile', ...args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err, args.join(' ')).toContain(reason);
    }
    const missing = await run('compile', 'examples/programs/hello.c', '-o', 'tests/.tmp/cli-compile/x.elf', '--cc', '/nonexistent/riscv64-unknown-elf-gcc');
    expect(missing).toEqual({
      code: 2,
      out: '',
      err: 'phasewright compile: /nonexistent/riscv64-unknown-elf-gcc is not installed; install the RISC-V cross compiler (Debian: sudo apt-get install gcc-riscv64-unknown-elf) or name one with --cc\n',
    });
    expect(existsSync(join(tmp, 'x.elf'))).toBe(false);
  });
});

describe.skipIf(!haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf'))('phasewright compile with the cross compiler', () => {
  it('builds a C program that `run` loads and runs on the demo table', async () => {
    const r = await run('compile', 'examples/programs/hello.c', '-o', 'tests/.tmp/cli-compile/hello.elf');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^wrote tests\/\.tmp\/cli-compile\/hello\.elf \(\d+ bytes\): RV32I executable, entry 0x00010000; run it with `phasewright run TABLE\.pwt tests\/\.tmp\/cli-compile\/hello\.elf`\n$/);
    expect(statSync(join(tmp, 'hello.elf')).mode & 0o111).not.toBe(0);
    const ran = await run('run', 'examples/halyard-32.pwt', 'tests/.tmp/cli-compile/hello.elf');
    expect(ran.out).toBe('hello from the control table\n');
    expect(ran.code).toBe(0);
  });

  it('passes flags after -- to the compiler, and links * and / from libgcc', async () => {
    writeFileSync(join(tmp, 'scaled.c'), '#include "phasewright.h"\nvolatile int seven = 7;\nint main(void) { return (seven * SCALE) / 3; }\n');
    expect((await run('compile', 'tests/.tmp/cli-compile/scaled.c', '-o', 'tests/.tmp/cli-compile/scaled.elf', '--', '-DSCALE=9')).code).toBe(0);
    // 7 * 9 / 3 = 21, computed by the program on the table.
    expect((await run('run', 'examples/halyard-32.pwt', 'tests/.tmp/cli-compile/scaled.elf')).code).toBe(21);
  });

  it('builds an assembly program that brings its own _start, without the C start-up file', async () => {
    const r = await run('compile', 'tests/programs/syscalls.S', '-o', 'tests/.tmp/cli-compile/syscalls.elf');
    expect(r.code).toBe(0);
    const ran = await run('run', 'examples/halyard-32.pwt', 'tests/.tmp/cli-compile/syscalls.elf');
    expect(ran.err).toContain('program exited with code');
  });

  it('passes the compiler\'s errors on, exits 1 and writes nothing', async () => {
    writeFileSync(join(tmp, 'broken.c'), 'int main(void) { return undeclared; }\n');
    const r = await run('compile', 'tests/.tmp/cli-compile/broken.c', '-o', 'tests/.tmp/cli-compile/broken.elf');
    expect(r.code).toBe(1);
    expect(r.err).toContain("'undeclared' undeclared");
    expect(r.err).toContain('failed (exit 1); nothing was written');
    expect(existsSync(join(tmp, 'broken.elf'))).toBe(false);
  });
});
