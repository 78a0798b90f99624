// `phasewright run` in-process (the same code the built CLI runs): arguments, refusals, raw
// images with --load-address, exit codes (program, EBREAK 133 = 128 + SIGTRAP as a shell shows
// it, divergence 3, step limit 124), the summary on stderr and the VCD trace file. The run of the
// built CLI against qemu-riscv32 is tests/outside/sim-programs.test.ts.
import { mkdirSync, readFileSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { DEMO_TEXT, REPO, demoWith, exitWords, ins } from './support';

const dir = join(REPO, 'tests', '.tmp', 'sim-cli');

function rawImage(words: number[], data: number[] = []): Buffer {
  const bytes = Buffer.alloc(words.length * 4 + data.length);
  words.forEach((w, i) => bytes.writeUInt32LE(w >>> 0, i * 4));
  Buffer.from(data).copy(bytes, words.length * 4);
  return bytes;
}

async function run(...args: string[]) {
  const io = memoryIo(dir);
  const code = await runCommand(['run', ...args], io);
  return { code, stdout: io.stdout, stderr: io.stderr };
}

// Writes "ok\n" (the 3 bytes after the 10 code words, at 0x10028) and exits with code 5.
const helloWords = [
  ins('addi', { rd: 10, rs1: 0, imm: 1 }),
  ins('lui', { rd: 11, imm: 0x10000 }),
  ins('addi', { rd: 11, rs1: 11, imm: 40 }),
  ins('addi', { rd: 12, rs1: 0, imm: 3 }),
  ins('addi', { rd: 17, rs1: 0, imm: 64 }),
  ins('ecall'),
  ins('addi', { rd: 10, rs1: 0, imm: 5 }),
  ...exitWords(),
  ins('fence'),
];

beforeAll(() => {
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, 'demo.pwt'), DEMO_TEXT);
  writeFileSync(join(dir, 'broken.pwt'), DEMO_TEXT.replace('part alu  alu left right', 'part alu  alu left'));
  writeFileSync(join(dir, 'swapped.pwt'), demoWith('100 0 xor   101 0 srl   101 1 sra   110 0 or ', '100 0 or    101 0 srl   101 1 sra   110 0 xor'));
  expect(helloWords).toHaveLength(10);
  writeFileSync(join(dir, 'hello.bin'), rawImage(helloWords, [0x6f, 0x6b, 0x0a]));
  writeFileSync(join(dir, 'xor.bin'), rawImage([ins('addi', { rd: 5, rs1: 0, imm: 3 }), ins('xor', { rd: 10, rs1: 5, rs2: 5 }), ...exitWords()]));
  writeFileSync(join(dir, 'ebreak.bin'), rawImage([ins('ebreak')]));
  writeFileSync(join(dir, 'spin.bin'), rawImage([ins('jal', { rd: 0, imm: 0 })]));
});

describe('phasewright run', () => {
  it('runs a raw image at --load-address: the program\'s output on stdout, its exit code as ours, a summary on stderr', async () => {
    const result = await run('demo.pwt', 'hello.bin', '--load-address', '0x10000');
    expect(result.stdout).toBe('ok\n');
    expect(result.code).toBe(5);
    expect(result.stderr).toContain('phasewright run: program exited with code 5\n');
    expect(result.stderr).toMatch(/instructions retired: 9 {3}steps: 27 {3}CPI \(steps per instruction\): 3\.000/);
    expect(result.stderr).toMatch(/OP-IMM +6 instructions +18 steps +CPI 3\.000/);
    expect(result.stderr).toMatch(/LUI +1 instructions +3 steps +CPI 3\.000/);
    // Beside the measured CPI, the steps counted from the class's control flow (the demo's OP-IMM: fetch and one step).
    expect(result.stderr).toMatch(/OP-IMM +6 instructions +18 steps +CPI 3\.000 {2}\(computed 3\)\n/);
    expect(result.stderr).toMatch(/wall time: \d+\.\d{3} s {3}[\d,]+ instructions per second/);
  });

  it('exits with 133 at EBREAK, as a shell reports the SIGTRAP qemu-riscv32 dies from', async () => {
    const result = await run('demo.pwt', 'ebreak.bin', '--load-address=0x10000');
    expect(result.code).toBe(133);
    expect(result.stderr).toContain('program stopped at EBREAK (0x00010000)');
  });

  it('exits with 3 and prints the report when the table diverges from the reference', async () => {
    const result = await run('swapped.pwt', 'xor.bin', '--load-address', '65536');
    expect(result.code).toBe(3);
    expect(result.stderr).toContain('DIVERGENCE after 1 instruction: the table\'s machine and the RV32I reference disagree');
    expect(result.stderr).toContain('0x00010004: 0x0052c533  xor x10,x5,x5');
    expect(result.stderr).toContain('x10: expected 0x00000000 (reference), got 0x00000003 (table)');
    expect(result.stderr).toMatch(/look at: step 2, class OP step 2 at swapped\.pwt:\d+ \(the step that loads x10\)/);
  });

  it('runs the same table without the reference when asked, and says so', async () => {
    const result = await run('swapped.pwt', 'xor.bin', '--load-address', '0x10000', '--no-reference');
    expect(result.code).toBe(3); // the table's (wrong) x10, passed to exit
    expect(result.stderr).toContain('program exited with code 3 (no reference comparison)');
  });

  it('stops at the step limit with exit code 124', async () => {
    const result = await run('demo.pwt', 'spin.bin', '--load-address', '0x10000', '--max-steps', '1000');
    expect(result.code).toBe(124);
    expect(result.stderr).toContain('stopped after the step limit of 1000 steps');
    expect(result.stderr).toMatch(/steps: 1,000 /);
  });

  it('writes a VCD trace atomically and reports its size', async () => {
    const result = await run('demo.pwt', 'hello.bin', '--load-address', '0x10000', '--trace', 'out/hello.vcd', '--trace-steps', '10');
    expect(result.code).toBe(5);
    const text = readFileSync(join(dir, 'out', 'hello.vcd'), 'latin1');
    expect(text).toContain('$enddefinitions $end');
    expect(text).toContain('The run went on after 10 steps');
    expect(result.stderr).toContain(`trace: out/hello.vcd (10 steps, the first 10 only; raise --trace-steps for more, ${Buffer.byteLength(text)} bytes)`);
  });

  it('refuses what it cannot run, with exit code 2 and a reason', async () => {
    const cases: [string[], string][] = [
      [[], 'give a .pwt file and a program'],
      [['demo.pwt', 'hello.bin'], 'not an ELF file'],
      [['demo.pwt', 'hello.bin', '--load-address', 'ten'], '--load-address needs a 32-bit address'],
      [['demo.pwt', 'hello.bin', '--load-address', '0x10002'], 'not a multiple of 4'],
      [['demo.pwt', 'hello.bin', '--load-address', '0x10000', '--max-steps', '0'], '--max-steps needs a positive number'],
      [['demo.pwt', 'missing.bin'], 'missing.bin: no such file'],
      [['broken.pwt', 'hello.bin', '--load-address', '0x10000'], 'error(s); nothing was run. Fix them first (`phasewright check broken.pwt`)'],
      [['demo.pwt', 'hello.bin', '--trace'], '--trace needs a value'],
      [['demo.pwt', 'hello.bin', '--frobnicate'], 'unknown option --frobnicate'],
    ];
    for (const [args, reason] of cases) {
      const result = await run(...args);
      expect(result.code, args.join(' ')).toBe(2);
      expect(result.stderr, args.join(' ')).toContain(reason);
      expect(result.stdout, args.join(' ')).toBe('');
    }
    expect(existsSync(join(dir, 'out', 'missing.vcd'))).toBe(false);
  });

  it('takes --config as build does, and runs a table with errors only with --force, saying first and last that the result is untrusted', async () => {
    // A spare decode map nobody uses: a warning, made an error by the severity file.
    writeFileSync(join(dir, 'spare.pwt'), DEMO_TEXT + '\nmap spare (funct3) -> mem.size\n  000 byte\n');
    writeFileSync(join(dir, 'strict.json'), JSON.stringify({ severities: { 'unused-name': 'error' } }));
    const lenient = await run('spare.pwt', 'hello.bin', '--load-address', '0x10000');
    expect(lenient.code).toBe(5);
    expect(lenient.stderr).not.toContain('UNTRUSTED');
    const refused = await run('spare.pwt', 'hello.bin', '--load-address', '0x10000', '--config', 'strict.json');
    expect(refused.code).toBe(2);
    expect(refused.stderr).toContain('spare.pwt has 1 error(s); nothing was run. Fix them first (`phasewright check spare.pwt`), or pass --force to run it anyway (the result is then untrusted).');
    const forced = await run('spare.pwt', 'hello.bin', '--load-address', '0x10000', '--config', 'strict.json', '--force');
    expect(forced.code).toBe(5);
    expect(forced.stdout).toBe('ok\n');
    const untrusted = 'phasewright run: UNTRUSTED: spare.pwt has 1 error(s) and runs only because of --force; what it does says nothing about a correct table, and its images must not be programmed.';
    const lines = forced.stderr.split('\n');
    expect(lines[0]).toBe(untrusted);
    expect(lines.filter((l) => l === untrusted)).toHaveLength(2);
    expect(forced.stderr.indexOf('program exited with code 5')).toBeLessThan(forced.stderr.lastIndexOf(untrusted));
    const badConfig = await run('spare.pwt', 'hello.bin', '--load-address', '0x10000', '--config', 'missing.json');
    expect(badConfig.code).toBe(2);
    expect(badConfig.stderr).toContain('missing.json: no such file');
  });
});
