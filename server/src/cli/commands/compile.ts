// `phasewright compile SOURCE... -o PROGRAM.elf [--cc COMPILER] [-- FLAGS...]`: builds an RV32I
// test program for `phasewright run` with the RISC-V cross compiler, if one is installed (Debian:
// gcc-riscv64-unknown-elf). C sources get the start-up file, the system calls, the memory
// functions and `phasewright.h` of programRuntime.ts, and libgcc for multiply and divide;
// assembly-only programs bring their own `_start`. Every program is linked at 0x00010000 with
// `-Wl,--no-relax`, so the same file runs under qemu-riscv32 too. The result is loaded once as
// `run` would load it before it is written (atomically, read back).
//
// Deliberately not here: any C library, and running the program.
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, dirname, extname, join, resolve } from 'node:path';
import { loadProgram } from '../../core/sim/program';
import { toHex } from '../../core/model/numbers';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { OutputError, writeFileSafely } from '../output/safeWriter';
import { describeFsError } from '../readSource';
import { compileFlags, headerFile, headerName, linkerScript, runtimeFile, startFile } from '../programRuntime';

export const defaultCompiler = 'riscv64-unknown-elf-gcc';
const sourceKinds = ['.c', '.S', '.s'];

export const compileCommand = defineCommand({
  name: 'compile',
  summary: 'build an RV32I test program (C or assembly) for `run` with the RISC-V cross compiler',
  operands: 'SOURCE...',
  options: [
    { name: 'out', short: 'o', value: 'PROGRAM.elf', required: true, help: 'the executable to write' },
    { name: 'cc', value: 'COMPILER', help: `the cross compiler (default ${defaultCompiler}, or $PHASEWRIGHT_CC)` },
  ],
  trailing: '[-- COMPILER-FLAGS...]',
  details: [
    'C sources (.c) are linked with a start-up file that calls main and exits with its return value, and `#include "phasewright.h"` declares pw_write, pw_print and pw_exit; there is no C library. Assembly-only programs (.S, .s) provide their own _start. Flags after `--` go to the compiler unchanged (e.g. -- -O2 -DROUNDS=3).',
    `Every program is built with ${compileFlags.join(' ')}, linked at 0x00010000 (-lgcc for C), so it runs under qemu-riscv32 as well.`,
  ],
  exitCodes: [
    [0, 'written'],
    [1, 'the compiler reported errors, or what it wrote is not a program `run` can load'],
    [2, 'usage error, a missing source, no cross compiler installed, or the output could not be written'],
  ],
  async run(args, io) {
    const split = args.indexOf('--');
    const extraFlags = split < 0 ? [] : args.slice(split + 1);
    const parsed = parseArgs(split < 0 ? args : args.slice(0, split), this.options);
    const fail = (reason: string) => {
      io.err(`phasewright compile: ${reason}\nusage: phasewright ${this.usage}\n`);
      return 2;
    };
    if (parsed.errors.length) return fail(parsed.errors[0]);
    if (parsed.positionals.length === 0) return fail('give at least one source file (.c, .S or .s)');
    const out = parsed.options.get('out');
    if (typeof out !== 'string' || !out) return fail('name the executable to write with -o PROGRAM.elf');
    for (const source of parsed.positionals) {
      if (!sourceKinds.includes(extname(source))) return fail(`${source} is not a C (.c) or assembly (.S, .s) source`);
      const path = resolve(io.cwd, source);
      try {
        if (!statSync(path).isFile()) return fail(`${source} is not a regular file`);
      } catch (err) {
        return fail(describeFsError(source, err));
      }
    }
    const ccOption = parsed.options.get('cc');
    const compiler = typeof ccOption === 'string' ? ccOption : (io.env.PHASEWRIGHT_CC ?? defaultCompiler);
    const hasC = parsed.positionals.some((s) => extname(s) === '.c');

    const scratch = mkdtempSync(join(tmpdir(), 'phasewright-compile-'));
    try {
      writeFileSync(join(scratch, 'link.ld'), linkerScript);
      const runtime: string[] = [];
      if (hasC) {
        for (const [name, text] of [['start.S', startFile], [headerName, headerFile], ['runtime.c', runtimeFile]] as const) writeFileSync(join(scratch, name), text);
        runtime.push(join(scratch, 'start.S'), join(scratch, 'runtime.c'));
      }
      const elfPath = join(scratch, 'program.elf');
      const gccArgs = [
        ...compileFlags,
        '-T',
        join(scratch, 'link.ld'),
        '-I',
        scratch,
        ...extraFlags,
        ...runtime,
        ...parsed.positionals.map((s) => resolve(io.cwd, s)),
        ...(hasC ? ['-lgcc'] : []),
        '-o',
        elfPath,
      ];
      const result = spawnSync(compiler, gccArgs, { cwd: io.cwd, encoding: 'utf8', env: { ...process.env, ...io.env } as NodeJS.ProcessEnv });
      if (result.error) {
        const missing = (result.error as NodeJS.ErrnoException).code === 'ENOENT';
        io.err(
          missing
            ? `phasewright compile: ${compiler} is not installed; install the RISC-V cross compiler (Debian: sudo apt-get install gcc-riscv64-unknown-elf) or name one with --cc\n`
            : `phasewright compile: cannot start ${compiler}: ${result.error.message}\n`,
        );
        return 2;
      }
      if (result.stderr) io.err(result.stderr);
      if (result.status !== 0 || !existsSync(elfPath)) {
        io.err(`phasewright compile: ${compiler} failed (exit ${result.status ?? result.signal}); nothing was written\n`);
        return 1;
      }
      const bytes = new Uint8Array(readFileSync(elfPath));
      const loaded = loadProgram(bytes);
      if (!loaded.ok) {
        io.err(`phasewright compile: ${compiler} wrote a file \`run\` cannot load (${loaded.error}); nothing was written\n`);
        return 1;
      }
      const target = resolve(io.cwd, out);
      let written;
      try {
        mkdirSync(dirname(target), { recursive: true });
        written = writeFileSafely(dirname(target), { name: basename(target), bytes });
        // An executable like any the compiler writes: qemu-riscv32 refuses to load a file without it.
        chmodSync(written.absolutePath, 0o755);
      } catch (err) {
        io.err(`phasewright compile: ${err instanceof OutputError ? err.message : describeFsError(out, err)}\n`);
        return 2;
      }
      for (const warning of loaded.program.warnings) io.err(`phasewright compile: note: ${warning}\n`);
      io.out(`wrote ${out} (${written.sizeBytes} bytes): RV32I executable, entry 0x${toHex(loaded.program.entry, 8)}; run it with \`phasewright run TABLE.pwt ${out}\`\n`);
      return 0;
    } finally {
      rmSync(scratch, { recursive: true, force: true });
    }
  },
});
