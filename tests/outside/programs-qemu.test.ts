// Every test program in tests/programs, built with Debian's riscv64-unknown-elf-gcc for RV32I,
// runs under qemu-riscv32 user mode (all extensions off) and under our reference interpreter:
// stdout, stderr and the way the program ends must be identical. qemu is the outside reference;
// the programs' own printed checks tie the values to published numbers (see each source).
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { haveTools } from '../support/tools';
import { QEMU, runQemu, runReference, type QemuRun, type ReferenceRun } from '../isa/support/riscv-tools';
import { buildPrograms, type BuiltProgram } from '../programs/build.mjs';
import { parseElf, symbolAt } from '../../server/src/core/isa/elf';
import { createReferenceMachine } from '../../server/src/core/isa/interp';
import { RV32I_INSTRUCTIONS, matchInstruction } from '../../server/src/core/isa/rv32i';

const toolsPresent =
  haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf') &&
  haveTools(['riscv64-unknown-elf-nm'], 'binutils-riscv64-unknown-elf') &&
  haveTools([QEMU], 'qemu-user');

/** How a run ended, in one comparable string: qemu's exit status or signal, our stop reason. */
function qemuEnding(run: QemuRun): string {
  return run.signal ? `signal ${run.signal}` : `exit ${run.exitCode}`;
}

// qemu-riscv32 user mode turns EBREAK into SIGTRAP (checked here: the process dies from signal 5,
// a shell shows status 133); our interpreter stops with reason 'ebreak'. Those correspond.
function referenceEnding(run: ReferenceRun): string {
  if (!run.stop) return 'instruction budget exhausted';
  if (run.stop.kind === 'exit') return `exit ${run.stop.exitCode}`;
  if (run.stop.kind === 'ebreak') return 'signal SIGTRAP';
  return `stopped: ${run.stop.kind}`;
}

describe.skipIf(!toolsPresent)('test programs: qemu-riscv32 and our interpreter agree', () => {
  let programs: BuiltProgram[] = [];
  const qemuRuns = new Map<string, QemuRun>();
  const referenceRuns = new Map<string, ReferenceRun>();

  beforeAll(() => {
    programs = buildPrograms();
    for (const program of programs) {
      qemuRuns.set(program.name, runQemu(program.elfPath));
      referenceRuns.set(program.name, runReference(program.elfPath));
    }
  }, 180_000);

  it('all programs were built as RV32I ELF executables we can parse without warnings', () => {
    expect(programs.map((p) => p.name)).toEqual(['selfcheck', 'syscalls', 'ebreak', 'debugdemo', 'crc_sieve', 'arith', 'sort', 'bench', 'bench_short']);
    for (const program of programs) {
      const parsed = parseElf(new Uint8Array(readFileSync(program.elfPath)));
      expect(parsed.ok && parsed.image.warnings, program.name).toEqual([]);
      expect(parsed.ok && parsed.image.entry, program.name).toBe(0x10000);
    }
  });

  // Symbol addresses as the GNU linker placed them, read back with `riscv64-unknown-elf-nm`.
  it('symbol tables agree with riscv64-unknown-elf-nm', () => {
    for (const name of ['selfcheck', 'crc_sieve']) {
      const program = programs.find((p) => p.name === name)!;
      const parsed = parseElf(new Uint8Array(readFileSync(program.elfPath)));
      if (!parsed.ok) throw new Error(parsed.error);
      const nmLines = execFileSync('riscv64-unknown-elf-nm', [program.elfPath], { encoding: 'utf8' }).trim().split('\n');
      const fromNm = new Map(nmLines.map((line) => line.split(/\s+/)).map(([address, _type, symbol]) => [symbol!, parseInt(address!, 16)]));
      for (const wanted of name === 'selfcheck' ? ['_start', 'check', 'hexout', 'words', 'linebuf'] : ['_start', 'main', 'print_hex', '__udivsi3']) {
        const ours = parsed.image.symbols.find((s) => s.name === wanted);
        expect(ours?.address, `${name}: ${wanted}`).toBe(fromNm.get(wanted));
      }
      const main = parsed.image.symbols.find((s) => s.name === (name === 'selfcheck' ? 'check' : 'main'))!;
      expect(symbolAt(parsed.image, main.address + 8)?.name).toBe(main.name);
    }
  });

  it.each(['selfcheck', 'syscalls', 'ebreak', 'debugdemo', 'crc_sieve', 'arith', 'sort', 'bench', 'bench_short'])('%s: same stdout, stderr and ending', (name) => {
    const qemu = qemuRuns.get(name)!;
    const ours = referenceRuns.get(name)!;
    expect(ours.stdout.toString('latin1')).toBe(qemu.stdout.toString('latin1'));
    expect(ours.stderr.toString('latin1')).toBe(qemu.stderr.toString('latin1'));
    expect(referenceEnding(ours)).toBe(qemuEnding(qemu));
    expect(qemu.stdout.length).toBeGreaterThan(0);
  });

  // What the programs report must also be right, not merely the same on both machines.
  it('selfcheck: all checks pass and exit code 0 (expected values from the spec, chapter 2)', () => {
    const text = qemuRuns.get('selfcheck')!.stdout.toString('latin1');
    expect(text).not.toContain('!=');
    expect(text.trimEnd().split('\n').pop()).toMatch(/^selfcheck checks 0x[0-9a-f]{3} failed 0x000$/);
    const checks = parseInt(/checks 0x([0-9a-f]+)/.exec(text)![1]!, 16);
    expect(checks).toBeGreaterThan(140);
    expect(qemuRuns.get('selfcheck')!.exitCode).toBe(0);
  });

  it('syscalls: write returns counts, -EBADF for fd 99, exit(0x12345) gives 0x45', () => {
    const run = qemuRuns.get('syscalls')!;
    expect(run.stdout.toString('latin1')).toBe('stdout\nresults 07 07 f7 00\n');
    expect(run.stderr.toString('latin1')).toBe('stderr\n');
    expect(run.exitCode).toBe(0x45);
  });

  it('ebreak: qemu dies from SIGTRAP after the output; we stop at the EBREAK without retiring it', () => {
    const qemu = qemuRuns.get('ebreak')!;
    expect(qemu.signal).toBe('SIGTRAP');
    expect(qemu.stdout.toString('latin1')).toBe('about to execute EBREAK\n');
    const ours = referenceRuns.get('ebreak')!;
    expect(ours.stop?.kind).toBe('ebreak');
    expect(ours.machine.pc).toBe(ours.stop?.kind === 'ebreak' ? ours.stop.pc : -1);
    expect(ours.machine.x[8]).toBe(0x5eed); // the instruction before EBREAK did run
  });

  // CRC-32/ISO-HDLC check value 0xCBF43926 (public CRC catalogue, common practice);
  // pi(10^4) = 1229 primes below 10000 (standard table value).
  it('crc_sieve: published check values', () => {
    const text = qemuRuns.get('crc_sieve')!.stdout.toString('latin1');
    expect(text).toContain('crc32("123456789") 0xcbf43926\n');
    expect(text).toContain('primes below 10000 1229\n');
    expect(text).toContain('failures 0\n');
  });

  // 20! = 2432902008176640000 (standard table value).
  it('arith: libgcc multiply/divide identities hold and 20! is right', () => {
    const text = qemuRuns.get('arith')!.stdout.toString('latin1');
    expect(text).toContain('20! = 2432902008176640000\n');
    expect(text).toContain('failures 0\n');
  });

  it('sort: every array ordered', () => {
    const text = qemuRuns.get('sort')!.stdout.toString('latin1');
    expect(text.match(/ ordered\n/g)).toHaveLength(5);
    expect(text).toContain('failures 0\n');
  });

  it('bench runs over ten million instructions; bench_short is the same work, once', () => {
    const long = referenceRuns.get('bench')!;
    const short = referenceRuns.get('bench_short')!;
    expect(long.machine.instructionsRetired).toBeGreaterThan(10_000_000);
    expect(short.machine.instructionsRetired).toBeLessThan(1_000_000);
    expect(short.stdout.toString('latin1')).toMatch(/^rounds 1\nchecksum 0x[0-9a-f]{8}\n$/);
  });

  // The brief for these programs: together they execute every RV32I instruction.
  it('selfcheck executes 39 different instructions and ebreak the 40th', () => {
    const executedBy = (name: string): Set<string> => {
      const program = programs.find((p) => p.name === name)!;
      const created = createReferenceMachine(new Uint8Array(readFileSync(program.elfPath)));
      if (!created.ok) throw new Error(created.error);
      const seen = new Set<string>();
      for (let steps = 0; steps < 1_000_000; steps++) {
        const result = created.machine.step();
        const spec = matchInstruction(result.word);
        if (spec) seen.add(spec.mnemonic);
        if (result.stop) break;
      }
      return seen;
    };
    const selfcheck = executedBy('selfcheck');
    expect(selfcheck.size).toBe(39);
    expect(selfcheck.has('ebreak')).toBe(false);
    const all = new Set([...selfcheck, ...executedBy('ebreak')]);
    expect([...all].sort()).toEqual(RV32I_INSTRUCTIONS.map((i) => i.mnemonic).sort());
  });

  // The comparison must be able to fail: change one instruction in our machine's memory (the
  // first `sub t2,...` in the selfcheck, in its AUIPC checks, becomes an ADD) and the outputs
  // must differ from qemu's.
  it('a single wrong instruction makes the comparison fail', () => {
    const selfcheck = programs.find((p) => p.name === 'selfcheck')!;
    const ours = runReference(selfcheck.elfPath, 10_000_000, (machine) => {
      for (let address = 0x10000; address < 0x12000; address += 4) {
        const word = machine.memory.load32(address);
        if ((word & 0xfe007fff) === 0x400003b3) { // funct7 0100000, funct3 000, rd x7, opcode OP: sub t2,...
          machine.memory.store32(address, word & ~0x40000000); // sub -> add, same registers
          return;
        }
      }
      throw new Error('no sub t2,... found in selfcheck');
    });
    expect(ours.stdout.toString('latin1')).not.toBe(qemuRuns.get('selfcheck')!.stdout.toString('latin1'));
    expect(ours.stdout.toString('latin1')).toContain(' != ');
    expect(ours.stop?.kind === 'exit' && ours.stop.exitCode).toBe(1);
  });
});
