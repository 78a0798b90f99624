// Which control-store addresses a table line stands for (core/debug/stepLines.ts), on the demo.
// Expected addresses are worked out by hand from the demo's own `address 13` layout (step 0..2,
// taken 3, f7b5 4, funct3 5..7, opcode 8..12 = opcode bits 6..2) and its classes, not read from
// the encoder: OP is opcode 0110011 (RV32I spec, chapter 24 opcode map), whose bits 6..2 are
// 01100; its step 2 stands where op_fn has an entry (ten funct3/f7b5 pairs), for either value
// of taken; the fetch steps stand at every funct3/f7b5/taken of every class's opcode.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { StepLineIndex } from '../../server/src/core/debug/stepLines';
import { SimPlan } from '../../server/src/core/sim/plan';

const text = readFileSync(join(__dirname, '../../examples/halyard-32.pwt'), 'utf8');
const analysis = analyse(text);
const planned = SimPlan.build(analysis.machine);
if (!planned.ok) throw new Error(planned.errors.join('; '));
const index = new StepLineIndex(planned.plan, analysis.lines);
const source = text.split('\n');

/** The zero-based line that starts with `prefix` (after indentation), the `nth` such from `after`. */
function lineOf(prefix: string, after = 0): number {
  const at = source.findIndex((l, i) => i >= after && l.trimStart().startsWith(prefix));
  if (at < 0) throw new Error(`no line ${prefix}`);
  return at;
}

function addressesOf(line: number): number[] {
  const marks = index.marksForLine(line);
  if (!marks.ok) throw new Error(marks.reason);
  expect(marks.marks).toHaveLength(1);
  return [...marks.marks[0].keys()].filter((a) => marks.marks[0][a]);
}

/** Every address with these fields, in the demo's layout; `pairs` are funct3 << 1 | f7b5. */
function layout(steps: number[], opcodes: number[], pairs: number[] = Array.from({ length: 16 }, (_, i) => i)): number[] {
  const out: number[] = [];
  for (const opcode of opcodes) for (const pair of pairs) for (const taken of [0, 1]) for (const step of steps) out.push((opcode >> 2) << 8 | (pair >> 1) << 5 | (pair & 1) << 4 | taken << 3 | step);
  return out.sort((a, b) => a - b);
}

const OP = 0b0110011;
// op_fn: 000 0 add, 000 1 sub, 001 0 sll, 010 0 slt, 011 0 sltu, 100 0 xor, 101 0 srl, 101 1 sra, 110 0 or, 111 0 and.
const opPairs = [0b0000, 0b0001, 0b0010, 0b0100, 0b0110, 0b1000, 0b1010, 0b1011, 0b1100, 0b1110];
// Every class's opcode, from the demo's class lines (RV32I spec, chapter 24).
const opcodes = [0b0110111, 0b0010111, 0b1101111, 0b1100111, 0b1100011, 0b0000011, 0b0100011, 0b0010011, 0b0110011, 0b0001111, 0b1110011];

describe('breakpoint lines of the demo', () => {
  it('a step alternative stands for the addresses holding its word', () => {
    const classOp = lineOf('class OP ');
    const step2 = lineOf('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn', classOp);
    const marks = index.marksForLine(step2);
    expect(marks.ok && { addresses: marks.addresses, label: marks.label }).toEqual({ addresses: 20, label: 'class OP step 2' });
    expect(addressesOf(step2)).toEqual(layout([2], [OP], opPairs));
  });

  it('a class line stands for all its steps, its phase steps included', () => {
    const classOp = lineOf('class OP ');
    const marks = index.marksForLine(classOp);
    expect(marks.ok && marks.label).toBe('class OP');
    expect(addressesOf(classOp)).toEqual([...layout([0, 1], [OP]), ...layout([2], [OP], opPairs)].sort((a, b) => a - b));
  });

  it('a `use` line stands for the phase steps as that class runs them', () => {
    const use = lineOf('use fetch', lineOf('class OP '));
    const marks = index.marksForLine(use);
    expect(marks.ok && { addresses: marks.addresses, label: marks.label }).toEqual({ addresses: 64, label: 'phase fetch in class OP' });
    expect(addressesOf(use)).toEqual(layout([0, 1], [OP]));
  });

  it("a phase step's line stands for that step in every class that uses the phase", () => {
    const fetch0 = lineOf('0: pc.oe, alu.fn=passa, alu.oe, mar.ck');
    const marks = index.marksForLine(fetch0);
    expect(marks.ok && { addresses: marks.addresses, label: marks.label }).toEqual({ addresses: 11 * 32, label: 'phase fetch step 0' });
    expect(addressesOf(fetch0)).toEqual(layout([0], opcodes));
  });

  it('refuses lines that hold no step: a declaration, a comment, a blank line, a line past the end', () => {
    const reason = 'no step, class or `use` stands on this line whose word is in the control store';
    for (const line of [lineOf('machine "Halyard-32"'), lineOf('strobe alu.oe'), 0, source.indexOf(''), source.length + 5]) {
      expect(index.marksForLine(line)).toEqual({ ok: false, reason });
    }
  });
});
