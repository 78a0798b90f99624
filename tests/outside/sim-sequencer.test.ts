// A machine whose step counter is a sequencer part (issue 15, first slice): the demo with the
// library's `sequencer` in place of the implicit counter and SLLI done as a loop of one-bit
// shifts counted down from shamt by a `loopcount` part (tests/support/sequencer.ts). The RV32I
// test programs (tests/programs, built with Debian's riscv64-unknown-elf-gcc) run through it in
// lock-step with the reference interpreter and must print what qemu-riscv32 prints and exit as
// it exits, with no divergence; and every SLLI must take 5 + shamt steps (fetch 2, copy,
// load the counter, shamt shifts, the write), every other OP-IMM instruction 3, as the table
// says (SLLI's shift amount is imm[4:0], RISC-V Unprivileged ISA 20191213, 2.4).
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import { haveTools } from '../support/tools';
import { QEMU, qemuStatus, runQemu } from '../isa/support/riscv-tools';
import { buildPrograms, type BuiltProgram } from '../programs/build.mjs';
import { planOf } from '../sim/support';
import { shiftLoopDemo } from '../support/sequencer';

const toolsPresent = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf') && haveTools([QEMU], 'qemu-user');
/** Programs that end by exit (ebreak's SIGTRAP is the demo's own test's), the long benchmark left out. */
const NAMES = ['selfcheck', 'syscalls', 'crc_sieve', 'arith', 'sort', 'bench_short'];

describe.skipIf(!toolsPresent)('test programs through a sequencer machine with a shift loop, against qemu-riscv32', () => {
  let programs: BuiltProgram[] = [];
  const plan = planOf(shiftLoopDemo());
  const opImm = plan.machine.classes.findIndex((c) => c.name === 'OP-IMM');

  beforeAll(() => {
    programs = buildPrograms().filter((p) => NAMES.includes(p.name));
  }, 300_000);

  it('the table checks clean', () => {
    expect(analyse(shiftLoopDemo()).diagnostics).toEqual([]);
  });

  it.each(NAMES)('%s: same stdout and exit code as qemu, no divergence, each SLLI 5 + shamt steps', (name) => {
    const program = programs.find((p) => p.name === name)!;
    const qemu = runQemu(program.elfPath);
    const loaded = loadProgram(new Uint8Array(readFileSync(program.elfPath)));
    if (!loaded.ok) throw new Error(loaded.error);
    const run = new ProgramRun(plan, loaded.program, { reference: true });
    const sim = run.sim;
    let slli = 0;
    let wrong = '';
    for (let n = 0; n < 5_000_000 && !run.ending; n++) {
      const before = sim.instructionsRetired;
      run.advance(10_000, true);
      if (sim.instructionsRetired === before) continue;
      const word = sim.lastRetiredWord;
      if ((word & 0x7f) !== 0b0010011) continue;
      const expected = ((word >>> 12) & 7) === 1 ? 5 + ((word >>> 20) & 31) : 3;
      if (((word >>> 12) & 7) === 1) slli++;
      if (sim.lastInstructionSteps !== expected && !wrong) wrong = `word 0x${(word >>> 0).toString(16)}: ${sim.lastInstructionSteps} steps, expected ${expected}`;
    }
    expect(run.ending?.kind).toBe('exit');
    expect(Buffer.from(sim.environment.stdout()).toString('latin1')).toBe(qemu.stdout.toString('latin1'));
    expect(run.ending?.kind === 'exit' ? run.ending.exitCode : undefined).toBe(qemuStatus(qemu));
    expect(wrong).toBe('');
    expect(sim.classInstructions[opImm]).toBeGreaterThan(0);
    // Every program but the shortest shifts somewhere (gcc emits SLLI for indexing and multiplies by powers of 2).
    if (name !== 'syscalls') expect(slli, name).toBeGreaterThan(0);
  }, 300_000);
});
