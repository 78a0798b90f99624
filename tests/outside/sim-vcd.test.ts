// The VCD trace of `phasewright run --trace` read by an outside VCD reader, the npm package
// vcd-parser (IEEE 1364 value change dump, clause 18): it must parse without errors, hold the
// expected signals, show values that outside tools confirm (the entry point from the ELF header
// as riscv64-unknown-elf-readelf reports it, the first instruction word as
// riscv64-unknown-elf-objdump disassembles it), and agree step by step with the simulator's own
// state recorded by an observer in-process.
import { execFileSync, spawnSync } from 'node:child_process';
import { readFileSync, rmSync, mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { loadProgram } from '../../server/src/core/sim/program';
import type { BusSimulator } from '../../server/src/core/sim/simulator';
import { haveTools } from '../support/tools';
import { buildPrograms } from '../programs/build.mjs';
import { CLI, DEMO_TEXT, REPO, ensureCli, planOf } from '../sim/support';

interface VcdSignal {
  name: string;
  size: number;
  wave: [string, string][];
}
const VCDParser = createRequire(import.meta.url)('vcd-parser') as { parse(text: string): Promise<{ timescale: string; signal: VcdSignal[]; endtime: string }> };

const toolsPresent = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf') && haveTools(['riscv64-unknown-elf-objdump', 'riscv64-unknown-elf-readelf'], 'binutils-riscv64-unknown-elf');
const TRACE_STEPS = 60;
const dir = join(REPO, 'tests', '.tmp', 'sim-vcd');

/** The value of a signal at `time` (the last change at or before it). */
function valueAt(signal: VcdSignal, time: number): string {
  let value = '';
  for (const [t, v] of signal.wave) if (Number(t) <= time) value = v;
  return value;
}

const bin = (value: number, width = 32) => (value >>> 0).toString(2).padStart(width, '0');

describe.skipIf(!toolsPresent)('VCD trace read by vcd-parser', () => {
  let parsed: Awaited<ReturnType<typeof VCDParser.parse>>;
  let elfPath = '';
  const log: { step: number; pc: number; ir: number; buses: string[] }[] = [];

  beforeAll(async () => {
    elfPath = buildPrograms({ names: ['syscalls'] })[0].elfPath;
    rmSync(dir, { recursive: true, force: true });
    mkdirSync(dir, { recursive: true });
    ensureCli();
    const result = spawnSync(process.execPath, [CLI, 'run', 'examples/halyard-32.pwt', elfPath, '--trace', join(dir, 'syscalls.vcd'), '--trace-steps', String(TRACE_STEPS)], { cwd: REPO, timeout: 120_000 });
    expect(result.status, result.stderr.toString()).toBe(0x45);
    parsed = await VCDParser.parse(readFileSync(join(dir, 'syscalls.vcd'), 'latin1'));
    // The simulator's own view of the same steps.
    const loaded = loadProgram(new Uint8Array(readFileSync(elfPath)));
    if (!loaded.ok) throw new Error(loaded.error);
    const run = new ProgramRun(planOf(DEMO_TEXT), loaded.program, { reference: false });
    run.sim.observer = (sim: BusSimulator, uop: number) => {
      if (log.length >= TRACE_STEPS) return;
      const info = sim.microOp(uop);
      const buses = sim.plan.busNames.map((_, b) => (!info.driven[b] && !sim.plan.busKeeper[b] ? 'z' : sim.isBusDefined(b) ? bin(sim.busValue[b]) : 'x'));
      log.push({ step: sim.step, pc: sim.pc, ir: sim.ir, buses });
    };
    run.advance(1_000_000);
  }, 180_000);

  it('parses, with the timescale and every signal group', () => {
    expect(parsed.timescale.trim()).toBe('1 us');
    const names = parsed.signal.map((s) => s.name);
    for (const name of ['Halyard_32.strobes.pc_oe', 'Halyard_32.asserted.pc_oe', 'Halyard_32.fields.alu_fn', 'Halyard_32.buses.left', 'Halyard_32.buses.result', 'Halyard_32.state.step', 'Halyard_32.state.pc', 'Halyard_32.state.ir', 'Halyard_32.state.taken']) {
      expect(names).toContain(name);
    }
    expect(parsed.signal.find((s) => s.name === 'Halyard_32.buses.result')?.size).toBe(32);
    expect(Number(parsed.endtime)).toBe(TRACE_STEPS);
  });

  it('shows the entry point readelf reports and the first word objdump disassembles', () => {
    const entry = parseInt(/Entry point address:\s+0x([0-9a-f]+)/.exec(execFileSync('riscv64-unknown-elf-readelf', ['-h', elfPath], { encoding: 'utf8' }))![1], 16);
    const dump = execFileSync('riscv64-unknown-elf-objdump', ['-d', elfPath], { encoding: 'utf8' });
    const firstWord = parseInt(new RegExp(`^\\s*${entry.toString(16)}:\\s+([0-9a-f]{8})`, 'm').exec(dump)![1], 16);
    const signal = (name: string) => parsed.signal.find((s) => s.name === `Halyard_32.${name}`)!;
    expect(valueAt(signal('state.pc'), 0)).toBe(bin(entry));
    expect(valueAt(signal('buses.left'), 0)).toBe(bin(entry)); // fetch step 0: pc drives left
    expect(valueAt(signal('buses.result'), 1)).toBe(bin(firstWord)); // fetch step 1: memory drives the word
    expect(valueAt(signal('state.ir'), 1)).toBe(bin(0)); // loaded at the closing edge only
    expect(valueAt(signal('state.ir'), 2)).toBe(bin(firstWord));
    expect(valueAt(signal('strobes.pc_oe'), 0)).toBe('0'); // active low, asserted
    expect(valueAt(signal('asserted.pc_oe'), 0)).toBe('1');
  });

  it('agrees with the simulator\'s own state at every traced step', () => {
    expect(log).toHaveLength(TRACE_STEPS);
    const signal = (name: string) => parsed.signal.find((s) => s.name === `Halyard_32.${name}`)!;
    const buses = ['left', 'right', 'result'].map((b) => signal(`buses.${b}`));
    let transitions = 0;
    log.forEach((entry, time) => {
      expect(valueAt(signal('state.step'), time), `step at ${time}`).toBe(bin(entry.step, 3));
      expect(valueAt(signal('state.pc'), time), `pc at ${time}`).toBe(bin(entry.pc));
      expect(valueAt(signal('state.ir'), time), `ir at ${time}`).toBe(bin(entry.ir));
      buses.forEach((bus, b) => expect(valueAt(bus, time), `${bus.name} at ${time}`).toBe(entry.buses[b]));
      if (time > 0 && entry.pc !== log[time - 1].pc) transitions++;
    });
    expect(transitions).toBeGreaterThan(10); // the pc moved at many edges within the traced steps
  });
});
