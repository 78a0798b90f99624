// The bus-level simulator on small programs (hand-assembled with the ISA layer's encoder) and
// on the demo table and variants of it: run-time bus contention, undefined bus values, keepers,
// the three x0 settings, traps (ecall write/exit, ebreak), illegal instructions, CPI counting,
// edge-triggered loads and the memory access sizes. Expected register values follow the RISC-V
// Unprivileged ISA 20191213, chapter 2; expected step counts follow the demo table's classes
// (fetch steps 0-1, then OP-IMM 1 step, JAL 2, BRANCH 2, LOAD/STORE 2, SYSTEM 1).
import { describe, expect, it } from 'vitest';
import { stopText } from '../../server/src/core/sim/describe';
import { EXIT_EBREAK, EXIT_ILLEGAL_INSTRUCTION, EXIT_MACHINE_STOPPED, exitCodeOf } from '../../server/src/core/sim/session';
import { BusSimulator } from '../../server/src/core/sim/simulator';
import { figuresOf } from '../../server/src/core/sim/summary';
import { DEMO_TEXT, PROGRAM_ORIGIN, demoWith, exitWords, ins, planOf, programOf, runToEnd } from './support';

const demo = planOf(DEMO_TEXT);

function hex(value: number): string {
  return `0x${(value >>> 0).toString(16).padStart(8, '0')}`;
}

describe('running programs on the demo table', () => {
  it('runs to the exit system call with the exit code in a0, in lock-step with the reference', () => {
    const program = programOf([ins('addi', { rd: 10, rs1: 0, imm: 7 }), ...exitWords()]);
    const { run, ending } = runToEnd(demo, program);
    expect(ending).toEqual({ kind: 'exit', exitCode: 7, status: 7 });
    expect(exitCodeOf(ending)).toBe(7);
    expect(run.sim.instructionsRetired).toBe(3);
  });

  it('writes through ecall (a7 = 64) from the register file and memory', () => {
    const program = programOf(
      [
        ins('addi', { rd: 10, rs1: 0, imm: 1 }), // fd 1
        ins('lui', { rd: 11, imm: 0x2000 }), // buffer 0x2000
        ins('addi', { rd: 12, rs1: 0, imm: 3 }), // 3 bytes
        ins('addi', { rd: 17, rs1: 0, imm: 64 }),
        ins('ecall'),
        ins('add', { rd: 9, rs1: 10, rs2: 0 }), // keep write's result
        ins('addi', { rd: 10, rs1: 0, imm: 0 }),
        ...exitWords(),
      ],
      [{ address: 0x2000, bytes: [0x68, 0x69, 0x0a] }],
    );
    const { run, ending } = runToEnd(demo, program);
    expect(ending?.kind).toBe('exit');
    expect(run.sim.environment.stdoutText()).toBe('hi\n');
    expect(run.sim.regs[9]).toBe(3); // write returns the byte count in a0
  });

  it('stops at ebreak without retiring it; the monitor counts it', () => {
    const program = programOf([ins('addi', { rd: 8, rs1: 0, imm: 0x5e }), ins('ebreak'), ins('addi', { rd: 10, rs1: 0, imm: 99 }), ...exitWords()]);
    const { run, ending } = runToEnd(demo, program);
    expect(ending).toEqual({ kind: 'ebreak', pc: PROGRAM_ORIGIN + 4 });
    expect(exitCodeOf(ending)).toBe(EXIT_EBREAK);
    expect(exitCodeOf(ending)).toBe(133);
    expect(run.sim.regs[8]).toBe(0x5e);
    expect(run.sim.instructionsRetired).toBe(1);
    expect(figuresOf(run.sim).mnemonics.get('ebreak')).toBe(1);
  });

  it('stops at a word no class decodes, naming pc, word and disassembly; both machines agree it is illegal', () => {
    const program = programOf([ins('addi', { rd: 5, rs1: 0, imm: 1 }), 0xffffffff]);
    const { ending } = runToEnd(demo, program);
    expect(ending?.kind).toBe('stopped');
    if (ending?.kind !== 'stopped' || ending.stop.kind !== 'illegal-instruction') throw new Error('expected an illegal instruction');
    expect(ending.stop.pc).toBe(PROGRAM_ORIGIN + 4);
    expect(ending.stop.word).toBe(0xffffffff);
    expect(ending.stop.why).toBe('no-class');
    expect(stopText(ending.stop)).toContain('illegal instruction (the table has no class for it)');
    expect(stopText(ending.stop)).toContain(`${hex(PROGRAM_ORIGIN + 4)}: 0xffffffff  .word 0xffffffff`);
    expect(exitCodeOf(ending)).toBe(EXIT_ILLEGAL_INSTRUCTION);
  });

  it('stops both machines at a system call the environment does not provide (exit code 4)', () => {
    const program = programOf([ins('addi', { rd: 17, rs1: 0, imm: 1000 }), ins('ecall')]);
    const { ending } = runToEnd(demo, program);
    if (ending?.kind !== 'stopped' || ending.stop.kind !== 'unsupported-syscall') throw new Error(`expected an unsupported system call, got ${JSON.stringify(ending)}`);
    expect(ending.stop).toEqual({ kind: 'unsupported-syscall', pc: PROGRAM_ORIGIN + 4, syscallNumber: 1000 });
    expect(exitCodeOf(ending)).toBe(EXIT_MACHINE_STOPPED);
  });

  it('counts steps per class: CPI per class and overall', () => {
    // 3 x addi, jal over one word, beq taken over one word, bne not taken, li a7, ecall.
    const program = programOf([
      ins('addi', { rd: 5, rs1: 0, imm: 1 }),
      ins('addi', { rd: 6, rs1: 0, imm: 2 }),
      ins('addi', { rd: 10, rs1: 0, imm: 0 }),
      ins('jal', { rd: 0, imm: 8 }),
      0xffffffff,
      ins('beq', { rs1: 0, rs2: 0, imm: 8 }),
      0xffffffff,
      ins('bne', { rs1: 0, rs2: 0, imm: 8 }),
      ...exitWords(),
    ]);
    const { run, ending } = runToEnd(demo, program);
    expect(ending?.kind).toBe('exit');
    const figures = figuresOf(run.sim);
    const byClass = Object.fromEntries(figures.classes.map((c) => [c.className, `${c.instructions} instructions, ${c.steps} steps, CPI ${c.cpi}`]));
    expect(byClass).toEqual({
      'OP-IMM': '4 instructions, 12 steps, CPI 3',
      JAL: '1 instructions, 4 steps, CPI 4',
      BRANCH: '2 instructions, 8 steps, CPI 4',
      SYSTEM: '1 instructions, 3 steps, CPI 3',
    });
    expect(figures.instructions).toBe(8);
    expect(figures.steps).toBe(27);
    expect(figures.cpi).toBe(27 / 8);
    expect(figures.mnemonics.get('addi')).toBe(4);
    expect(figures.mnemonics.get('bne')).toBe(1);
  });

  it('loads and stores bytes, halfwords and words with the sign or zero extension RV32I defines', () => {
    // Store 0x8081_f0f1 as a word at 0x3000, then read it back in every size (spec 2.6).
    const program = programOf([
      ins('lui', { rd: 5, imm: 0x8081f000 }),
      ins('addi', { rd: 5, rs1: 5, imm: 0x0f1 }), // 0x8081f0f1
      ins('lui', { rd: 6, imm: 0x3000 }),
      ins('sw', { rs1: 6, rs2: 5, imm: 0 }),
      ins('lb', { rd: 7, rs1: 6, imm: 0 }),
      ins('lbu', { rd: 8, rs1: 6, imm: 0 }),
      ins('lh', { rd: 9, rs1: 6, imm: 2 }),
      ins('lhu', { rd: 18, rs1: 6, imm: 2 }),
      ins('lw', { rd: 19, rs1: 6, imm: 0 }),
      ins('sb', { rs1: 6, rs2: 5, imm: 5 }),
      ins('sh', { rs1: 6, rs2: 5, imm: 6 }),
      ins('addi', { rd: 10, rs1: 0, imm: 0 }),
      ...exitWords(),
    ]);
    const { run, ending } = runToEnd(demo, program);
    expect(ending?.kind).toBe('exit');
    const regs = run.sim.regs;
    expect([regs[5], regs[7], regs[8], regs[9], regs[18], regs[19]].map(hex)).toEqual(['0x8081f0f1', '0xfffffff1', '0x000000f1', '0xffff8081', '0x00008081', '0x8081f0f1']);
    expect([...run.sim.memory.readBytes(0x3000, 8)].map((b) => b.toString(16))).toEqual(['f1', 'f0', '81', '80', '0', 'f1', 'f1', 'f0']);
  });
});

describe('bus faults found while running', () => {
  it('reports two drivers on one bus with the step, the strobes and their values', () => {
    // OP-IMM step 2 also enables the holding register onto the result bus, beside the ALU.
    const plan = planOf(demoWith('2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, done', '2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, t.oe, x.rd.ck, pc.inc, done'));
    const { ending } = runToEnd(plan, programOf([ins('addi', { rd: 5, rs1: 0, imm: 0x123 }), ...exitWords()]));
    expect(ending?.kind).toBe('fault');
    if (ending?.kind !== 'fault') return;
    const fault = ending.report.fault;
    expect(fault?.kind).toBe('contention');
    if (fault?.kind !== 'contention') return;
    expect(fault.buses.map((b) => b.bus)).toEqual(['result']);
    const values = Object.fromEntries(fault.buses[0].drivers.map((d) => [d.strobe, d.value === undefined ? 'undefined' : hex(d.value)]));
    expect(values).toEqual({ 'alu.oe': '0x00000123', 't.oe': '0x00000000' });
    expect(ending.report.instruction.pc).toBe(PROGRAM_ORIGIN);
    expect(ending.report.steps.at(-1)?.step).toBe(2);
    expect(ending.report.text).toContain('bus contention on `result`');
    expect(ending.report.text).toContain('Caution');
    expect(exitCodeOf(ending)).toBe(EXIT_MACHINE_STOPPED);
  });

  it('without the reference, a fault report still shows the faulting step\'s buses (the earlier steps\' were not recorded)', () => {
    const plan = planOf(demoWith('2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, done', '2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, t.oe, x.rd.ck, pc.inc, done'));
    const { ending } = runToEnd(plan, programOf([ins('addi', { rd: 5, rs1: 0, imm: 0x123 }), ...exitWords()]), { reference: false });
    if (ending?.kind !== 'fault') throw new Error('expected a fault');
    expect(ending.report.steps.map((s) => s.buses !== undefined)).toEqual([false, false, true]);
    expect(ending.report.text).toContain("bus values of the last step only: the earlier steps' were not recorded");
  });

  it('does not report contention on the demo table, whose steps each have one driver per bus', () => {
    const { ending } = runToEnd(demo, programOf([ins('addi', { rd: 5, rs1: 0, imm: 0x123 }), ...exitWords()]));
    expect(ending?.kind).toBe('exit');
  });

  it('refuses to load a floating bus (no driver, no keepers)', () => {
    // LUI without alu.oe: nothing drives the result bus, which has no keepers.
    const plan = planOf(demoWith('2: imm.fmt=u, imm.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done', '2: imm.fmt=u, imm.oe, alu.fn=passb, x.rd.ck, pc.inc, done'));
    const { ending } = runToEnd(plan, programOf([ins('lui', { rd: 5, imm: 0x12345000 }), ...exitWords()]));
    if (ending?.kind !== 'fault' || ending.report.fault?.kind !== 'undefined-value') throw new Error(`expected an undefined-value fault, got ${JSON.stringify(ending)}`);
    expect(ending.report.fault.strobe).toBe('x.rd.ck');
    expect(ending.report.fault.bus).toBe('result');
    expect(ending.report.fault.why).toBe('nothing drives `result` in this step and it has no keepers, so its lines float');
    expect(ending.report.steps.at(-1)?.buses?.find((b) => b.bus === 'result')).toEqual({ bus: 'result', value: undefined, state: 'floating' });
  });

  it('refuses a value that keepers never held: nothing drove the bus since reset', () => {
    // LUI without imm.oe: the ALU passes the right bus, which nothing has driven yet.
    const plan = planOf(demoWith('2: imm.fmt=u, imm.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done', '2: imm.fmt=u, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done'));
    const { ending } = runToEnd(plan, programOf([ins('lui', { rd: 5, imm: 0x12345000 }), ...exitWords()]));
    if (ending?.kind !== 'fault' || ending.report.fault?.kind !== 'undefined-value') throw new Error(`expected an undefined-value fault, got ${JSON.stringify(ending)}`);
    expect(ending.report.fault.why).toBe(
      '`alu.oe` drives `result` from `alu`, whose input `right` is undefined: nothing drives `right` in this step, and its keepers hold no value: nothing has driven it since reset',
    );
  });

  it('lets keepers hold the last driven value (a stale value, which the reference then catches)', () => {
    const plan = planOf(demoWith('2: imm.fmt=u, imm.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done', '2: imm.fmt=u, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done'));
    const program = () => programOf([ins('addi', { rd: 6, rs1: 0, imm: 0x55 }), ins('lui', { rd: 5, imm: 0x12345000 }), ins('addi', { rd: 10, rs1: 0, imm: 0 }), ...exitWords()]);
    const alone = runToEnd(plan, program(), { reference: false });
    expect(alone.ending?.kind).toBe('exit');
    expect(hex(alone.run.sim.regs[5])).toBe('0x00000055'); // the right bus still held addi's immediate
    const checked = runToEnd(plan, program());
    if (checked.ending?.kind !== 'divergence') throw new Error('expected a divergence');
    expect(checked.ending.report.differences.map((d) => d.text)).toEqual(['x5: expected 0x12345000 (reference), got 0x00000055 (table)']);
  });
});

describe('x0 settings of the register file', () => {
  const program = () => programOf([ins('addi', { rd: 0, rs1: 0, imm: 5 }), ins('add', { rd: 1, rs1: 0, rs2: 0 }), ins('addi', { rd: 10, rs1: 0, imm: 0 }), ...exitWords()]);

  it('hardwired: x0 ignores the write and reads 0', () => {
    const { run, ending } = runToEnd(demo, program());
    expect(ending?.kind).toBe('exit');
    expect(run.sim.regs[0]).toBe(0);
    expect(run.sim.regs[1]).toBe(0);
  });

  it('stored: x0 keeps the 5, and the lock-step comparison names x0 at the addi, in the step that loads it', () => {
    const plan = planOf(demoWith('part x    regfile 32 x0=hardwired', 'part x    regfile 32 x0=stored'));
    const alone = runToEnd(plan, program(), { reference: false });
    expect(alone.run.sim.regs[0]).toBe(5);
    expect(alone.run.sim.regs[1]).toBe(10); // x0 + x0
    const checked = runToEnd(plan, program());
    if (checked.ending?.kind !== 'divergence') throw new Error('expected a divergence');
    const report = checked.ending.report;
    expect(report.instruction.pc).toBe(PROGRAM_ORIGIN);
    expect(report.instruction.mnemonic).toBe('addi');
    expect(report.differences.map((d) => d.text)).toEqual(['x0: expected 0x00000000 (reference), got 0x00000005 (table)']);
    expect(report.steps[report.culprit!].sourceLabel).toBe('class OP-IMM step 2');
  });

  it('guarded: the zero detector on rd blocks the write, so x0 stays 0', () => {
    const plan = planOf(demoWith('part x    regfile 32 x0=hardwired', 'part x    regfile 32 x0=guarded'));
    const { run, ending } = runToEnd(plan, program());
    expect(ending?.kind).toBe('exit');
    expect(run.sim.regs[1]).toBe(0);
  });
});

describe('timing model', () => {
  it('is edge-triggered: the memory read uses the address register as it was while the same edge loads it', () => {
    // Fetch step 1 also loads mar from the result bus (the fetched word); the read still used the old mar.
    const plan = planOf(demoWith('1: mem.size=word, mem.rd, ir.ck', '1: mem.size=word, mem.rd, ir.ck, mar.ck'));
    const program = programOf([ins('addi', { rd: 10, rs1: 0, imm: 7 }), ...exitWords()]);
    const { run, ending } = runToEnd(plan, program);
    expect(ending).toEqual({ kind: 'exit', exitCode: 7, status: 7 });
    const mar = plan.partIndex.get('mar')!;
    expect(hex(run.sim.partValue[mar])).toBe(hex(ins('ecall'))); // mar holds the last word fetched
  });

  it('starts from the reset state: pc at the entry, sp at the default stack pointer, step 0, instruction register 0', () => {
    const program = programOf([ins('addi', { rd: 10, rs1: 0, imm: 0 }), ...exitWords()]);
    const sim = new BusSimulator(demo, program.memory, program.entry);
    expect(sim.pc).toBe(PROGRAM_ORIGIN);
    expect(hex(sim.regs[2])).toBe('0x7fff0000');
    expect(sim.step).toBe(0);
    expect(sim.ir).toBe(0);
    expect(sim.definedMask).toBe(0); // every bus undefined
  });

  it('stops a class that runs past its last step without end', () => {
    const plan = planOf(demoWith('class MISC-MEM opcode=0001111 "fence: nothing to order on this machine"\n  use fetch\n  2: pc.inc, done', 'class MISC-MEM opcode=0001111 "fence: nothing to order on this machine"\n  use fetch\n  2: pc.inc'));
    const { ending } = runToEnd(plan, programOf([ins('fence'), ...exitWords()]), { reference: false });
    if (ending?.kind !== 'stopped' || ending.stop.kind !== 'illegal-instruction') throw new Error('expected a stop');
    expect(ending.stop.why).toBe('no-end');
    expect(ending.stop.message).toBe('class MISC-MEM ran all 8 steps of the step counter without `end` for this word');
  });

  it('reports a divergence when the table lacks a class the reference executes', () => {
    const plan = planOf(demoWith('class MISC-MEM opcode=0001111', 'class MISC-MEM opcode=1111111'));
    const { ending } = runToEnd(plan, programOf([ins('fence'), ...exitWords()]));
    if (ending?.kind !== 'divergence') throw new Error('expected a divergence');
    expect(ending.report.differences[0].what).toBe('ending');
    expect(ending.report.differences[0].text).toContain('the reference executes it; but the table stops: illegal instruction (the table has no class for it)');
    // All eight steps of the step counter ran: the two fetch steps, then six fill words. The
    // fence is the first instruction: the fetch ran with the reset instruction register (0),
    // whose opcode bits 6..2 (00000) select LOAD's steps.
    expect(ending.report.steps.map((s) => (s.fill ? 'fill' : s.sourceLabel))).toEqual([
      'phase fetch step 0 (used by class LOAD)',
      'phase fetch step 1 (used by class LOAD)',
      'fill',
      'fill',
      'fill',
      'fill',
      'fill',
      'fill',
    ]);
  });
});

describe('tables with several stores', () => {
  // The demo's word split over a strobe store and a field store with the same address lines.
  const split = DEMO_TEXT.slice(0, DEMO_TEXT.indexOf('word 32 as 4 x 8')) +
    [
      'store ctl',
      'word 24 as 3 x 8 chip=28C64 unused=0',
      '  x.rs1.oe 0  x.rs2.oe 1  x.rd.ck 2  pc.oe 3  pc.ck 4  pc.inc 5  ir.ck 6  mar.ck 7',
      '  t.ck 8  t.oe 9  imm.oe 10  four.oe 11  alu.oe 12  cmp.ck 13  mem.rd 14  mem.wr 15  done 16  sys.trap 17',
      'address 13',
      '  step 0..2  taken 3  f7b5 4  funct3 5..7  opcode 8..12',
      'store fld',
      'word 16 as 2 x 8 chip=28C64 unused=0',
      '  alu.fn 0..3  imm.fmt 4..6  mem.size 8..10',
      'address 13',
      '  step 0..2  taken 3  f7b5 4  funct3 5..7  opcode 8..12',
      '',
    ].join('\n') +
    DEMO_TEXT.slice(DEMO_TEXT.indexOf('map op_fn'));

  // An entry-point decoder: store `dec`, addressed by the opcode, gives the field `entry` that
  // feeds the main store's address lines in place of the opcode.
  const decoder = [
    'machine "decoder sketch"',
    'bus left   32 keeper',
    'bus right  32 keeper',
    'bus result 32',
    'part x    regfile 32 x0=hardwired',
    'part pc   counter 32 inc=4 bit0=zero',
    'part ir   instruction 32',
    'part mar  register 32',
    'part imm  immediate from ir',
    'part alu  alu left right',
    'part mem  memory 32 addr=mar',
    'strobe x.rs1.oe enable x.rs1 -> left    active low',
    'strobe x.rd.ck  clock result -> x.rd',
    'strobe pc.oe    enable pc -> left       active low',
    'strobe pc.inc   count pc',
    'strobe ir.ck    clock result -> ir',
    'strobe mar.ck   clock result -> mar',
    'strobe imm.oe   enable imm -> right     active low',
    'strobe alu.oe   enable alu -> result    active low',
    'strobe mem.rd   read mem -> result      active low',
    'strobe sys.trap trap',
    'strobe done     end',
    'field alu.fn 4 -> alu idle=passa { add=0 passa=14 }',
    'field imm.fmt 3 -> imm { i=0 }',
    'field mem.size 3 -> mem { word=2 }',
    'field entry 2 idle=opimm { opimm=0 system=1 }',
    'store dec',
    'word 8 as 1 x 8',
    '  entry 0..1',
    'address 5',
    '  opcode 0..4',
    'store main',
    'word 24 as 3 x 8',
    '  x.rs1.oe 0  x.rd.ck 1  pc.oe 2  pc.inc 3  ir.ck 4  mar.ck 5  imm.oe 6  alu.oe 7',
    '  mem.rd 8  sys.trap 9  done 10  alu.fn 12..15  imm.fmt 16..18  mem.size 19..21',
    'address 5',
    '  step 0..2  entry 3..4',
    'class OP-IMM opcode=0010011',
    '  0: pc.oe, alu.fn=passa, alu.oe, mar.ck, entry=opimm',
    '  1: mem.size=word, mem.rd, ir.ck, entry=opimm',
    '  2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, x.rd.ck, pc.inc, done, entry=opimm',
    'class SYSTEM opcode=1110011',
    '  0: pc.oe, alu.fn=passa, alu.oe, mar.ck, entry=system',
    '  1: mem.size=word, mem.rd, ir.ck, entry=system',
    '  2: sys.trap, pc.inc, done, entry=system'
  ].join('\n');

  it('forms an address from another store\'s field (an entry-point decoder)', () => {
    const plan = planOf(decoder);
    expect(plan.stores.map((s) => s.store.name)).toEqual(['dec', 'main']);
    expect(plan.stores[1].fieldSources).toHaveLength(1);
    const { run, ending } = runToEnd(plan, programOf([ins('addi', { rd: 10, rs1: 0, imm: 5 }), ins('addi', { rd: 10, rs1: 10, imm: 2 }), ...exitWords()]));
    expect(ending).toEqual({ kind: 'exit', exitCode: 7, status: 7 });
    expect(run.sim.instructionsRetired).toBe(4);
    // The main store's address at the ecall's step 2: step 2, entry = system (1).
    expect(run.sim.logAddress[2 * 2 + 1]).toBe(2 + (1 << 3));
  });

  it('reads words wider than 32 bits (a strobe and a field past bit 31)', () => {
    const wide = planOf(demoWith('word 32 as 4 x 8 chip=28C64 unused=0', 'word 40 as 5 x 8 chip=28C64 unused=0').replace('mem.size 24..26   sys.trap 27', 'mem.size 33..35   sys.trap 38'));
    expect(wide.stores[0].enc.lanes).toBe(2);
    const words = [ins('lui', { rd: 5, imm: 0x2000 }), ins('sw', { rs1: 5, rs2: 5, imm: 4 }), ins('lb', { rd: 10, rs1: 5, imm: 5 }), ...exitWords()];
    expect(runToEnd(wide, programOf(words)).ending).toEqual({ kind: 'exit', exitCode: 0x20, status: 0x20 });
  });

  it('combines the words of every store in a step and runs like the one-store table', () => {
    const plan = planOf(split);
    expect(plan.stores.map((s) => s.store.name)).toEqual(['ctl', 'fld']);
    const words = [ins('addi', { rd: 5, rs1: 0, imm: 12 }), ins('slli', { rd: 6, rs1: 5, imm: 3 }), ins('sub', { rd: 7, rs1: 6, rs2: 5 }), ins('blt', { rs1: 5, rs2: 6, imm: 8 }), 0xffffffff, ins('addi', { rd: 10, rs1: 7, imm: 0 }), ...exitWords()];
    const two = runToEnd(plan, programOf(words));
    const one = runToEnd(demo, programOf(words));
    expect(two.ending).toEqual({ kind: 'exit', exitCode: 84, status: 84 });
    expect(one.ending).toEqual(two.ending);
    expect(two.run.sim.steps).toBe(one.run.sim.steps);
  });
});
