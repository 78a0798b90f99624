// The README's "Running a program through the table" example, exactly as written: its C block
// is examples/programs/hello.c, its two commands run (with the built CLI in place of
// `npx --no-install phasewright`, in a scratch folder that links the examples), the run prints
// what the README says and exits as it says, and qemu-riscv32 user mode — the outside
// reference — runs the same file with the same output and exit code, with the README's own
// command line and with every extension but the base ISA off.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, symlinkSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { haveTools } from '../support/tools';
import { QEMU } from '../isa/support/riscv-tools';

const root = join(__dirname, '../..');
const readme = readFileSync(join(root, 'README.md'), 'utf8');
const example = readme.slice(readme.indexOf('### Running a program through the table'));
const toolsPresent = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf') && haveTools([QEMU], 'qemu-user');

describe.skipIf(!toolsPresent)('the README program example', () => {
  it('shows examples/programs/hello.c as it is', () => {
    const block = /```c\n([\s\S]*?)```/.exec(example)![1];
    expect(block).toBe(readFileSync(join(root, 'examples/programs/hello.c'), 'utf8'));
  });

  it('works as written: compile, run on the demo table, and run under qemu-riscv32 alike', () => {
    const scratch = join(root, 'tests/.tmp/readme-program');
    rmSync(scratch, { recursive: true, force: true });
    mkdirSync(scratch, { recursive: true });
    symlinkSync(join(root, 'examples'), join(scratch, 'examples'));
    const commands = /```sh\n([\s\S]*?)```/.exec(example)![1].trim().split('\n');
    expect(commands).toHaveLength(2);
    const runs = commands.map((line) => {
      expect(line.startsWith('npx --no-install phasewright ')).toBe(true);
      const args = line.slice('npx --no-install phasewright '.length).split(/\s+/);
      return { args, result: spawnSync(process.execPath, [join(root, 'dist/cli.js'), ...args], { cwd: scratch, encoding: 'utf8' }) };
    });
    expect(runs[0].args[0]).toBe('compile');
    expect(runs[0].result.status, runs[0].result.stderr).toBe(0);
    const printed = /The run prints `([^`]*)` and exits with code (\d+)/.exec(example)!;
    expect(runs[1].args[0]).toBe('run');
    expect(runs[1].result.stdout).toBe(`${printed[1]}\n`);
    expect(runs[1].result.status).toBe(Number(printed[2]));
    // qemu-riscv32 (Debian qemu-user) runs the same file: the README's command, and once with
    // only RV32I enabled (no M, A, F, D or C), so an instruction outside RV32I would trap.
    const elf = join(scratch, runs[0].args[runs[0].args.indexOf('-o') + 1]);
    expect(existsSync(elf)).toBe(true);
    const qemuLine = /`(qemu-riscv32 [^`]*)`/.exec(example)![1].split(/\s+/);
    for (const args of [qemuLine.slice(1), ['-cpu', 'rv32,m=false,a=false,f=false,d=false,c=false', ...qemuLine.slice(1)]]) {
      const qemu = spawnSync(QEMU, args, { cwd: scratch, encoding: 'utf8' });
      expect(qemu.stdout, args.join(' ')).toBe(runs[1].result.stdout);
      expect(qemu.status, args.join(' ')).toBe(runs[1].result.status);
    }
    // The disassembly holds only base instructions the table implements (GNU objdump's view).
    if (haveTools(['riscv64-unknown-elf-objdump'], 'binutils-riscv64-unknown-elf')) {
      const listing = execFileSync('riscv64-unknown-elf-objdump', ['-d', '-M', 'no-aliases', elf], { encoding: 'utf8' });
      expect(listing).not.toMatch(/\t(mul|div|rem|c\.)\w*/);
    }
  });
});
