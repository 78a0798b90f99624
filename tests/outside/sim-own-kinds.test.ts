// Machines built with kinds of their own (examples that declare `kind`s): every RV32I test
// program (tests/programs, built with Debian's riscv64-unknown-elf-gcc) runs under
// qemu-riscv32 and through the built CLI, `node dist/cli.js run EXAMPLE PROG`, with the
// lock-step reference on. Stdout and the exit code must be identical, the program's stderr must
// come first on ours, and no divergence or machine fault may be reported: the parts the
// example defines in the notation compute what RV32I needs, as the simulator runs their
// definitions. Together the programs must make every RV32I instruction retire through each
// example's microcode.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import { RV32I_INSTRUCTIONS } from '../../server/src/core/isa/rv32i';
import { analyse } from '../../server/src/core/analysis';
import { haveTools } from '../support/tools';
import { QEMU, runQemu, type QemuRun } from '../isa/support/riscv-tools';
import { buildPrograms, type BuiltProgram } from '../programs/build.mjs';
import { CLI, REPO, ensureCli, planOf } from '../sim/support';
import { gantryWithByteLanes, gantryWithConnection, gantryWithHalves } from '../support/ownKinds';
import { expectSameAsQemu, retiredMnemonics } from '../support/programRuns';
import { dispatchDemo } from '../support/sequencer';

const toolsPresent = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf') && haveTools([QEMU], 'qemu-user');

/** Every example that declares kinds of its own, and variants with partial-width drives and loads. */
const EXAMPLES = ['gantry-32.pwt', 'gantry-32-halves.pwt', 'gantry-32-connected.pwt', 'gantry-32-lanes.pwt', 'trestle-32.pwt', 'capstan-32.pwt', 'windlass-32.pwt', 'windlass-32-dispatch.pwt', 'winch-32.pwt'];

/** The text of an example, or of a variant written under tests/.tmp (its name ends in the variant). */
function exampleText(example: string): string {
  if (example === 'gantry-32-halves.pwt') return gantryWithHalves(readFileSync(new URL('../../examples/gantry-32.pwt', import.meta.url), 'utf8'));
  if (example === 'gantry-32-connected.pwt') return gantryWithConnection(readFileSync(new URL('../../examples/gantry-32.pwt', import.meta.url), 'utf8'));
  // Byte-lane loads of JALR's holding register, fed by the two half adders (loads and drives of some lines together).
  // OP-IMM dispatched by a jump table (a decode map giving the sequencer's next step).
  if (example === 'windlass-32-dispatch.pwt') return dispatchDemo();
  if (example === 'gantry-32-lanes.pwt') return gantryWithByteLanes(gantryWithHalves(readFileSync(new URL('../../examples/gantry-32.pwt', import.meta.url), 'utf8')));
  return readFileSync(new URL(`../../examples/${example}`, import.meta.url), 'utf8');
}

function examplePath(example: string): string {
  if (!example.endsWith('-halves.pwt') && !example.endsWith('-connected.pwt') && !example.endsWith('-lanes.pwt') && !example.endsWith('-dispatch.pwt')) return `examples/${example}`;
  mkdirSync(join(REPO, 'tests/.tmp/own-kinds'), { recursive: true });
  const path = `tests/.tmp/own-kinds/${example}`;
  writeFileSync(join(REPO, path), exampleText(example));
  return path;
}
/** The long benchmark is left to the demo's test; the short one runs here. */
const NAMES = ['selfcheck', 'syscalls', 'ebreak', 'crc_sieve', 'arith', 'sort', 'bench_short'];


describe.skipIf(!toolsPresent).each(EXAMPLES)('test programs through %s (kinds of its own) against qemu-riscv32', (example) => {
  let programs: BuiltProgram[] = [];
  const text = exampleText(example);
  const qemu = new Map<string, QemuRun>();
  const ours = new Map<string, { stdout: Buffer; stderr: string; status: number | null }>();

  beforeAll(() => {
    ensureCli();
    programs = buildPrograms().filter((p) => NAMES.includes(p.name));
    const path = examplePath(example);
    for (const program of programs) {
      qemu.set(program.name, runQemu(program.elfPath));
      const r = spawnSync(process.execPath, [CLI, 'run', path, program.elfPath], { cwd: REPO, timeout: 300_000, maxBuffer: 64 * 1024 * 1024 });
      if (r.error) throw r.error;
      ours.set(program.name, { stdout: r.stdout, stderr: r.stderr.toString('latin1'), status: r.status });
    }
  }, 900_000);

  it('declares kinds of its own and uses them, and checks clean', () => {
    const analysis = analyse(text);
    expect(analysis.diagnostics).toEqual([]);
    expect([...analysis.machine.parts.values()].filter((p) => p.def.origin === 'table').length).toBeGreaterThan(0);
  });

  it.each(NAMES)('%s: same stdout and exit code, program stderr first, no divergence', (name) => {
    const q = qemu.get(name)!;
    const o = ours.get(name)!;
    expectSameAsQemu(o, q);
    expect(q.stdout.length).toBeGreaterThan(0);
  });

  it('together the programs make all 40 RV32I instructions go through its microcode', () => {
    const plan = planOf(text);
    const total = retiredMnemonics(plan, programs.map((p) => p.elfPath));
    expect(RV32I_INSTRUCTIONS.map((s) => s.mnemonic).filter((m) => !(total.get(m)! > 0))).toEqual([]);
  }, 300_000);

  it('a wrong definition of one of its kinds is caught: a return-address adder that adds 8', () => {
    if (!text.includes('drive sum width = x + 4') || !text.includes('part p4   plus4')) return;
    const faulty = text.replace('drive sum width = x + 4', 'drive sum width = x + 8');
    expect(analyse(faulty).diagnostics).toEqual([]);
    const selfcheck = programs.find((p) => p.name === 'selfcheck')!;
    const loaded = loadProgram(new Uint8Array(readFileSync(selfcheck.elfPath)));
    if (!loaded.ok) throw new Error(loaded.error);
    const run = new ProgramRun(planOf(faulty), loaded.program);
    while (!run.advance(10_000_000));
    if (run.ending?.kind !== 'divergence') throw new Error(`expected a divergence, got ${run.ending?.kind}`);
    // JAL and JALR write pc + 4 to rd (RISC-V Unprivileged ISA 20191213, section 2.5).
    expect(['jal', 'jalr']).toContain(run.ending.report.instruction.mnemonic);
    expect(run.ending.report.differences[0].what).toBe('register');
  }, 120_000);
});
