// Every RV32I test program (tests/programs, built with Debian's riscv64-unknown-elf-gcc) runs
// under qemu-riscv32 with every extension off and through the built CLI,
// `node dist/cli.js run examples/halyard-32.pwt PROG`, with the lock-step reference on: stdout
// must be identical, the program's stderr must come first on ours, and the exit code must be
// the same (qemu dies from SIGTRAP at EBREAK, which a shell reports as 128 + 5 = 133; the CLI
// exits with 133 there). Together the programs must make every RV32I instruction retire through
// the microcode (EBREAK: reach the monitor through the trap step, since it never retires, on
// qemu or anywhere). Faulty tables must be caught on the real selfcheck program, at an
// instruction that riscv64-unknown-elf-objdump agrees is the one named.
import { execFileSync, spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import { RV32I_INSTRUCTIONS } from '../../server/src/core/isa/rv32i';
import { haveTools } from '../support/tools';
import { QEMU, runQemu, type QemuRun } from '../isa/support/riscv-tools';
import { buildPrograms, type BuiltProgram } from '../programs/build.mjs';
import { CLI, DEMO_TEXT, REPO, demoWith, ensureCli, planOf } from '../sim/support';
import { type CliRun, expectSameAsQemu, retiredMnemonics } from '../support/programRuns';

const toolsPresent =
  haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf') &&
  haveTools(['riscv64-unknown-elf-objdump'], 'binutils-riscv64-unknown-elf') &&
  haveTools([QEMU], 'qemu-user');

const NAMES = ['selfcheck', 'syscalls', 'ebreak', 'crc_sieve', 'arith', 'sort', 'bench', 'bench_short'];


function runCli(args: string[]): CliRun {
  const result = spawnSync(process.execPath, [CLI, 'run', ...args], { cwd: REPO, timeout: 300_000, maxBuffer: 64 * 1024 * 1024 });
  if (result.error) throw result.error;
  return { stdout: result.stdout, stderr: result.stderr.toString('latin1'), status: result.status };
}


/** The mnemonic objdump shows at `address` (`-M no-aliases,numeric`, as in isa-gnu-as.test.ts). */
function objdumpMnemonicAt(elfPath: string, address: number): string | undefined {
  const text = execFileSync('riscv64-unknown-elf-objdump', ['-d', '-M', 'no-aliases,numeric', elfPath], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  const line = text.split('\n').find((l) => l.trimStart().startsWith(`${address.toString(16)}:`));
  return line?.split('\t')[2]?.trim();
}

describe.skipIf(!toolsPresent)('test programs through the demo table: the built CLI against qemu-riscv32', () => {
  let programs: BuiltProgram[] = [];
  const qemu = new Map<string, QemuRun>();
  const ours = new Map<string, CliRun>();

  beforeAll(() => {
    ensureCli();
    programs = buildPrograms();
    for (const program of programs) {
      qemu.set(program.name, runQemu(program.elfPath));
      ours.set(program.name, runCli(['examples/halyard-32.pwt', program.elfPath]));
    }
  }, 900_000);

  it.each(NAMES)('%s: same stdout and exit code, program stderr first, no divergence', (name) => {
    const q = qemu.get(name)!;
    const o = ours.get(name)!;
    expectSameAsQemu(o, q);
    expect(o.stderr).toMatch(/instructions retired: [\d,]+ {3}steps: [\d,]+ {3}CPI \(steps per instruction\): \d\.\d{3}/);
    expect(q.stdout.length).toBeGreaterThan(0);
  });

  it('the exit codes are the ones the programs are written to give', () => {
    expect(Object.fromEntries(NAMES.map((n) => [n, ours.get(n)!.status]))).toEqual({ selfcheck: 0, syscalls: 0x45, ebreak: 133, crc_sieve: 0, arith: 0, sort: 0, bench: 0, bench_short: 0 });
  });

  it('bench retires over ten million instructions through the microcode', () => {
    const retired = /instructions retired: ([\d,]+)/.exec(ours.get('bench')!.stderr)![1].replace(/,/g, '');
    expect(Number(retired)).toBeGreaterThan(10_000_000);
  });

  it('together the programs make all 40 RV32I instructions go through the microcode', () => {
    const plan = planOf(DEMO_TEXT);
    const total = retiredMnemonics(plan, programs.filter((p) => p.name !== 'bench').map((p) => p.elfPath));
    const missing = RV32I_INSTRUCTIONS.map((s) => s.mnemonic).filter((m) => !(total.get(m)! > 0));
    expect(missing).toEqual([]);
    expect(total.get('(not RV32I)')).toBeUndefined();
  }, 300_000);

  it('faulty tables are caught on the selfcheck program at the instruction objdump names', () => {
    const selfcheck = programs.find((p) => p.name === 'selfcheck')!;
    const faulty = [
      { text: demoWith('100 0 xor   101 0 srl   101 1 sra   110 0 or ', '100 0 or    101 0 srl   101 1 sra   110 0 xor'), mnemonics: ['or', 'xor'], step: 'class OP step 2' },
      { text: demoWith('000 byte   001 half   010 word   100 ubyte', '000 ubyte  001 half   010 word   100 ubyte'), mnemonics: ['lb'], step: 'class LOAD step 3' },
    ];
    for (const { text, mnemonics, step } of faulty) {
      const loaded = loadProgram(new Uint8Array(readFileSync(selfcheck.elfPath)));
      if (!loaded.ok) throw new Error(loaded.error);
      const run = new ProgramRun(planOf(text), loaded.program);
      while (!run.advance(10_000_000));
      if (run.ending?.kind !== 'divergence') throw new Error(`expected a divergence, got ${run.ending?.kind}`);
      const report = run.ending.report;
      expect(mnemonics).toContain(report.instruction.mnemonic);
      expect(objdumpMnemonicAt(selfcheck.elfPath, report.instruction.pc)).toBe(report.instruction.mnemonic);
      expect(report.steps[report.culprit!].sourceLabel).toBe(step);
      expect(report.differences[0].what).toBe('register');
    }
  }, 120_000);
});
