// A jump table: a decode map that gives the sequencer's next step from the instruction's bits
// (tests/support/sequencer.ts dispatchDemo: windlass-32 with OP-IMM dispatched on funct3). The
// control flow follows each instruction to the step its row names, so coverage, the flow checks
// and the cycle counts hold per instruction; map rows of a number field are numbers; and a next
// step the table does not fix is next-step-unknown at the step, never skipped in silence.
// tests/outside/sim-own-kinds.test.ts runs the dispatch demo identical to qemu-riscv32; that a
// jump table on an opcode field is one way to sequence microcode is common practice, no source.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { analyse } from '../../server/src/core/analysis';
import { classCycles, countsText } from '../../server/src/core/flow/cycleCounts';
import { instructionGraphs } from '../../server/src/core/flow/stepGraph';
import { dispatchDemo } from '../support/sequencer';
import { codes, edit, found } from '../support/findings';

const text = dispatchDemo();

describe('a jump table on funct3', () => {
  it('checks clean', () => {
    expect(codes(text)).toEqual([]);
  });

  it('sends each instruction to the step its row names', () => {
    const machine = analyse(text).machine;
    const cls = machine.classes.find((c) => c.name === 'OP-IMM')!;
    const graphs = instructionGraphs(machine, cls)!;
    const stepsOf = (mnemonic: string) => [...new Set(graphs.filter((g) => g.mnemonic === mnemonic).flatMap((g) => g.graph.steps))].sort();
    expect(stepsOf('addi')).toEqual([0, 1, 2, 4]);
    expect(stepsOf('slli')).toEqual([0, 1, 2, 3]);
    expect(stepsOf('srai')).toEqual([0, 1, 2, 3]);
  });

  it('counts 4 steps for ADDI..ANDI and a loop for the shifts', () => {
    const machine = analyse(text).machine;
    const cycles = classCycles(machine, machine.classes.find((c) => c.name === 'OP-IMM')!);
    const of = (m: string) => cycles.instructions.find((i) => i.mnemonic === m)!;
    expect([of('addi').min, of('addi').max]).toEqual([4, 4]);
    expect(of('slli').min).toBe(4);
    expect(of('slli').loopSteps).toEqual([3]);
    expect(countsText(of('xori'))).toBe('4');
  });

  it('a row sending ADDI to the loop is seen: the loop then reads the shift map, which has no row for it', () => {
    const wrong = edit(text, '  000 4   001 3', '  000 3   001 3');
    const d = found(wrong, 'instruction-uncovered');
    expect(d.some((x) => x.message.includes('`shift_fn` has no row for addi'))).toBe(true);
  });

  it('a row naming a step the class does not write is jump-outside', () => {
    const wrong = edit(text, '  000 4   001 3', '  000 6   001 3');
    const d = found(wrong, 'jump-outside');
    expect(d.map((x) => x.range)).toEqual(['000 6']);
    expect(d[0].message).toContain('jumps to step 6 for the instructions of the row `000` of its jump table');
  });
});

describe('map rows of a number field', () => {
  it('must be numbers that fit', () => {
    expect(found(edit(text, '  000 4   001 3', '  000 9   001 3'), 'bad-number').map((x) => x.range)).toEqual(['9']);
    expect(found(edit(text, '  000 4   001 3', '  000 four   001 3'), 'wrong-wiring').map((x) => x.message)).toEqual(['`next` is a number field: give the row a number from 0 to 7']);
  });

  it('a number on a field with named values is an error', () => {
    const wrong = edit(text, '  001 0 shl1   101 0 shr1', '  001 0 9   101 0 shr1');
    expect(found(wrong, 'wrong-wiring').map((x) => x.range)).toEqual(['9']);
  });
});

describe('next-step-unknown', () => {
  const fault = readFileSync(new URL('../../examples/faults/next-step-unknown.pwt', import.meta.url), 'utf8');

  it('fires at the step whose target comes from a bus, and nothing else fires', () => {
    const d = found(fault, 'next-step-unknown');
    expect(d.map((x) => x.line)).toEqual(['  0: a.oe, seqop=load']);
    expect(d[0].message).toContain('through `target`');
    expect(codes(fault)).toEqual(['next-step-unknown']);
  });

  it('a step that does not read the bus target is followed (clearing needs no target)', () => {
    const fixed = edit(fault, '  0: a.oe, seqop=load', '  0: a.oe');
    expect(codes(fixed)).toEqual([]);
  });
});
