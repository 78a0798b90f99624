// Benchmark of the bus-level simulator (`node scripts/bench.mjs sim`): retired instructions per
// second on tests/programs/bench.c (over ten million instructions, built with Debian's
// riscv64-unknown-elf-gcc) through the demo table's microcode, without and with the lock-step
// reference, beside our plain reference interpreter and qemu-riscv32 (wall time of the whole
// process, so it includes qemu's start-up), all from one run each, with the ratios. Targets:
// at least 5 million instructions per second through the microcoded model without lock-step, and
// at least 0.25 of the reference interpreter's rate. Every engine must print the same output.
// It reports; it does not fail on a missed target (a busy machine would make that noise).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { analyse } from '../server/src/core/analysis';
import { createReferenceMachine } from '../server/src/core/isa/interp';
import { ProgramRun } from '../server/src/core/sim/lockstep';
import { SimPlan } from '../server/src/core/sim/plan';
import { loadProgram } from '../server/src/core/sim/program';
import { builtProgram, millions, withProgress } from './stats';

const root = process.cwd();
const QEMU_CPU = 'rv32,m=false,a=false,f=false,d=false,c=false';

interface Measured {
  name: string;
  instructions: number;
  /** Wall time, and CPU time of this process (all its threads, V8's compiler threads included); no CPU time for qemu. */
  ms: number;
  cpuMs?: number;
  output: string;
  note?: string;
}

function perSecond(m: Measured): number {
  return (m.instructions / m.ms) * 1000;
}

function cpuPerSecond(m: Measured): number | undefined {
  return m.cpuMs === undefined ? undefined : (m.instructions / m.cpuMs) * 1000;
}

function cpuNow(): number {
  const usage = process.cpuUsage();
  return (usage.user + usage.system) / 1000;
}


function main(): void {
  const elfPath = builtProgram('sim', 'bench');
  const elf = new Uint8Array(readFileSync(elfPath));
  const built = SimPlan.build(analyse(readFileSync(join(root, 'examples/halyard-32.pwt'), 'utf8')).machine);
  if (!built.ok) throw new Error(built.errors.join('\n'));
  const plan = built.plan;
  const results: Measured[] = [];

  const microcoded = (name: string, reference: boolean, compiled: boolean, note?: string) => {
    const loaded = loadProgram(elf);
    if (!loaded.ok) throw new Error(loaded.error);
    const started = performance.now();
    const cpuStarted = cpuNow();
    const run = new ProgramRun(plan, loaded.program, { reference, compiled });
    const ending = withProgress(name, (update) => {
      let end = run.advance(5_000_000);
      for (; !end; end = run.advance(5_000_000)) update(run.sim.instructionsRetired);
      return end;
    });
    const ms = performance.now() - started;
    const cpuMs = cpuNow() - cpuStarted;
    if (ending.kind !== 'exit') throw new Error(`${name}: the run ended with ${ending.kind}`);
    results.push({ name, instructions: run.sim.instructionsRetired, ms, cpuMs, output: run.sim.environment.stdoutText(), note: note ?? `${run.sim.steps.toLocaleString('en')} steps, CPI ${(run.sim.steps / run.sim.instructionsRetired).toFixed(3)}` });
  };

  // Reference interpreter alone.
  {
    const created = createReferenceMachine(elf);
    if (!created.ok) throw new Error(created.error);
    const started = performance.now();
    const cpuStarted = cpuNow();
    const { instructionsExecuted, stop } = created.machine.run(1e9);
    const ms = performance.now() - started;
    const cpuMs = cpuNow() - cpuStarted;
    if (stop?.kind !== 'exit') throw new Error('the reference did not exit');
    results.push({ name: 'reference interpreter (isa/interp.ts)', instructions: instructionsExecuted, ms, cpuMs, output: created.machine.environment.stdoutText() });
  }
  microcoded('microcoded, no lock-step (compiled steps)', false, true);
  microcoded('microcoded, lock-step with the reference', true, true);
  microcoded('microcoded, no lock-step, interpreter only', false, false);
  // qemu-riscv32: the same instruction count (the programs test shows the outputs agree), process wall time.
  {
    const started = performance.now();
    const result = spawnSync('qemu-riscv32', ['-cpu', QEMU_CPU, elfPath], { encoding: 'latin1' });
    const ms = performance.now() - started;
    if (result.error || result.status !== 0) {
      console.log(`qemu-riscv32 did not run: ${result.error?.message ?? `status ${result.status}`}`);
    } else {
      results.push({ name: 'qemu-riscv32 (process wall time)', instructions: results[0].instructions, ms, output: result.stdout });
    }
  }

  const reference = perSecond(results[0]);
  const referenceCpu = cpuPerSecond(results[0])!;
  const width = Math.max(...results.map((r) => r.name.length));
  console.log(`program: ${elfPath} (${results[0].instructions.toLocaleString('en')} instructions); ${cpus().length} CPUs, load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`);
  console.log(`${''.padEnd(width)}  ${'wall'.padStart(8)}    ${'instructions/s'.padStart(14)}  ${'x ref'.padStart(7)}  ${'by CPU time'.padStart(14)}  ${'x ref'.padStart(7)}`);
  for (const r of results) {
    const same = r.output === results[0].output ? '' : '  OUTPUT DIFFERS';
    const cpu = cpuPerSecond(r);
    const cpuText = cpu === undefined ? `${''.padStart(14)}  ${''.padStart(7)}` : `${millions(cpu).padStart(14)}  ${(cpu / referenceCpu).toFixed(3).padStart(7)}`;
    console.log(`${r.name.padEnd(width)}  ${(r.ms / 1000).toFixed(3).padStart(6)} s  ${millions(perSecond(r)).padStart(14)}  ${(perSecond(r) / reference).toFixed(3).padStart(7)}  ${cpuText}${r.note ? `  (${r.note})` : ''}${same}`);
  }
  const fast = perSecond(results[1]);
  const qemu = results.find((r) => r.name.startsWith('qemu'));
  if (qemu) console.log(`microcoded (no lock-step) / qemu-riscv32, by wall time: ${(fast / perSecond(qemu)).toFixed(3)}`);
  console.log(`target >= 5 M instructions/s without lock-step: ${fast >= 5e6 ? 'met' : 'MISSED'} (${millions(fast)} by wall time)`);
  console.log(`target >= 0.25 x the reference interpreter: ${fast / reference >= 0.25 ? 'met' : 'MISSED'} (${(fast / reference).toFixed(3)} by wall time, ${(cpuPerSecond(results[1])! / referenceCpu).toFixed(3)} by CPU time)`);
  if (results.some((r) => r.output !== results[0].output)) process.exit(1);
}

main();
