// The timing diagram on a machine with a sequencer part: its columns are the steps in the order
// the sequencer takes them, a loop drawn going round the loop count's times before its way out.
// The anchor is the bus-level simulator running the encoded store of examples/windlass-32.pwt
// (its shift loop repeats step 3 while the counter's latched flag shz is 0): for each shift and
// amount, the steps the simulator goes through, the store address it forms in each and the
// word that stands there in the encoded image must be the diagram's columns, their addresses
// and their words. The shifts' results are held to the RV32I reference interpreter in the same
// run (RISC-V Unprivileged ISA 20191213, section 2.4: the low five bits of rs2 or the immediate
// are the amount), which tests/outside holds to qemu-riscv32. Machines without a sequencer draw
// what they drew before, byte for byte.
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { parseGuardChoice } from '../../server/src/core/diagram/guardChoice';
import { maxSequencedColumns } from '../../server/src/core/diagram/sequencedPath';
import { timingDiagram } from '../../server/src/core/diagram/timing';
import { findClass, loopText, timingModel } from '../../server/src/core/diagram/timingModel';
import { encodeMachine } from '../../server/src/core/encode/encoder';
import { chipHexOfWord } from '../../server/src/core/encode/listing';
import type { Machine } from '../../server/src/core/model/types';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { REPO, assemble, exitWords, ins, planOf, programOf } from '../sim/support';
import { dispatchDemo } from '../support/sequencer';

const WINDLASS = readFileSync(join(REPO, 'examples', 'windlass-32.pwt'), 'utf8');

function choiceOf(machine: Machine, guard: string) {
  const parsed = parseGuardChoice(machine, guard);
  if (!parsed.ok) throw new Error(parsed.reason);
  return parsed.choice;
}

function model(machine: Machine, className: string, guard: string, loopCount?: number) {
  return timingModel(machine, findClass(machine, className)!, choiceOf(machine, guard), { loopCount });
}

/** `text` with `from` replaced by `to`, exactly once. */
function variant(text: string, from: string, to: string): string {
  expect(text.split(from)).toHaveLength(2);
  return text.replace(from, to);
}

/**
 * Runs `lui/addi x5; addi x6 = amount; SHIFT x7, x5, (x6 | amount); exit` on the table's
 * simulator beside the reference, and returns the shift's steps as the simulator went through
 * them: the step number and the store address it formed.
 */
function simulatedShift(text: string, mnemonic: string, amount: number): { step: number; address: number }[] {
  const register = !mnemonic.endsWith('i');
  const shift = register ? ins(mnemonic, { rd: 7, rs1: 5, rs2: 6 }) : ins(mnemonic, { rd: 7, rs1: 5, imm: amount });
  const words = assemble([ins('lui', { rd: 5, imm: 0x87654000 }), ins('addi', { rd: 5, rs1: 5, imm: 0x321 }), ins('addi', { rd: 6, rs1: 0, imm: amount }), shift, ins('andi', { rd: 10, rs1: 7, imm: 0xff }), ...exitWords()]);
  const run = new ProgramRun(planOf(text), programOf(words), { reference: true });
  let log: { step: number; address: number }[] = [];
  run.sim.observer = (sim) => log.push({ step: sim.step, address: sim.logAddress[sim.step] });
  const perInstruction: (typeof log)[] = [];
  let ending = null;
  for (let i = 0; i < 20 && !ending; i++) {
    ending = run.advance(10_000, true);
    perInstruction.push(log);
    log = [];
  }
  // The run ends by the exit system call, every instruction agreeing with the reference.
  expect(ending).toMatchObject({ kind: 'exit' });
  return perInstruction[3];
}

const encodings = new WeakMap<Machine, ReturnType<typeof encodeMachine>>();

/** The word the encoded image holds at an address, per chip in hex (as the listing prints it). */
function imageWord(machine: Machine, address: number): string[] {
  let encoded = encodings.get(machine);
  if (!encoded) encodings.set(machine, (encoded = encodeMachine(machine)));
  const store = encoded.stores[0];
  return chipHexOfWord(store.words.slice(address * store.lanes, (address + 1) * store.lanes), store.store.word!.chipWidths);
}

/**
 * The diagram's columns are the simulator's steps, with its store addresses and the image's
 * words there. In the two fetch steps the instruction register still holds the instruction
 * before (it loads the fetched word at step 1's closing edge), so there the simulator's address
 * carries that one's bits, where the diagram shows the class's own: the addresses are compared
 * from step 2 on, and the words (the fetch phase's stand at both) at the simulator's addresses
 * in every column.
 */
function expectSimulated(machine: Machine, m: ReturnType<typeof model>, simulated: { step: number; address: number }[], what = '') {
  expect(m.columns.map((c) => c.step), what).toEqual(simulated.map((s) => s.step));
  expect(m.words[0].cells.map((c) => c.address).slice(2), what).toEqual(simulated.map((s) => s.address).slice(2));
  m.words[0].cells.forEach((cell, i) => expect(cell.chipHex, `${what} column ${i}`).toEqual(imageWord(machine, simulated[i].address)));
}

describe('the diagram of a shift on windlass-32 follows the sequencer', () => {
  const machine = analyse(WINDLASS).machine;

  it('draws sll with loop count 3 as steps 0, 1, 2 and step 3 four times: three repeats, then the else alternative on the way out', () => {
    const m = model(machine, 'OP', 'funct3=001', 3);
    expect(m.instruction).toBe('sll');
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2, 3, 3, 3, 3]);
    expect(m.columns.map((c) => c.visit)).toEqual([undefined, undefined, undefined, 1, 2, 3, 4]);
    // The sequencer's next step after each column: count on, hold step 3 three times, clear to 0.
    expect(m.columns.map((c) => c.next)).toEqual([1, 2, 3, 3, 3, 3, 0]);
    // The table: `0 if !shz: t.left, ..., seqop=hold` and `0 else: t.oe, x.rd.ck, pc.inc, seqop=clear` (phase shift at 3).
    for (const c of m.columns.slice(3, 6)) {
      expect(c.guard).toBe('if shz=0');
      expect(c.alt?.actions.map((a) => a.signal)).toContain('t.left');
    }
    const exit = m.columns[6];
    expect(exit.guard).toBe('else');
    expect(exit.alt?.isElse).toBe(true);
    expect(exit.alt?.actions.map((a) => a.signal)).toEqual(expect.arrayContaining(['t.oe', 'x.rd.ck']));
    // shz is the loop's, not the choice's: 0 while it repeats, 1 on the way out.
    expect(m.sequence?.loops).toEqual([{ steps: [3], first: 3, last: 6, entry: 3, repeats: 3, flags: [{ name: 'shz', round: 0, out: 1 }], forEver: false, cut: false }]);
    expect(m.notes.join('\n')).toContain('the loop count (3) sets shz: shz=0 while it repeats, shz=1 on the way out');
    // The strobes follow the columns: x.rd.ck only in the way out, t.left in the three repeats.
    expect(m.strobes.find((s) => s.name === 'x.rd.ck')!.asserted).toEqual([false, false, false, false, false, false, true]);
    expect(m.strobes.find((s) => s.name === 't.left')!.asserted).toEqual([false, false, false, true, true, true, false]);
  });

  it('has as many columns as the simulator runs steps for sll by 3, with the same steps, addresses and words', () => {
    const simulated = simulatedShift(WINDLASS, 'sll', 3);
    // 4 + n steps (examples/windlass-32.pwt's header; tests/sim/shift-loop.test.ts holds every amount to it).
    expect(simulated).toHaveLength(7);
    // Before the loop the counter's flag stands at 1 (nothing has counted yet), as the choice says here.
    const m = model(machine, 'OP', 'funct3=001,shz=1', 3);
    expect(m.columns).toHaveLength(simulated.length);
    expectSimulated(machine, m, simulated);
    // The exit column's address has shz (address line 13) set, the repeats' not (the table's `address` line).
    expect(m.words[0].cells.map((c) => (c.address >> 13) & 1).slice(3)).toEqual([0, 0, 0, 1]);
  });

  it('agrees with the simulator for every shift form at amounts 0, 1, 2 and 5', () => {
    const forms: [string, string, string][] = [
      ['sll', 'OP', 'funct3=001'],
      ['srl', 'OP', 'funct3=101,f7b5=0'],
      ['sra', 'OP', 'funct3=101,f7b5=1'],
      ['slli', 'OP-IMM', 'funct3=001'],
      ['srai', 'OP-IMM', 'funct3=101,f7b5=1'],
    ];
    for (const [mnemonic, className, guard] of forms) {
      for (const amount of [0, 1, 2, 5]) {
        const simulated = simulatedShift(WINDLASS, mnemonic, amount);
        expect(simulated, `${mnemonic} by ${amount}`).toHaveLength(4 + amount);
        const m = model(machine, className, `${guard},shz=1`, amount);
        expect(m.instruction).toBe(mnemonic);
        expectSimulated(machine, m, simulated, `${mnemonic} by ${amount}`);
      }
    }
  });

  it('says which step and which visit each column is, where the sequencer goes, and brackets the loop', () => {
    const { svg } = timingDiagram(machine, findClass(machine, 'OP')!, choiceOf(machine, 'funct3=001'), { loopCount: 3, theme: 'light' });
    expect([...svg.matchAll(/data-col="(\d+)" data-step="(\d+)"/g)].map((m) => m[2])).toEqual(['0', '1', '2', '3', '3', '3', '3']);
    expect(svg).toContain('>step 3 (2nd)<');
    expect(svg).toContain('>step 3 (4th)<');
    expect([...svg.matchAll(/data-next="([^"]+)"/g)].map((m) => m[1])).toEqual(['1', '2', '3', '3', '3', '3', '0']);
    expect(svg).toContain('>↩ 3 stays<');
    expect(svg).toContain('>→ 0 ends<');
    expect(svg).toContain('data-loop="3" data-first="3" data-last="6" data-repeats="3"');
    expect(svg).toContain('step 3 repeats 3 times (shz=0), then leaves (shz=1)');
    // The three closing edges that go back to step 3 (after columns 3, 4 and 5) are drawn solid.
    const solid = new Set([...svg.matchAll(/<line class="grid back" x1="([\d.]+)"/g)].map((m) => m[1]));
    expect(solid.size).toBe(3);
    expect(svg).toContain('loop count 3');
  });

  it('draws the loop twice when no loop count is asked for, and says it is the default', () => {
    const m = model(machine, 'OP', 'funct3=001');
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2, 3, 3, 3]);
    expect(m.sequence).toMatchObject({ loopCount: 2, loopCountGiven: false });
  });

  it('draws only the steps an instruction takes: add ends at step 2 and the loop step is said to be elsewhere', () => {
    const m = model(machine, 'OP', 'funct3=000');
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2]);
    expect(m.sequence?.notDrawn).toEqual([3]);
    expect(m.notes).toContain('Step 3 of the class is not on this path (another guard choice takes it).');
  });

  it('cuts a path longer than the bound, and says so', () => {
    const m = model(machine, 'OP', 'funct3=001', 64);
    expect(m.columns).toHaveLength(maxSequencedColumns);
    expect(m.sequence?.cut).toEqual({ kind: 'bound', columns: maxSequencedColumns, canEnd: true });
    expect(m.notes.join('\n')).toContain(`The path is longer than ${maxSequencedColumns} columns`);
    expect(m.sequence?.loops).toMatchObject([{ steps: [3], repeats: maxSequencedColumns - 4, cut: true }]);
    expect(loopText(m.sequence!.loops[0])).toBe(`step 3 repeats ${maxSequencedColumns - 4} times (shz=0): cut before its way out`);
  });
});

describe('other loop shapes', () => {
  it('draws a loop of two steps (test at its head, a jump back from its tail) as the simulator runs it', () => {
    // The shift loop split in two: step 3 shifts or leaves, step 4 counts down and jumps back to 3.
    const text = variant(
      WINDLASS,
      '  0 if !shz: t.left, alu.fn=shift_fn, alu.oe, t.ck, cnt.dn, seqop=hold\n',
      '  0 if !shz: t.left, alu.fn=shift_fn, alu.oe, t.ck\n  1: cnt.dn, seqop=load, next=3\n',
    );
    const analysis = analyse(text);
    expect(analysis.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const simulated = simulatedShift(text, 'sll', 3);
    // Two steps per place: 4 + 2n.
    expect(simulated).toHaveLength(10);
    const m = model(analysis.machine, 'OP', 'funct3=001,shz=1', 3);
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2, 3, 4, 3, 4, 3, 4, 3]);
    // Step 4 counts the counter down at its closing edge: it runs with the flag step 3 just tested.
    expectSimulated(analysis.machine, m, simulated);
    expect(m.sequence?.loops).toMatchObject([{ steps: [3, 4], first: 3, last: 9, entry: 3, repeats: 3, flags: [{ name: 'shz', round: 0, out: 1 }] }]);
  });

  it('draws a loop tested at its tail, the counter counted in its body, as the simulator runs it', () => {
    // Step 3 shifts and counts down, step 4 goes back to 3 while shz is 0: n places take n passes
    // (n >= 1; by 0 it would count the counter through zero), n - 1 of them going back.
    const text = variant(
      WINDLASS,
      '  0 if !shz: t.left, alu.fn=shift_fn, alu.oe, t.ck, cnt.dn, seqop=hold\n  0 else: t.oe, x.rd.ck, pc.inc, seqop=clear\n',
      '  0: t.left, alu.fn=shift_fn, alu.oe, t.ck, cnt.dn\n  1 if !shz: seqop=load, next=3\n  1 else: t.oe, x.rd.ck, pc.inc, seqop=clear\n',
    );
    const analysis = analyse(text);
    const simulated = simulatedShift(text, 'sll', 3);
    expect(simulated).toHaveLength(3 + 2 * 3);
    const m = model(analysis.machine, 'OP', 'funct3=001,shz=1', 2);
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2, 3, 4, 3, 4, 3, 4]);
    // Step 3 runs with the flag as the test before it left it; the last pass's step 3 with
    // shz=0 still, its count down making the test after it see 1.
    expectSimulated(analysis.machine, m, simulated);
  });

  it('follows a call to a routine and its return (examples/winch-32.pwt) as the simulator runs it', () => {
    // OP calls the shift routine at step 8 from step 3 and returns to step 4: 6 + n steps (the table's header).
    const text = readFileSync(join(REPO, 'examples', 'winch-32.pwt'), 'utf8');
    const machine = analyse(text).machine;
    const simulated = simulatedShift(text, 'sll', 3);
    expect(simulated).toHaveLength(6 + 3);
    const m = model(machine, 'OP', 'funct3=001,shz=1', 3);
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2, 3, 8, 8, 8, 8, 4]);
    expectSimulated(machine, m, simulated);
    // The call and the return are jumps, not loops: only the routine's hold goes round.
    expect(m.columns.map((c) => c.goesRound)).toEqual([false, false, false, false, true, true, true, false, false]);
    expect(m.sequence?.loops).toMatchObject([{ steps: [8], first: 4, last: 7, repeats: 3 }]);
    // The headers say which move is the call and which the return.
    expect(m.columns.map((c) => c.call)).toEqual([undefined, undefined, undefined, 'call', undefined, undefined, undefined, 'return', undefined]);
    const { svg } = timingDiagram(machine, findClass(machine, 'OP')!, choiceOf(machine, 'funct3=001,shz=1'), { loopCount: 3, theme: 'light' });
    expect(svg).toContain('→ 8 call');
    expect(svg).toContain('→ 4 return');
  });

  it('follows a jump table\'s row (windlass-32 with OP-IMM dispatched on funct3) as the simulator runs it', () => {
    const text = dispatchDemo();
    const machine = analyse(text).machine;
    // Here every OP-IMM loads the counter at step 2, so the instruction before (addi x6 = 3) left
    // it at 3: shz is 0 when the next one starts, as the choice says.
    for (const [mnemonic, guard, steps] of [['slli', 'funct3=001,shz=0', [0, 1, 2, 3, 3, 3, 3]], ['addi', 'funct3=000,shz=0', [0, 1, 2, 4]]] as const) {
      const simulated = simulatedShift(text, mnemonic, 3);
      const m = model(machine, 'OP-IMM', guard, 3);
      expect(m.columns.map((c) => c.step), mnemonic).toEqual([...steps]);
      expectSimulated(machine, m, simulated, mnemonic);
    }
  });

  it('cuts a loop with no way out after the loop count, naming the step (examples/faults/micro-loop.pwt)', () => {
    const machine = analyse(readFileSync(join(REPO, 'examples', 'faults', 'micro-loop.pwt'), 'utf8')).machine;
    // z=0: step 1 jumps to step 2, which holds for ever.
    const m = model(machine, 'OP', 'z=0', 3);
    expect(m.columns.map((c) => c.step)).toEqual([0, 1, 2, 2, 2]);
    expect(m.sequence?.cut).toEqual({ kind: 'for-ever', step: 2, times: 3 });
    expect(m.sequence?.loops).toMatchObject([{ steps: [2], forEver: true }]);
    expect(m.notes.join('\n')).toContain('No path from step 2 returns to step 0');
    // z=1: step 1 clears the sequencer; step 2 is not on the path.
    expect(model(machine, 'OP', 'z=1', 3).columns.map((c) => c.step)).toEqual([0, 1]);
  });
});

describe('partial and broken sequencer tables', () => {
  it('draw every class of every prefix of windlass-32 (cut every 61 characters) and of the sequencer fault examples, within the bound', () => {
    const texts = [...Array(Math.ceil(WINDLASS.length / 61)).keys()].map((k) => WINDLASS.slice(0, k * 61));
    for (const name of ['micro-loop', 'loop-exit-unchanged', 'jump-outside', 'step-unreachable']) texts.push(readFileSync(join(REPO, 'examples', 'faults', `${name}.pwt`), 'utf8'));
    let drawn = 0;
    for (const text of texts) {
      const machine = analyse(text).machine;
      for (const cls of machine.classes) {
        for (const loopCount of [0, 3]) {
          const { svg, model: m } = timingDiagram(machine, cls, choiceOf(machine, ''), { loopCount });
          expect(svg.startsWith('<svg ')).toBe(true);
          expect(m.columns.length).toBeLessThanOrEqual(maxSequencedColumns);
          if (m.sequence) {
            expect(m.columns[0]?.step ?? 0).toBe(0);
            drawn++;
          }
        }
      }
    }
    expect(drawn).toBeGreaterThan(100);
  });
});

describe('machines without a sequencer', () => {
  // SHA-256 of the SVG text, recorded on 2026-12-04 by drawing with commit d17128e (before the
  // columns followed a sequencer). They must not change: such machines' steps count up in number order.
  const pinned: [string, string, string, boolean, 'light' | 'auto', string][] = [
    ['halyard-32.pwt', 'BRANCH', 'taken=1', false, 'light', '383f8f52f3495acc70668c4aaad49dd159668c1e08a6bc5c8d7cf485b78ef756'],
    ['halyard-32.pwt', 'OP', 'funct3=101,f7b5=1', true, 'auto', '1c8039a40da17f9b88da7f76efa3a080e222b7047d7ba79a487bab668b03c144'],
    ['faults/bus-contention.pwt', 'OP', '', false, 'light', 'b737e383642dae8403e1a1f32fc2db500d66aac4439c6f2387ba0c182f696fc0'],
  ];
  for (const [file, className, guard, all, theme, sha] of pinned) {
    it(`draws ${file} ${className} ${guard} as before, whatever the loop count`, () => {
      const machine = analyse(readFileSync(join(REPO, 'examples', file), 'utf8')).machine;
      for (const loopCount of [undefined, 0, 5]) {
        const { svg, model: m } = timingDiagram(machine, findClass(machine, className)!, choiceOf(machine, guard), { all, theme, loopCount });
        expect(createHash('sha256').update(svg).digest('hex')).toBe(sha);
        expect(m.sequence).toBeUndefined();
      }
    });
  }
});
