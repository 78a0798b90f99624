// Step timing on a machine with a sequencer part: the next step is one of each step's loads.
// The sequencer's op and target fields come out of the control store after its access time,
// pass through its next-state logic and must be at its state input a setup time before the
// closing edge (docs/budget.md, "Step timing"). examples/windlass-32.pwt has no figures; here
// it is given figures in the test's text: for the parts it shares with examples/halyard-32.pwt
// the ones that table writes (its control store's access_ns=150, the 74HC enable en_ns=38 and
// setup tsu_ns=12, the ALU's tpd_ns=160 and so on; docs/budget.md says where they come from),
// and for the sequencer and the loop counter figures of this test only (tpd_ns=25, tsu_ns=15
// and tsu_ns=12), not data-sheet values: the budget is to add up what the table says.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { budgetOf } from '../../server/src/core/budget/budget';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';

const root = join(__dirname, '../..');
const WINDLASS = readFileSync(join(root, 'examples/windlass-32.pwt'), 'utf8');

/** The text with `figures` written on the declaration line that starts with `start`, before its description. */
function withFigures(text: string, start: string, figures: string): string {
  const at = text.indexOf(`\n${start}`);
  expect(at, start).toBeGreaterThanOrEqual(0);
  const end = text.indexOf('\n', at + 1);
  const line = text.slice(at + 1, end);
  const quote = line.endsWith('"') ? line.lastIndexOf(' "') : -1;
  const changed = quote >= 0 ? `${line.slice(0, quote)} ${figures}${line.slice(quote)}` : `${line} ${figures}`;
  return text.slice(0, at + 1) + changed + text.slice(end);
}

function windlassWithFigures(sequencer = 'tpd_ns=25 tsu_ns=15'): string {
  let text = WINDLASS;
  const figures: [string, string][] = [
    ['machine "Windlass-32" isa rv32i', 'clock_khz=1000'],
    ['word 40 as 5 x 8', 'access_ns=150'],
    ['bus left ', 'settle_ns=10'],
    ['bus right ', 'settle_ns=10'],
    ['bus result ', 'settle_ns=10'],
    ['part x ', 'en_ns=38 tsu_ns=12'],
    ['part pc ', 'en_ns=38 tsu_ns=20'],
    ['part ir ', 'tsu_ns=12'],
    ['part mar ', 'tsu_ns=12'],
    ['part t ', 'en_ns=38 tsu_ns=12'],
    ['part imm ', 'en_ns=38 tpd_ns=40'],
    ['part alu ', 'en_ns=38 tpd_ns=160'],
    ['part cmp ', 'tpd_ns=120 tsu_ns=20'],
    ['part mem ', 'en_ns=35 tpd_ns=70 tsu_ns=30'],
    ['part four ', 'en_ns=38'],
    ['part cnt ', 'tsu_ns=12'],
    ['part seq ', sequencer],
  ];
  for (const [start, f] of figures) text = withFigures(text, start, f);
  return text;
}

describe('step timing through the sequencer', () => {
  it('adds the sequencer\'s path to every step: store access, its next-step logic, its setup', () => {
    const analysis = analyse(windlassWithFigures());
    expect(analysis.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const budget = budgetOf(analysis.machine);
    // MISC-MEM step 2 (`pc.inc, seqop=clear`): the count of pc needs 150 + 20 = 170 ns; the
    // sequencer's clear 150 + 25 + 15 = 190 ns, so its path is the step's.
    const fence = budget.paths.find((p) => p.owner === 'class MISC-MEM' && p.step === 2)!;
    expect(fence.endpoint).toBe('seq (next step)');
    expect(fence.segments).toEqual([
      { what: 'control store access', ns: 150 },
      { what: 'seq next-step logic', ns: 25 },
      { what: 'seq setup', ns: 15 },
    ]);
    expect(fence.totalNs).toBe(190);
    // So it is in every step whose other loads are quicker: BRANCH's not-taken step 3 (pc.inc
    // too) and SYSTEM's step 2 (sys.trap loads nothing); elsewhere a datapath load is longer.
    const bySequencer = budget.paths.filter((p) => p.endpoint === 'seq (next step)').map((p) => `${p.owner} step ${p.step}${p.guard ? ` (${p.guard})` : ''}`);
    expect(bySequencer.sort()).toEqual(['class BRANCH step 3 (else)', 'class MISC-MEM step 2', 'class SYSTEM step 2']);
  });

  it('is not the limiting path where the datapath\'s is longer, and the clock limit is the datapath\'s', () => {
    const budget = budgetOf(analyse(windlassWithFigures()).machine);
    // OP step 2 (add): rs1 and rs2 enabled (150 + 38 + 10), the ALU (160), result settling (10),
    // x's setup (12): 380 ns, longer than the sequencer's 190.
    const add = budget.paths.find((p) => p.owner === 'class OP' && p.step === 2 && p.guard === 'else')!;
    expect(add.endpoint).toBe('x.rd.ck');
    expect(add.totalNs).toBe(380);
    expect(budget.limiting!.endpoint).not.toBe('seq (next step)');
    expect(budget.limiting!.totalNs).toBeGreaterThan(190);
    expect(budget.maxClockKhz).toBeCloseTo(1e6 / budget.limiting!.totalNs, 6);
    // A sequencer slower than every datapath path limits the clock itself.
    const slow = budgetOf(analyse(windlassWithFigures('tpd_ns=900 tsu_ns=15')).machine);
    expect(slow.limiting).toMatchObject({ endpoint: 'seq (next step)', totalNs: 150 + 900 + 15 });
  });

  it('leaves out the next-step logic where the table gives no tpd_ns, and lists a missing setup', () => {
    const noTpd = budgetOf(analyse(windlassWithFigures('tsu_ns=15')).machine);
    const fence = noTpd.paths.find((p) => p.owner === 'class MISC-MEM' && p.step === 2)!;
    // 150 + 15 = 165 < pc's 170: the count of pc is the step's path now.
    expect(fence).toMatchObject({ endpoint: 'pc.inc', totalNs: 170 });
    expect(noTpd.missing).not.toContain('tpd_ns for part seq');
    const noSetup = budgetOf(analyse(windlassWithFigures('tpd_ns=25')).machine);
    expect(noSetup.missing).toContain('tsu_ns for part seq');
  });

  it('prints the sequencer\'s path in the budget command\'s step table', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pw-budget-seq-'));
    writeFileSync(join(dir, 'windlass.pwt'), windlassWithFigures());
    const io = memoryIo(dir);
    const code = await runCommand(['budget', 'windlass.pwt'], io);
    expect(io.stderr).toBe('');
    expect(code).toBe(0);
    expect(io.stdout).toMatch(/class MISC-MEM step 2 +190 +control store access 150 \+ seq next-step logic 25 \+ seq setup 15 -> seq \(next step\)\n/);
    expect(io.stdout).toContain('Fastest safe step clock:');
    expect(io.stdout).not.toMatch(/Fastest safe step clock: .* before seq \(next step\)/);
  });
});
