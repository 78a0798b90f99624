// Cycle counts from a class's control flow (flow/cycleCounts.ts) on small tables: the exact
// minimum and maximum steps to `end` per RV32I instruction, the flag values that decide them,
// a path that runs off the class, and the short line the code lens shows. The instructions a
// class's opcode selects and their funct3/funct7 bits are the RISC-V Unprivileged ISA 20191213
// listing (ch. 24), as isa/rv32i.ts holds it; the step counts are this project's own timing
// model (docs/notation.md: the counter counts up, `end` returns it to 0).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { classLenses } from '../../server/src/core/ide/codeLens';
import { type ClassCycles, countsText, cycleCountsOf, cyclesSummary } from '../../server/src/core/flow/cycleCounts';
import { machine } from '../checks/prelude';

function countsOf(fixture: string): { analysis: ReturnType<typeof analyse>; classes: ClassCycles[] } {
  const analysis = analyse(machine(fixture));
  return { analysis, classes: cycleCountsOf(analysis.machine) };
}

/** mnemonic -> `min..max: counts` */
function perInstruction(c: ClassCycles): Record<string, string> {
  return Object.fromEntries(c.instructions.map((i) => [i.mnemonic ?? '(class)', `${i.min}..${i.max}: ${countsText(i)}`]));
}

const branch = `
  class BRANCH opcode=1100011
    use fetch
    2: x.rs1.oe, x.rs2.oe, cmp.ck
    3 if !taken: pc.inc, done
    3 else: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, t.ck
    4: t.oe, pc.ck, done
`;

describe('cycle counts along the steps', () => {
  it('a branch: 4 steps not taken, 5 taken, for each of the six (the flag is unknown: both followed)', () => {
    const { analysis, classes } = countsOf(branch);
    expect(analysis.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const [c] = classes;
    expect([c.min, c.max, c.doesNotEnd]).toEqual([4, 5, false]);
    expect(c.instructions.map((i) => i.mnemonic)).toEqual(['beq', 'bne', 'blt', 'bge', 'bltu', 'bgeu']);
    expect(c.instructions[0].counts).toEqual([
      { steps: 4, conditions: ['not taken'] },
      { steps: 5, conditions: ['taken'] },
    ]);
    expect(cyclesSummary(c)).toBe('4–5 steps (BEQ..BGEU: 4 not taken, 5 taken)');
    expect(classLenses(analysis)[0].title).toBe('4–5 steps (BEQ..BGEU: 4 not taken, 5 taken) · instructions: beq, bne, blt, bge, bltu, bgeu');
  });

  it('guards on funct3 give each instruction its own count', () => {
    const { classes } = countsOf(`
      class OP opcode=0110011
        use fetch
        2 if funct3=-01: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, pc.inc, done
        2 else: x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, t.ck
        3: t.oe, x.rd.ck, pc.inc, done
    `);
    const [c] = classes;
    // sll is funct3 001, srl and sra 101 (spec ch. 24): they end in step 2.
    expect(perInstruction(c)).toEqual({
      add: '4..4: 4', sub: '4..4: 4', sll: '3..3: 3', slt: '4..4: 4', sltu: '4..4: 4',
      xor: '4..4: 4', srl: '3..3: 3', sra: '3..3: 3', or: '4..4: 4', and: '4..4: 4',
    });
    expect([c.min, c.max]).toEqual([3, 4]);
    expect(cyclesSummary(c)).toBe('3–4 steps (ADD, SUB, SLT, SLTU, XOR, OR, AND: 4; SLL, SRL, SRA: 3)');
  });

  it('alternatives that all end in the same step give one count with no condition', () => {
    const { classes } = countsOf(`
      class BRANCH opcode=1100011
        use fetch
        2: x.rs1.oe, x.rs2.oe, cmp.ck
        3 if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done
        3 else: pc.inc, done
    `);
    expect(classes[0].instructions[0].counts).toEqual([{ steps: 4, conditions: [] }]);
    expect(cyclesSummary(classes[0])).toBe('4 steps');
  });

  it('a flag tested in two steps: only the steps where it decides the count name it', () => {
    const { classes } = countsOf(`
      class BRANCH opcode=1100011
        use fetch
        2 if taken: pc.inc, done
        2 else: cmp.ck
        3 if taken: pc.inc, done
        3 else: pc.inc, done
    `);
    expect(classes[0].instructions[0].counts).toEqual([
      { steps: 3, conditions: ['taken'] },
      { steps: 4, conditions: ['not taken'] },
    ]);
  });

  it('a step no line covers is the fill word: the count goes on through it', () => {
    const { classes } = countsOf(`
      class LUI opcode=0110111
        use fetch
        3: imm.fmt=u, imm.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done
    `);
    expect([classes[0].min, classes[0].max]).toEqual([4, 4]);
    expect(cyclesSummary(classes[0])).toBe('4 steps');
  });

  it('a path past the last step without end: "does not end" under the flag value that takes it', () => {
    const { classes } = countsOf(`
      class BRANCH opcode=1100011
        use fetch
        2 if taken: pc.inc, done
        2 else: pc.inc
    `);
    const [c] = classes;
    expect([c.min, c.max, c.doesNotEnd]).toEqual([3, 3, true]);
    expect(c.instructions[0].doesNotEnd).toEqual(['not taken']);
    expect(countsText(c.instructions[0])).toBe('3, does not end (not taken)');
    expect(cyclesSummary(c)).toBe('3 steps (BEQ..BGEU: 3, does not end (not taken))');
  });

  it('a class no RV32I instruction selects is counted for its opcode; one with no end at all says so', () => {
    const { classes } = countsOf(`
      class CUSTOM opcode=0001011
        use fetch
        2: pc.inc
    `);
    expect(classes[0].instructions).toEqual([{ counts: [], doesNotEnd: [] }]);
    expect(cyclesSummary(classes[0])).toBe('does not end');
  });

  it('on a sequencer machine a loop with no way out counts as not ending, and the walk stays finite (examples/faults/micro-loop.pwt)', () => {
    const text = readFileSync(join(__dirname, '../../examples/faults/micro-loop.pwt'), 'utf8');
    const classes = cycleCountsOf(analyse(text).machine);
    expect(classes.some((c) => c.doesNotEnd)).toBe(true);
    for (const c of classes) expect(typeof cyclesSummary(c)).toBe('string');
  });
});
