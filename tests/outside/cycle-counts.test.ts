// The cycle counts computed from each class's control flow (flow/cycleCounts.ts) against the
// simulator running the encoded store: every RV32I test program (tests/programs, built with
// Debian's riscv64-unknown-elf-gcc) runs through every example in lock-step with the RV32I
// reference, one instruction at a time, and each retired instruction's steps (the step counter
// at its `end` plus one) must lie within [min, max] of the computed counts of its instruction,
// and equal them where min equals max; so must each class's measured CPI. The simulator never
// reads the table's steps (it runs the encoder's words), so the two are independent ways to the
// same figure. Which instruction a word is comes from the RISC-V Unprivileged ISA 20191213
// listing (isa/rv32i.ts's matcher), which tests/isa checks against GNU binutils.
import { readFileSync, readdirSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { cycleCountsOf } from '../../server/src/core/flow/cycleCounts';
import { matchInstruction } from '../../server/src/core/isa/rv32i';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import { figuresOf } from '../../server/src/core/sim/summary';
import { haveTools } from '../support/tools';
import { buildPrograms, type BuiltProgram } from '../programs/build.mjs';
import { planOf } from '../sim/support';

const toolsPresent = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf');

const EXAMPLES = readdirSync(new URL('../../examples/', import.meta.url)).filter((f) => f.endsWith('.pwt')).sort();
/** The long benchmark is left out: the short programs already retire every RV32I instruction. */
const NAMES = ['selfcheck', 'syscalls', 'ebreak', 'crc_sieve', 'arith', 'sort'];

interface Seen {
  min: number;
  max: number;
  count: number;
}

function see(map: Map<string, Seen>, key: string, steps: number): void {
  const seen = map.get(key);
  if (!seen) map.set(key, { min: steps, max: steps, count: 1 });
  else {
    seen.min = Math.min(seen.min, steps);
    seen.max = Math.max(seen.max, steps);
    seen.count++;
  }
}

describe.skipIf(!toolsPresent).each(EXAMPLES)('computed cycle counts of %s against its simulated runs', (example) => {
  const text = readFileSync(new URL(`../../examples/${example}`, import.meta.url), 'utf8');
  const analysis = analyse(text);
  const counts = cycleCountsOf(analysis.machine);
  let programs: BuiltProgram[] = [];
  /** Steps per retired instruction, by mnemonic and by class. */
  const byMnemonic = new Map<string, Seen>();
  const byClass = new Map<string, Seen>();
  const cpi = new Map<string, number[]>();

  beforeAll(() => {
    programs = buildPrograms().filter((p) => NAMES.includes(p.name));
    const plan = planOf(text);
    for (const program of programs) {
      const loaded = loadProgram(new Uint8Array(readFileSync(program.elfPath)));
      if (!loaded.ok) throw new Error(loaded.error);
      const run = new ProgramRun(plan, loaded.program);
      const sim = run.sim;
      let retired = sim.instructionsRetired;
      for (;;) {
        // The steps one instruction takes: on a sequencer machine a loop repeats steps, so count them.
        const before = sim.steps;
        const ending = run.advance(10_000_000, true);
        if (sim.instructionsRetired > retired) {
          retired = sim.instructionsRetired;
          const word = sim.lastRetiredWord;
          const steps = sim.steps - before;
          see(byMnemonic, matchInstruction(word)?.mnemonic ?? '(not RV32I)', steps);
          const cls = analysis.machine.classes.find((c) => c.opcode === (word & 0x7f));
          see(byClass, cls?.name ?? '(no class)', steps);
        }
        if (ending) {
          expect(['exit', 'ebreak'], `${program.name}: ${ending.kind}`).toContain(ending.kind);
          break;
        }
      }
      for (const c of figuresOf(sim).classes) (cpi.get(c.className) ?? cpi.set(c.className, []).get(c.className)!).push(c.cpi);
    }
  }, 900_000);

  it('checks clean, and every class ends on every path', () => {
    expect(analysis.diagnostics).toEqual([]);
    for (const c of counts) expect([c.className, c.doesNotEnd, c.tooManyInputs]).toEqual([c.className, false, false]);
  });

  it('each retired instruction takes steps within its computed [min, max], exactly where they agree', () => {
    let compared = 0;
    for (const c of counts) {
      for (const i of c.instructions) {
        const seen = byMnemonic.get(i.mnemonic!);
        if (!seen) continue;
        compared++;
        // A loop (windlass-32's shifts) leaves the most open: n more steps (tests/sim/shift-loop.test.ts pins n).
        expect([i.mnemonic, seen.min >= i.min!, i.loopSteps !== undefined || seen.max <= i.max!]).toEqual([i.mnemonic, true, true]);
        if (i.min === i.max) expect([i.mnemonic, seen.min, seen.max]).toEqual([i.mnemonic, i.min, i.max]);
      }
    }
    // The programs retire every RV32I instruction but ebreak (the monitor takes it) through each example.
    expect(compared).toBeGreaterThanOrEqual(39);
    expect(byMnemonic.has('(not RV32I)')).toBe(false);
  });

  it("each class's steps and measured CPI lie within its computed [min, max], exactly where they agree", () => {
    for (const c of counts) {
      const seen = byClass.get(c.className);
      if (!seen) continue;
      expect([c.className, seen.min >= c.min!, c.loops || seen.max <= c.max!]).toEqual([c.className, true, true]);
      for (const measured of cpi.get(c.className) ?? []) {
        expect(measured).toBeGreaterThanOrEqual(c.min!);
        if (!c.loops) expect(measured).toBeLessThanOrEqual(c.max!);
        if (c.min === c.max && !c.loops) expect([c.className, measured]).toEqual([c.className, c.min]);
      }
    }
    expect(byClass.has('(no class)')).toBe(false);
  });

  it('where an instruction has several counts, the runs take its least and its most (both ways of a branch)', () => {
    let several = 0;
    for (const c of counts) {
      for (const i of c.instructions) {
        if (i.min === i.max || i.loopSteps) continue;
        several++;
        const seen = byMnemonic.get(i.mnemonic!)!;
        expect([i.mnemonic, seen.min, seen.max]).toEqual([i.mnemonic, i.min, i.max]);
      }
      if (c.min !== c.max && !c.loops) expect([c.className, byClass.get(c.className)?.min, byClass.get(c.className)?.max]).toEqual([c.className, c.min, c.max]);
    }
    // Capstan's six branches take 4 steps not taken and 8 taken (every other example runs each branch in one count).
    if (example === 'capstan-32.pwt') expect(several).toBe(6);
  });
});
