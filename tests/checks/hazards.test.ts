// The hazard checks: each fires where the hardware would misbehave and stays silent on the
// corrected table. Fixtures carry their expected diagnostics as caret annotations.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { dedent, expectDiagnostics } from '../support/annotated';
import { machine } from './prelude';

describe('bus-contention', () => {
  it('fires when two enables drive one bus in a step, with every enable as a related location and a caution', () => {
    const a = expectDiagnostics(
      machine(`
        class OP opcode=0110011
          use fetch
          2: x.rs1.oe, pc.oe, x.rs2.oe, alu.fn=add, alu.oe, x.rd.ck, done
        #              ^^^^^ bus-contention: both drive bus \`left\`
      `),
      ['bus-contention'],
    );
    const d = a.diagnostics.find((x) => x.code === 'bus-contention')!;
    expect(d.related!.map((r) => a.text.slice(r.span.start, r.span.end))).toEqual(['x.rs1.oe', 'pc.oe']);
    expect(d.message).toContain('overheat');
    expect(d.fixes!.map((f) => f.title)).toEqual(['Remove `x.rs1.oe` from this step', 'Remove `pc.oe` from this step']);
  });

  it('counts a memory read as a driver', () => {
    expectDiagnostics(
      machine(`
        class LOAD opcode=0000011
          use fetch
          2: mem.rd, t.oe, x.rd.ck, done
        #            ^^^^ bus-contention
      `),
      ['bus-contention'],
    );
  });

  it('checks each guarded alternative on its own', () => {
    expectDiagnostics(
      machine(`
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3 if taken: pc.oe, imm.fmt=b, imm.oe, four.oe, alu.fn=add, alu.oe, pc.ck, done
        #                                       ^^^^^^^ bus-contention: when taken=1
          3 else: pc.inc, done
      `),
      ['bus-contention'],
    );
  });

  it('is silent when drivers share no bus, or are in different steps or alternatives', () => {
    expectDiagnostics(
      machine(`
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
          3 else: pc.oe, four.oe, alu.fn=add, alu.oe, pc.ck, done
      `),
      ['bus-contention'],
    );
  });
});

describe('double drive', () => {
  it('field-conflict fires on two values of one field, and its fix removes the second', () => {
    const a = expectDiagnostics(
      machine(`
        class OP opcode=0110011
          use fetch
          2: x.rs1.oe, x.rs2.oe, alu.fn=add, alu.fn=sub, alu.oe, x.rd.ck, done
        #                                    ^^^^^^^^^^ field-conflict: set to add and to sub
      `),
      ['field-conflict'],
    );
    const fix = a.diagnostics.find((d) => d.code === 'field-conflict')!.fixes![0];
    const fixed = a.text.slice(0, fix.edits[0].span.start) + fix.edits[0].newText + a.text.slice(fix.edits[0].span.end);
    expect(fixed).toContain('2: x.rs1.oe, x.rs2.oe, alu.fn=add, alu.oe, x.rd.ck, done');
  });

  it('field-conflict is silent when a field is set once', () => {
    expectDiagnostics(machine(`
      class OP opcode=0110011
        use fetch
        2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, done
    `), ['field-conflict', 'repeated-strobe']);
  });

  it('repeated-strobe fires on a strobe listed twice', () => {
    expectDiagnostics(
      machine(`
        class OP opcode=0110011
          use fetch
          2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, x.rs1.oe, done
        #                                                       ^^^^^^^^ repeated-strobe
      `),
      ['repeated-strobe', 'bus-contention'],
    );
  });

  it('clock-conflict fires on a register loaded from two buses, and on load plus count', () => {
    expectDiagnostics(
      machine(`
        class JALR opcode=1100111
          use fetch
          2: x.rs1.oe, four.oe, alu.fn=add, alu.oe, t.ck, t.lck
        #                                                 ^^^^^ clock-conflict: loaded from \`result\` by \`t.ck\` and loaded from \`left\`
          3: t.oe, pc.ck, pc.inc, done
        #                 ^^^^^^ clock-conflict: counted by \`pc.inc\`
      `),
      ['clock-conflict'],
    );
  });

  // A part of the table's own kind with two registers: ports on different states may act at
  // one edge (the simulator computes every port from the values before the edge); two on one
  // state conflict, and a port that takes no bus is named by its port, not as a bus.
  const twoStates = `
    kind pair "two registers in one part"
      state a 32 = 0
      state b 32 = 0
      drive out 32 = a
      on la 32: a <= in
      on lb 32: b <= in
      on bump: a <= a + 1
    part p pair
    strobe p.la   clock result -> p.la
    strobe p.lb   clock left -> p.lb
    strobe p.bump clock p.bump
    strobe p.oe   enable p -> result active low
  `;
  it('clock-conflict keeps apart the states of a part of the table\'s own kind', () => {
    expectDiagnostics(
      machine(`
        ${twoStates}
        class JALR opcode=1100111
          use fetch
          2: x.rs1.oe, four.oe, alu.fn=add, alu.oe, p.la, p.lb
          3: p.oe, p.la, p.bump, pc.ck, done
        #                ^^^^^^ clock-conflict: state \`a\` of \`p\` is loaded from \`result\` by \`p.la\` and set through its port \`bump\` by \`p.bump\`
      `),
      ['clock-conflict'],
    );
  });

  it('clock-conflict is silent for one load per part', () => {
    expectDiagnostics(machine(`
      class JALR opcode=1100111
        use fetch
        2: x.rs1.oe, four.oe, alu.fn=add, alu.oe, t.ck
        3: t.oe, pc.ck, done
    `), ['clock-conflict']);
  });
});

describe('writes to x0 and rd', () => {
  it('x0-write fires on an explicit write to x[0]', () => {
    expectDiagnostics(
      machine(`
        class OP opcode=0110011
          use fetch
          2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x0.ck, done
        #                                              ^^^^^ x0-write: hard-wired to zero
      `),
      ['x0-write'],
    );
  });

  it('rd-without-field fires in S and B classes, pointing at the phase use when it comes from a phase', () => {
    expectDiagnostics(
      machine(`
        class STORE opcode=0100011
          use fetch
          2: x.rs1.oe, imm.fmt=s, imm.oe, alu.fn=add, alu.oe, mar.ck
          3: x.rs2.oe, mem.size=word, mem.wr, t.oe, x.rd.ck, done
        #                                           ^^^^^^^ rd-without-field: S format
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, x.rs2.oe, cmp.ck
          3: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, x.rd.ck, done
        #                                                  ^^^^^^^ rd-without-field: B format
      `),
      ['rd-without-field'],
    );
  });

  it('rd-without-field is silent in formats with rd', () => {
    expectDiagnostics(machine(`
      class LOAD opcode=0000011
        use fetch
        2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, mar.ck
        3: mem.size=word, mem.rd, x.rd.ck, done
    `), ['rd-without-field']);
  });

  it('x0-stored-write fires on a stored x0 with rd writes, and not on a guarded one', () => {
    const stored = machine(`
      class OP opcode=0110011
        use fetch
        2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, done
    `).replace('x0=hardwired', 'x0=stored');
    const a = analyse(stored);
    const d = a.diagnostics.filter((x) => x.code === 'x0-stored-write');
    expect(d).toHaveLength(1);
    expect(a.text.slice(d[0].span.start, d[0].span.end)).toBe('x');
    expect(d[0].message).toContain('add with rd = x0 would store into x0');
    expect(analyse(stored.replace('x0=stored', 'x0=guarded')).diagnostics.filter((x) => x.code === 'x0-stored-write')).toHaveLength(0);
  });
});

describe('x0-stored-write decides from the guards', () => {
  // RV32I: rd is instruction bits 11..7 in every format that has it (Unprivileged ISA §2.2).
  const guardedInMicrocode = (guard: string) =>
    dedent(`
      bus result 32
      part ir instruction 32
      part x regfile 32 x0=stored
      part t register 32
      strobe t.oe   enable t -> result active low
      strobe x.rd.ck clock result -> x.rd
      strobe ir.ck  clock result -> ir
      strobe done   end
      word 8 as 1 x 8
        t.oe 0  x.rd.ck 1  ir.ck 2  done 3
      address 7
        step 0..1  ir[11:7] 2..6
      class OP opcode=0110011
        0: t.oe, ir.ck
        1 if ${guard}: done
        1 else: t.oe, x.rd.ck, done
    `);

  it('is silent when the write happens only under a guard that excludes rd = 00000', () => {
    const a = analyse(guardedInMicrocode('ir[11:7]=00000'));
    expect(a.diagnostics).toEqual([]);
  });

  it('fires when the guard lets rd = 00000 through to the write, naming the step that writes', () => {
    const a = analyse(guardedInMicrocode('ir[11:7]=00001'));
    const d = a.diagnostics.filter((x) => x.code === 'x0-stored-write');
    expect(d).toHaveLength(1);
    expect(d[0].related?.map((r) => a.text.slice(r.span.start, r.span.end))).toEqual(['x.rd.ck']);
    expect(d[0].message).toContain('1 step(s) write rd through `x.rd` with nothing to stop rd (`ir[11:7]`) = x0');
  });
});

describe('latching an undriven bus', () => {
  it('undriven-latch fires without keepers; stale-latch with keepers', () => {
    expectDiagnostics(
      machine(`
        class JALR opcode=1100111
          use fetch
          2: t.ck
        #    ^^^^ undriven-latch: nothing drives \`result\`
          3: t.lck, pc.inc, done
        #    ^^^^^ stale-latch: keepers hold the value of an earlier step
      `),
      ['undriven-latch', 'stale-latch'],
    );
  });

  it('follows the ALU to its operand buses, honouring pass-throughs', () => {
    expectDiagnostics(
      machine(`
        class LUI opcode=0110111
          use fetch
          2: imm.fmt=u, imm.oe, alu.fn=add, alu.oe, x.rd.ck
        #                                           ^^^^^^^ stale-latch: computed from bus \`left\`
          3: imm.fmt=u, imm.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done
      `),
      ['undriven-latch', 'stale-latch'],
    );
  });

  it('checks the comparator clock against its operand buses', () => {
    expectDiagnostics(
      machine(`
        class BRANCH opcode=1100011
          use fetch
          2: x.rs1.oe, cmp.ck
        #              ^^^^^^ stale-latch: \`right\`
          3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
          3 else: pc.inc, done
      `),
      ['undriven-latch', 'stale-latch'],
    );
  });

  it('follows a function set from a decode map through every value the map gives', () => {
    // Every value of `pass_fn` reads only operand a (left): right is not read, so it need not be driven.
    const passes = machine(`
      map pass_fn (funct3) -> alu.fn
        000 passa   001 passa   010 passa   011 passa   100 passa   101 passa   110 passa   111 passa
      class OP-IMM opcode=0010011
        use fetch
        2: x.rs1.oe, alu.fn=pass_fn, alu.oe, x.rd.ck, done
    `);
    expectDiagnostics(passes, ['undriven-latch', 'stale-latch']);
    // One value that adds reads right too: its keepers' old value would be stored.
    expectDiagnostics(
      machine(`
        map pass_fn (funct3) -> alu.fn
          000 add   001 passa   010 passa   011 passa   100 passa   101 passa   110 passa   111 passa
        class OP-IMM opcode=0010011
          use fetch
          2: x.rs1.oe, alu.fn=pass_fn, alu.oe, x.rd.ck, done
        #                                      ^^^^^^^ stale-latch: computed from bus \`right\`
      `),
      ['undriven-latch', 'stale-latch'],
    );
  });

  it('is silent when every load has a driver', () => {
    expectDiagnostics(machine(`
      class BRANCH opcode=1100011
        use fetch
        2: x.rs1.oe, x.rs2.oe, cmp.ck
        3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
        3 else: pc.inc, done
    `), ['undriven-latch', 'stale-latch']);
  });
});

describe('the checks on a clean table', () => {
  it('report nothing for the prelude plus a correct class', () => {
    const a = analyse(machine(`
      class OP opcode=0110011
        use fetch
        2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, pc.inc, done
      class JALR opcode=1100111
        use fetch
        2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, t.ck
        3: pc.oe, four.oe, alu.fn=add, alu.oe, x.rd.ck
        4: t.oe, pc.ck, done
      class LOAD opcode=0000011
        use fetch
        2: x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, mar.ck
        3: mem.size=word, mem.rd, x.rd.ck, pc.inc, done
      class STORE opcode=0100011
        use fetch
        2: x.rs1.oe, imm.fmt=s, imm.oe, alu.fn=add, alu.oe, mar.ck
        3: x.rs2.oe, mem.size=word, mem.wr, pc.inc, done
      class BRANCH opcode=1100011
        use fetch
        2: x.rs1.oe, x.rs2.oe, cmp.ck
        3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
        3 else: pc.inc, done
    `));
    // x0.ck and t.lck are declared for other tests and unused here.
    expect(a.diagnostics.map((d) => `${d.code}: ${d.message}`)).toEqual(['unused-name: strobe `x0.ck` is never used', 'unused-name: strobe `t.lck` is never used']);
  });
  void dedent;
});
