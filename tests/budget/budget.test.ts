// The electrical and timing budget: LED current by Ohm's law, the supply budget, fan-out of
// control lines and bus lines against driver ratings, and the longest path of each step
// against the planned clock. Each check has a firing and a silent case.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { budgetOf, ledCurrentMa } from '../../server/src/core/budget/budget';
import { dedent } from '../support/annotated';
import { chainedStoreTable } from '../support/fixtures';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

function table(machineLine: string, body: string): string {
  return dedent(machineLine) + dedent(body);
}

const codesOf = (text: string) => analyse(text).diagnostics.map((d) => d.code);

/** One bus, two registers and one step; the figures of the machine, the bus and part b vary. */
const lampTable = (machineLine: string, busFigures: string, bFigures: string) =>
  table(`${machineLine}\n`, `
    bus result 8${busFigures}
    part a register 8
    part b register 8${bFigures}
    strobe a.oe enable a -> result active low
    strobe b.ck clock result -> b
    strobe done end
    word 8 as 1 x 8
      a.oe 0  b.ck 1  done 2
    address 1
      step 0
    class OP opcode=0110011
      0: a.oe, b.ck, done
  `);

const dim = lampTable('machine "dim" supply_v=1.5', ' leds=8 led_vf=1.8 led_ohm=100', '');

describe('LED current and the supply budget', () => {
  it('follows Ohm\'s law: (3.3 V - 1.8 V) / 1.5 kohm = 1.0 mA', () => {
    // I = (Vsupply - Vf) / R (Ohm's law; common practice, no source).
    expect(ledCurrentMa(3.3, 1.8, 1500)).toBeCloseTo(1.0, 6);
    expect(ledCurrentMa(5, 1.8, 3300)).toBeCloseTo(0.9697, 3);
    expect(ledCurrentMa(1.8, 1.8, 1000)).toBe(0);
  });

  it('adds every LED lit at once: a thousand LEDs at a few milliamps is amps', () => {
    // A few mA per LED across about a thousand LEDs is of the order of amps (common practice, no source).
    const text = lampTable('machine "lamps" supply_v=5 supply_ma=2000', '', ' leds=1000 led_vf=2 led_ohm=1000');
    const budget = budgetOf(analyse(text).machine);
    expect(budget.ledTotalMa).toBeCloseTo(3000, 6);
    const d = analyse(text).diagnostics;
    expect(d.map((x) => x.code)).toEqual(['supply-budget']);
    expect(d[0].message).toContain('the indicators draw 3.00 A, more than the 2.00 A budget');
    expect(codesOf(text.replace('supply_ma=2000', 'supply_ma=3500'))).toEqual([]);
  });

  it('reports an LED forward voltage at or above the supply on that figure, and counts no current for it', () => {
    const analysis = analyse(dim);
    expect(analysis.diagnostics.map((d) => [d.code, dim.slice(d.span.start, d.span.end), d.message])).toEqual([
      ['bad-number', 'led_vf=1.8', "`led_vf=1.8` is at or above the 1.5 V supply, so these LEDs would never light; check the LED's data sheet and supply_v"],
    ]);
    expect(dim.slice(analysis.diagnostics[0].related![0].span.start, analysis.diagnostics[0].related![0].span.end)).toBe('supply_v=1.5');
    expect(budgetOf(analysis.machine).missing).toContain('LED figures for bus result (supply_v on the machine line, led_vf and led_ohm)');
  });
});

describe('figures outside their physical range', () => {
  // Each figure has a range (docs/budget.md); outside it the figure is an error where it is
  // written and is left out of every sum. Zero is no resistance at all (Ohm's law would give an
  // unlimited current), and the hex number is the one a width refuses as well.
  const cases: [string, string, string][] = [
    ['led_ohm=100', 'led_ohm=0', '`led_ohm=0` is out of range: the LED series resistor must be more than 0 and at most 100000000 ohm'],
    ['supply_v=1.5', 'supply_v=1.5 supply_ma=0xFFFFFFFFFFFFFFFFFFFF', '`supply_ma=0xFFFFFFFFFFFFFFFFFFFF` is too large: the current budget of the supply for indicators and loads must be at most 100000 mA'],
    ['supply_v=1.5', 'supply_v=0', '`supply_v=0` is out of range: the logic supply voltage must be more than 0 and at most 30 V'],
    ['supply_v=1.5', 'supply_v=1.5 clock_khz=0', '`clock_khz=0` is out of range: the planned step clock must be more than 0 and at most 1000000 kHz'],
    ['leds=8', 'leds=2.5', '`leds=2.5` is not a whole number: it counts LEDs (at least 0 and at most 1000000 LEDs)'],
    ['led_vf=1.8', 'led_vf=40', '`led_vf=40` is out of range: the LED forward voltage must be more than 0 and at most 12 V'],
  ];
  for (const [from, to, message] of cases) {
    it(`refuses ${to}`, () => {
      const text = dim.replace(from, to).replace('supply_v=1.5', 'supply_v=5');
      const figure = to.split(' ').pop()!;
      const analysis = analyse(text.replace('supply_v=5 supply_v=0', 'supply_v=0'));
      const errors = analysis.diagnostics.filter((d) => d.code === 'bad-number');
      expect(errors.map((d) => d.message)).toEqual([message]);
      expect(analysis.text.slice(errors[0].span.start, errors[0].span.end)).toBe(figure.slice(figure.indexOf('=') + 1));
    });
  }

  it('accepts the edges of the ranges and decimal figures', () => {
    const text = dim.replace('supply_v=1.5', 'supply_v=30 supply_ma=100000 clock_khz=0.5').replace('led_ohm=100', 'led_ohm=100000000').replace('led_vf=1.8', 'led_vf=12');
    expect(analyse(text).diagnostics.filter((d) => d.code === 'bad-number')).toEqual([]);
  });
});

describe('fan-out', () => {
  const busTable = (ledOhm: number) =>
    table('machine "bus" supply_v=5\n', `
      bus result 8 leds=8 led_vf=1.8 led_ohm=${ledOhm}
      part light register 8 in_ua=1 drive_ma=12
      part heavy register 8 in_ua=1 drive_ma=32
      part b register 8 in_ua=1
      strobe light.oe enable light -> result active low
      strobe heavy.oe enable heavy -> result active low
      strobe b.ck clock result -> b
      strobe done end
      word 8 as 1 x 8
        light.oe 0  heavy.oe 1  b.ck 2  done 3
      address 1
        step 0
      class OP opcode=0110011
        0: light.oe, b.ck
        1: heavy.oe, b.ck, done
    `);

  it('flags the 12 mA bus driver before the 32 mA one as the load grows', () => {
    // A driver's rating bounds the static load it may carry (common practice, no source).
    const flagged = (ohm: number) => analyse(busTable(ohm)).diagnostics.filter((d) => d.code === 'bus-overload').map((d) => d.message.split(' ')[0]);
    expect(flagged(1000)).toEqual([]); // 3.2 mA LED per line: both cope
    expect(flagged(250)).toEqual(['`light`']); // 12.8 mA: only the 12 mA driver fails
    expect(flagged(90)).toEqual(['`light`', '`heavy`']); // 35.6 mA: both fail
  });

  it('counts register-file cards: a strobe reaches cards x loads inputs', () => {
    const text = table('machine "rf"\n', `
      bus result 32
      part ir instruction 32
      part t register 32 drive_ma=6
      part x regfile 32 cards=31 loads=4 in_ua=20
      strobe t.oe enable t -> result active low
      strobe x.rd.ck clock result -> x.rd
      strobe ir.ck clock result -> ir
      strobe done end
      word 8 as 1 x 8 drive_ma=2
        t.oe 0  x.rd.ck 1  ir.ck 2  done 3
      address 1
        step 0
      class OP opcode=0110011
        0: t.oe, ir.ck
        1: t.oe, x.rd.ck, done
    `);
    const row = budgetOf(analyse(text).machine).strobes.find((r) => r.name === 'x.rd.ck')!;
    expect(row.inputs).toBe(124);
    expect(row.loadMa).toBeCloseTo(2.48, 6);
    expect(analyse(text).diagnostics.map((d) => d.code)).toEqual(['strobe-overload']);
    expect(codesOf(text.replace('drive_ma=2', 'drive_ma=4'))).toEqual([]);
  });
});

describe('step timing', () => {
  it('adds the access times of chained stores in series: a decoder store feeding the main store\'s address', () => {
    // The main store's address is valid only when the decoder's outputs are: 70 ns, then the
    // main store's own 150 ns, then 38 ns enable, 10 ns settling, 12 ns setup = 280 ns (the
    // figures are the fixture's own; adding delays in series is common practice, no source).
    const budget = budgetOf(analyse(chainedStoreTable).machine);
    expect(budget.limiting!.totalNs).toBe(280);
    expect(budget.limiting!.segments.map((s) => `${s.what} ${s.ns}`)).toEqual(['store decode access 70', 'store main access 150', 'a.oe enable 38', 'result settling 10', 'b.ck setup 12']);
    // Two stores side by side (both addressed by the instruction): the slower one counts, once.
    const parallel = chainedStoreTable.replace('step 0..1  entry 2..3', 'step 0..1  opcode 2..6').replace('address 4', 'address 7');
    expect(budgetOf(analyse(parallel).machine).limiting!.totalNs).toBe(150 + 38 + 10 + 12);
  });

  it('adds up a hand-worked path and names the limiting step', () => {
    // Hand-worked: 150 ns EEPROM access (28C64-class, reference-facts: 120-150 ns), then typical
    // HC-family figures from memory: 38 ns enable, 160 ns ALU, 10 ns bus, 12 ns setup = 370 ns.
    const text = table('machine "t" clock_khz=2500\n', `
      bus left 32
      bus result 32 settle_ns=10
      part a register 32 en_ns=38
      part alu alu left left en_ns=30 tpd_ns=160
      part b register 32 tsu_ns=12
      strobe a.oe enable a -> left
      strobe alu.oe enable alu -> result
      strobe b.ck clock result -> b
      strobe done end
      word 8 as 1 x 8 access_ns=150
        a.oe 0  alu.oe 1  b.ck 2  done 3
      address 1
        step 0
      class OP opcode=0110011
        0: a.oe, alu.oe, b.ck
        1: done
    `);
    const budget = budgetOf(analyse(text).machine);
    expect(budget.limiting!.totalNs).toBe(370);
    expect(budget.limiting!.segments.map((s) => `${s.what} ${s.ns}`)).toEqual(['control store access 150', 'a.oe enable 38', 'alu ALU 160', 'result settling 10', 'b.ck setup 12']);
    expect(budget.maxClockKhz).toBeCloseTo(1e6 / 370, 6);
    expect(codesOf(text)).toEqual([]);
    expect(codesOf(text.replace('clock_khz=2500', 'clock_khz=2700'))).toEqual([]); // 370.4 ns period
    const d = analyse(text.replace('clock_khz=2500', 'clock_khz=3000')).diagnostics;
    expect(d.map((x) => x.code)).toEqual(['step-timing']);
    expect(d[0].message).toContain('at 3000 kHz a step lasts 333 ns, but step 0 of class OP needs 370 ns');
  });
});

describe('phasewright budget', () => {
  it('prints the tables, the fastest clock and the cautions for the demo, exit 0', async () => {
    const io = memoryIo(join(__dirname, '../..'));
    const code = await runCommand(['budget', 'examples/halyard-32.pwt'], io);
    expect(code).toBe(0);
    expect(io.stdout).toContain('These are estimates from the figures entered in the table.');
    expect(io.stdout).toContain('  x.rd.ck      124    0.00     0.12  store main       0.40       0.28');
    expect(io.stdout).toContain('all LEDs lit: 1117.1 mA of a 3000 mA budget (37%)');
    expect(io.stdout).toContain('Fastest safe step clock: 2564 kHz (period 390 ns), limited by step 3 of class JAL before pc.ck.');
    expect(io.stdout).not.toContain('Missing figures');
    // The demo plans clock_khz=1000 (1000 ns a step); its classes run straight from fetch to
    // \`end\` (LUI three steps, JALR five; examples/halyard-32.pwt).
    expect(io.stdout).toContain("Time per instruction at the planned step clock (1000 kHz, 1000 ns a step; steps counted from each class's control flow, fetch included)");
    expect(io.stdout).toMatch(/\n {2}LUI +3 +3000 +3 steps\n/);
    expect(io.stdout).toMatch(/\n {2}JALR +5 +5000 +5 steps\n/);
  });

  it('gives time per instruction as min..max ns where a class has several counts; steps only with no clock', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pw-budget-'));
    const capstan = readFileSync(join(__dirname, '../../examples/capstan-32.pwt'), 'utf8');
    writeFileSync(join(dir, 'capstan.pwt'), capstan);
    writeFileSync(join(dir, 'planned.pwt'), capstan.replace(/^machine (.*)$/m, 'machine $1 clock_khz=500'));
    const rowOf = async (file: string) => {
      const io = memoryIo(dir);
      await runCommand(['budget', file], io);
      return io.stdout.slice(io.stdout.indexOf('Time per instruction')).split('\n').find((l) => l.trimStart().startsWith('BRANCH'));
    };
    // Capstan's branch: 4 steps not taken, 8 taken (counted from its steps); 500 kHz is 2000 ns a step.
    expect(await rowOf('planned.pwt')).toMatch(/^ {2}BRANCH +4\.\.8 +8000\.\.16000 +4–8 steps \(BEQ\.\.BGEU: 4 not taken, 8 taken\)$/);
    expect(await rowOf('capstan.pwt')).toMatch(/^ {2}BRANCH +4\.\.8 +\? +4–8 steps/);
  });

  it('exits 1 and lists the problem when a budget check fails', async () => {
    const io = memoryIo(join(__dirname, '../..'));
    expect(await runCommand(['budget', 'examples/faults/step-timing.pwt'], io)).toBe(1);
    expect(io.stdout).toContain('[step-timing]');
  });
});
