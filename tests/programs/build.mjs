// Builds the RV32I test programs in this folder with Debian's cross toolchain
// (package gcc-riscv64-unknown-elf) into tests/.tmp/programs/NAME.elf. Tests import
// `buildPrograms`; on the command line, `node tests/programs/build.mjs [name...]` builds all
// programs or the named ones and prints the paths.
//
// Every program is linked with link.ld (image at 0x00010000, _start first) as a static,
// freestanding RV32I executable without the C library. C programs get crt.S and lib.c and link
// libgcc for the software multiply/divide routines. A program is rebuilt only when a source,
// the linker script, this script or the command line changed; the ELF is written under a
// temporary name and renamed, so test files building at the same time never see half a file.
//
// Deliberately not here: running the programs (the tests do that under qemu-riscv32 and our
// interpreter) and any expected results (each test states what it expects and why).
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
export const PROGRAMS_SOURCE_DIR = here;
export const DEFAULT_OUTPUT_DIR = resolve(here, '..', '.tmp', 'programs');
export const GCC = 'riscv64-unknown-elf-gcc';

/** Flags every program is compiled and linked with. */
export const COMMON_FLAGS = [
  '-march=rv32i',
  '-mabi=ilp32',
  '-nostdlib',
  '-static',
  '-ffreestanding',
  '-O1',
  '-Wl,--no-relax',
  // Keep gcc from turning our own memset/memcpy loops into calls to themselves.
  '-fno-tree-loop-distribute-patterns',
  '-Wall',
  '-Wextra',
  '-Werror',
];

const C_RUNTIME = ['crt.S', 'lib.c'];

/**
 * The programs. `kind` says how they end: 'exit' through the exit system call, 'ebreak' through
 * EBREAK (qemu then dies from SIGTRAP).
 */
export const PROGRAMS = [
  { name: 'selfcheck', sources: ['selfcheck.S'], defines: {}, kind: 'exit', description: 'instruction-by-instruction check of all RV32I instructions but EBREAK' },
  { name: 'syscalls', sources: ['syscalls.S'], defines: {}, kind: 'exit', description: 'write to stdout/stderr/closed fd, exit code truncation' },
  { name: 'ebreak', sources: ['ebreak.S'], defines: {}, kind: 'ebreak', description: 'prints a line, then stops with EBREAK' },
  { name: 'debugdemo', sources: ['debugdemo.S'], defines: {}, kind: 'exit', description: 'a call, a store, a write and exit(15), for the debugger tests' },
  { name: 'crc_sieve', sources: [...C_RUNTIME, 'crc_sieve.c'], defines: {}, kind: 'exit', description: 'CRC-32 check value and prime sieve (C)' },
  { name: 'arith', sources: [...C_RUNTIME, 'arith.c'], defines: {}, kind: 'exit', description: 'software multiply/divide through libgcc (C)' },
  { name: 'sort', sources: [...C_RUNTIME, 'sort.c'], defines: {}, kind: 'exit', description: 'signed/unsigned 8/16/32-bit sorting, recursion (C)' },
  { name: 'bench', sources: [...C_RUNTIME, 'bench.c'], defines: {}, kind: 'exit', description: 'long mixed workload, over ten million instructions (C)' },
  { name: 'bench_short', sources: [...C_RUNTIME, 'bench.c'], defines: { BENCH_ROUNDS: 1 }, kind: 'exit', description: 'one round of the benchmark workload (C)' },
];

function commandFor(program, outputPath) {
  const isC = program.sources.some((s) => s.endsWith('.c'));
  const defines = Object.entries(program.defines).map(([key, value]) => `-D${key}=${value}`);
  return [
    ...COMMON_FLAGS,
    ...defines,
    '-T',
    join(here, 'link.ld'),
    '-I',
    here,
    ...program.sources.map((s) => join(here, s)),
    ...(isC ? ['-lgcc'] : []),
    '-o',
    outputPath,
  ];
}

function newestInputTime(program) {
  const inputs = [...program.sources, 'link.ld', 'lib.h', 'build.mjs'].map((f) => join(here, f));
  return Math.max(...inputs.filter((f) => existsSync(f)).map((f) => statSync(f).mtimeMs));
}

/**
 * Builds the named programs (all by default) and returns [{ name, elfPath, kind, description }].
 * Throws an Error carrying the compiler's messages when a build fails.
 */
export function buildPrograms(options = {}) {
  const outputDir = options.outputDir ?? DEFAULT_OUTPUT_DIR;
  const wanted = options.names ?? PROGRAMS.map((p) => p.name);
  mkdirSync(outputDir, { recursive: true });
  const built = [];
  for (const name of wanted) {
    const program = PROGRAMS.find((p) => p.name === name);
    if (!program) throw new Error(`unknown test program "${name}"; known: ${PROGRAMS.map((p) => p.name).join(', ')}`);
    const elfPath = join(outputDir, `${name}.elf`);
    const stampPath = join(outputDir, `${name}.cmd`);
    const stamp = JSON.stringify(commandFor(program, elfPath));
    const upToDate =
      existsSync(elfPath) &&
      existsSync(stampPath) &&
      readFileSync(stampPath, 'utf8') === stamp &&
      statSync(elfPath).mtimeMs >= newestInputTime(program);
    if (!upToDate) {
      const temporaryPath = `${elfPath}.${process.pid}.${Date.now()}.tmp`;
      try {
        execFileSync(GCC, commandFor(program, temporaryPath), { stdio: ['ignore', 'pipe', 'pipe'], encoding: 'utf8' });
      } catch (error) {
        const messages = `${error.stdout ?? ''}${error.stderr ?? ''}`.trim();
        throw new Error(`building test program ${name} with ${GCC} failed:\n${messages || error.message}`);
      }
      // Read back: an ELF that does not start with the magic bytes means the toolchain misbehaved.
      const head = readFileSync(temporaryPath).subarray(0, 4);
      if (head.length !== 4 || head[0] !== 0x7f || head[1] !== 0x45 || head[2] !== 0x4c || head[3] !== 0x46) {
        throw new Error(`building test program ${name}: ${temporaryPath} is not an ELF file`);
      }
      renameSync(temporaryPath, elfPath);
      const stampTemporary = `${stampPath}.${process.pid}.tmp`;
      writeFileSync(stampTemporary, stamp);
      renameSync(stampTemporary, stampPath);
    }
    built.push({ name, elfPath, kind: program.kind, description: program.description });
  }
  return built;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  try {
    const names = process.argv.slice(2);
    for (const program of buildPrograms(names.length ? { names } : {})) console.log(program.elfPath);
  } catch (error) {
    console.error(error.message);
    process.exit(1);
  }
}
