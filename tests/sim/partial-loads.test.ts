// Loads of some lines of a bus in the simulator: a clock strobe `clock result[15:8] -> t.lane1`
// gives the edge port lines 15..8 of the bus as its `in`, and the load needs just those lines
// defined. The fixture is gantry-32 with its JALR holding register loaded a byte at a time
// (tests/support/ownKinds.ts, gantryWithByteLanes): JALR's target is assembled from four byte
// loads in one step. Expected values: RISC-V Unprivileged ISA 20191213, section 2.5 (JALR: the
// target is rs1 + the sign-extended immediate with its least significant bit cleared, and rd
// gets the address of the next instruction, pc + 4). The lock-step reference is on wherever the
// table is meant to be correct, so every retired instruction is also compared with it.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { SimPlan } from '../../server/src/core/sim/plan';
import { canCompile } from '../../server/src/core/sim/compile';
import { gantryWithByteLanes, gantryWithHalves } from '../support/ownKinds';
import { exitWords, ins, planOf, programOf, runToEnd } from './support';

const gantry = readFileSync(new URL('../../examples/gantry-32.pwt', import.meta.url), 'utf8');
const lanes = gantryWithByteLanes(gantry);
/** The same with pc + 4 made by two adders driving result[15:0] and result[31:16]. */
const lanesAndHalves = gantryWithByteLanes(gantryWithHalves(gantry));
const jalrStep2 = '  2: x.rs1.oe, asel=reg, amux.oe, imm.fmt=i, imm.oe, bsel=imm, bmux.oe, alu.fn=add, alu.oe, t.ck0, t.ck1, t.ck2, t.ck3';

/** An origin whose four address bytes all differ from 0, so each byte lane carries something. */
const ORIGIN = 0x7f3a1c00;

/**
 * auipc x6, 0 (x6 = ORIGIN); jalr x1, 13(x6): the target ORIGIN + 13 with bit 0 cleared is
 * ORIGIN + 12, and x1 = ORIGIN + 8. The word at ORIGIN + 8 (x10 = 99) is jumped over; the one at
 * ORIGIN + 12 sets x10 = 7 and exits with it.
 */
function jalrProgram() {
  return programOf(
    [
      ins('auipc', { rd: 6, imm: 0 }),
      ins('jalr', { rd: 1, rs1: 6, imm: 13 }),
      ins('addi', { rd: 10, rs1: 0, imm: 99 }),
      ins('addi', { rd: 10, rs1: 0, imm: 7 }),
      ...exitWords(),
    ],
    [],
    ORIGIN,
  );
}

describe('loads of some lines of a bus', () => {
  it('the fixture checks clean and its strobes load byte lanes (the interpreter runs it)', () => {
    expect(analyse(lanes).diagnostics).toEqual([]);
    expect(analyse(lanesAndHalves).diagnostics).toEqual([]);
    const machine = analyse(lanes).machine;
    expect(machine.signals.get('t.ck1')).toMatchObject({ kind: 'clock', bus: 'result', lines: { hi: 15, lo: 8 }, part: 't', kindPort: 'lane1' });
    const built = SimPlan.build(machine);
    if (!built.ok) throw new Error(built.errors.join('\n'));
    expect(canCompile(built.plan)).toBe(false);
  });

  it.each([
    ['byte lanes', lanes],
    ['byte lanes fed by two half adders', lanesAndHalves],
  ])('%s: JALR assembles its target from four byte loads, as the reference does', (_, text) => {
    const { run, ending } = runToEnd(planOf(text), jalrProgram());
    expect(ending).toEqual({ kind: 'exit', exitCode: 7, status: 7 });
    expect(run.sim.regs[1] >>> 0).toBe(ORIGIN + 8);
    expect(run.sim.regs[10]).toBe(7);
    // The part value mirrors the first state, lane 0: the low byte of ORIGIN + 13 with bit 0 cleared.
    const t = run.sim.plan.parts.findIndex((p) => p.name === 't');
    expect(run.sim.partValue[t]).toBe((ORIGIN + 12) & 0xff);
  });

  it('a load of the driven lines of a partly driven bus runs: the floating lines are not loaded', () => {
    // Only p4lo drives result[15:0] in JALR step 2; lanes 0 and 1 load pc + 4's low half, lanes 2
    // and 3 keep their reset value 0. From 0x1000: pc + 4 = 0x1004, so t = 0x00001004 and the
    // jump lands on 0x1004, the next word. (No reference: the table no longer does RV32I's JALR.)
    const text = lanesAndHalves.replace(jalrStep2, '  2: p4lo.oe, t.ck0, t.ck1');
    expect(analyse(text).diagnostics.filter((d) => d.code === 'undriven-latch')).toEqual([]);
    const program = programOf([ins('jalr', { rd: 0, rs1: 0, imm: 0x100 }), ins('addi', { rd: 10, rs1: 0, imm: 5 }), ...exitWords()]);
    const { ending } = runToEnd(planOf(text), program, { reference: false });
    expect(ending).toEqual({ kind: 'exit', exitCode: 5, status: 5 });
  });

  it('a load of lines nothing drives on a bus without keepers stops the machine and names them', () => {
    const text = lanesAndHalves.replace(jalrStep2, '  2: p4lo.oe, t.ck0, t.ck2');
    const found = analyse(text).diagnostics.filter((d) => d.code === 'undriven-latch');
    expect(found.map((d) => d.message)).toEqual([expect.stringContaining('`t.ck2` loads `t` from bus `result`, but nothing drives lines 23..16 of `result` in step 2 of class JALR')]);
    const program = programOf([ins('jalr', { rd: 0, rs1: 0, imm: 0x100 }), ...exitWords()]);
    const { ending } = runToEnd(planOf(text), program, { reference: false });
    if (ending?.kind !== 'fault') throw new Error(`expected a machine fault, got ${ending?.kind}`);
    expect(ending.report.fault).toEqual({ kind: 'control-code', strobe: 't.ck2', message: '`t.ck2` loads lines 23..16 of bus `result`, which nobody drives in this step, and the bus has no keepers' });
  });

  it('with keepers the undriven lines hold the last value driven on them, and the load takes it', () => {
    // Fetch step 1 last drove the whole result bus with the instruction word; JALR step 2 drives
    // only result[15:0] and loads lanes 0..3: lanes 2 and 3 get bits 31..16 of the instruction.
    const kept = lanesAndHalves.replace('bus result 32 "', 'bus result 32 keeper "').replace(jalrStep2, '  2: p4lo.oe, t.ck0, t.ck1, t.ck2, t.ck3');
    const found = analyse(kept).diagnostics.filter((d) => d.code === 'stale-latch' || d.code === 'undriven-latch');
    expect(found.map((d) => `${d.code}: ${d.message}`)).toEqual([
      expect.stringContaining('stale-latch: `t.ck2` loads `t` from bus `result`, but nothing drives lines 23..16 of `result` in step 2 of class JALR'),
      expect.stringContaining('stale-latch: `t.ck3` loads `t` from bus `result`, but nothing drives lines 31..24 of `result` in step 2 of class JALR'),
    ]);
    const jalr = ins('jalr', { rd: 0, rs1: 0, imm: 0x100 });
    // Five steps: fetch, JALR steps 2 to 4; step 4 puts t on the bus and loads pc from it.
    const { run } = runToEnd(planOf(kept), programOf([jalr, ...exitWords()]), { reference: false }, 5);
    expect(run.sim.instructionsRetired).toBe(1);
    expect(run.sim.stopReason).toBeNull();
    expect(run.sim.pc).toBe(((jalr & 0xffff0000) | 0x1004) >>> 0);
  });
});

describe('a load of lines whose driver has no defined value', () => {
  it('stops the machine with the lines named and why they hold nothing', () => {
    // JALR step 2 without x.rs1.oe: the multiplexer passes the floating rs1 bus to the ALU.
    const text = lanes.replace(jalrStep2, '  2: asel=reg, amux.oe, imm.fmt=i, imm.oe, bsel=imm, bmux.oe, alu.fn=add, alu.oe, t.ck0, t.ck1, t.ck2, t.ck3');
    expect(analyse(text).diagnostics.filter((d) => d.code === 'undriven-latch').length).toBeGreaterThan(0);
    const { ending } = runToEnd(planOf(text), programOf([ins('jalr', { rd: 0, rs1: 0, imm: 0x100 }), ...exitWords()]), { reference: false });
    if (ending?.kind !== 'fault') throw new Error(`expected a machine fault, got ${ending?.kind}`);
    expect(ending.report.fault).toMatchObject({ kind: 'undefined-value', strobe: 't.ck0', bus: 'result[7:0]', why: expect.stringContaining('`alu.oe` drives `result` from `alu`, whose input `opa` is undefined: `amux.oe` drives `opa` from `amux`, whose input `rs1` is undefined') });
  });
});
