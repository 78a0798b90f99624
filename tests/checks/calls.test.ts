// Calls and returns of a sequencer with return registers (the library's `callseq`, or a kind
// of the table's own with `holds return`): the checks call-without-return, return-without-call
// and return-depth fire on their fault examples at the exact step and fall silent on the fixed
// table; a routine called from two steps of one instruction is two paths, each back to its own
// caller (no false micro-loop, and the step count is the straight sum); the listing says where
// each word calls and returns; the kind lines are checked. That a return goes back to the step
// a call saved, and that a fixed-depth return stack loses a saved step when calls nest deeper
// than it, is common practice, no source; the machines here are invented for the tests.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { analyse } from '../../server/src/core/analysis';
import { codes, edit, found } from '../support/findings';
import { classCycles } from '../../server/src/core/flow/cycleCounts';
import { planBuild } from '../../server/src/core/encode/plan';
import { hover } from '../../server/src/core/ide/hover';

const root = join(__dirname, '../..');
const read = (path: string) => readFileSync(join(root, path), 'utf8');


/** The tiny machine of the fault examples with its class replaced by `steps`. */
function tiny(steps: string, seqKind = 'callseq 3 target=next', before = ''): string {
  const base = read('examples/faults/call-without-return.pwt');
  const head = base.slice(0, base.indexOf('class OP'));
  return before + edit(head, 'part seq callseq 3 target=next', `part seq ${seqKind}`).replace(/^# .*\n/gm, '') + `class OP opcode=0110011\n${steps}`;
}

/** A sequencer of the table's own with two return registers (a stack, the top first). */
const twoDeep = `kind stackseq "sequencer with two return registers"
  setting width number = 3 "bits of the step"
  input target width field "jump or call target"
  control op: count load hold clear call return = count
  state q width = 0
  state r0 width = 0
  state r1 width = 0
  holds step q
  holds return r0 r1
  on next always: q <= select op { count: q + 1, load: target, hold: q, clear: 0, call: target, return: r0 }
  on push always: r0 <= select op { call: q + 1, return: r1, else: r0 }
  on deeper always: r1 <= select op { call: r0, else: r1 }
`;

describe('call-without-return', () => {
  it('fires at the call on its fault example, naming the end inside the routine', () => {
    const d = found(read('examples/faults/call-without-return.pwt'), 'call-without-return');
    expect(d).toHaveLength(1);
    expect(d[0].line.trim()).toBe('0: a.oe, call 4');
    expect(d[0].range).toBe('0');
    expect(d[0].message).toContain('calls the routine at step 4');
    expect(d[0].message).toContain('keeps step 1 in `r`');
    expect(d[0].message).toContain('ends the instruction at step 4 without returning');
    expect(d[0].related).toEqual(['4: a.oe, c.ck, end']);
  });

  it('is silent once the routine returns, and step 1 then runs', () => {
    const text = edit(read('examples/faults/call-without-return.pwt'), '  4: a.oe, c.ck, end', '  4: a.oe, c.ck, return');
    expect(codes(text)).toEqual([]);
    // 0 (call), 4 (return), 1 (end): three steps.
    const machine = analyse(text).machine;
    const cycles = classCycles(machine, machine.classes[0]);
    expect([cycles.min, cycles.max]).toEqual([3, 3]);
  });
});

describe('return-without-call', () => {
  it('fires at the returning step on its fault example', () => {
    const d = found(read('examples/faults/return-without-call.pwt'), 'return-without-call');
    expect(d).toHaveLength(1);
    expect(d[0].line.trim()).toBe('4: a.oe, c.ck, return');
    expect(d[0].message).toContain('no call saved a step there');
  });

  it('is silent when every way into the routine is a call', () => {
    const text = edit(read('examples/faults/return-without-call.pwt'), '  0 else: a.oe, goto 4', '  0 else: a.oe, call 4');
    expect(codes(text)).toEqual([]);
  });

  it('fires when a routine returns twice (the saved step was already used)', () => {
    const text = tiny('  0: a.oe, call 4\n  1: a.oe, b.ck, return\n  4: a.oe, c.ck, return\n');
    const d = found(text, 'return-without-call');
    expect(d.map((x) => x.line.trim())).toEqual(['1: a.oe, b.ck, return']);
  });
});

describe('return-depth', () => {
  it('fires at the nested call on its fault example, naming the open call', () => {
    const d = found(read('examples/faults/return-depth.pwt'), 'return-depth');
    expect(d).toHaveLength(1);
    expect(d[0].line.trim()).toBe('4: a.oe, c.ck, call 6');
    expect(d[0].message).toContain('while the call at step 0 is still open');
    expect(d[0].message).toContain('one return register');
    expect(d[0].related).toEqual(['0: a.oe, call 4']);
  });

  it('is silent with two return registers, and fires again at three nested calls', () => {
    const steps = read('examples/faults/return-depth.pwt').split('class OP opcode=0110011\n')[1];
    const two = tiny(steps, 'stackseq 3 target=next', twoDeep);
    expect(codes(two)).toEqual([]);
    // 0 call 4, 4 call 6, 6 return (to 5), 5 return (to 1), 1 end: five steps.
    const machine = analyse(two).machine;
    expect(classCycles(machine, machine.classes[0]).min).toBe(5);
    const three = tiny('  0: a.oe, call 4\n  1: a.oe, b.ck, end\n  4: call 6\n  5: return\n  6: call 3\n  7: return\n  3: a.oe, c.ck, return\n', 'stackseq 3 target=next', twoDeep);
    const d = found(three, 'return-depth');
    expect(d.map((x) => x.line.trim())).toEqual(['6: call 3']);
    expect(d[0].message).toContain('2 return registers (`r0`, `r1`)');
  });
});

describe('a routine called from two steps of one instruction', () => {
  const text = tiny('  0: a.oe, call 4\n  1: a.oe, b.ck, call 4\n  2: end\n  4: a.oe, c.ck, return\n');

  it('checks clean: each call returns to its own caller, no loop between them', () => {
    expect(codes(text)).toEqual([]);
  });

  it('counts the straight path: 0, 4, 1, 4, 2', () => {
    const machine = analyse(text).machine;
    const cycles = classCycles(machine, machine.classes[0]);
    expect([cycles.min, cycles.max, cycles.loops]).toEqual([5, 5, false]);
  });

  it('the listing says where each word calls and returns', () => {
    const plan = planBuild(analyse(text).machine, { stem: 't', source: 't.pwt', formats: ['list'] });
    const file = plan.files.find((f) => f.name === 't.main.lst')!;
    const out = file.kind === 'text' ? [...file.chunks()].join('') : '';
    expect(out).toContain('-> N (call, back to M)');
    expect(out).toContain('-> 4 (call, back to 1)');
    expect(out).toContain('-> 4 (call, back to 2)');
    expect(out).toContain('-> return');
  });
});

describe('the sugar and the kind lines', () => {
  it('`call` on a sequencer without a call op is an error at the word', () => {
    const text = tiny('  0: a.oe, call 4\n  1: end\n  4: end\n', 'sequencer 3 target=next');
    const d = found(text.replace('{ count=0 load=1 hold=2 clear=3 call=4 return=5 }', '{ count=0 load=1 hold=2 clear=3 }'), 'wrong-wiring');
    expect(d.map((x) => x.range)).toEqual(['call']);
    expect(d[0].message).toContain('op to `call`');
  });

  it('`call` and `return` on a machine without a sequencer are errors', () => {
    const d = found('bus b 8\npart a register 8\nstrobe a.ck clock b -> a\nword 8 as 1 x 8\n  a.ck 0\naddress 8\n  step 0..2 opcode 3..7\nclass OP opcode=0110011\n  0: a.ck, call 3\n  1: return\n', 'wrong-wiring');
    expect(d.map((x) => x.range)).toEqual(['call 3', 'return']);
  });

  it('only `holds return` lists several states, each a single register as wide as the step', () => {
    const kind = (lines: string) => `kind k "test"\n  setting width number = 3 "bits"\n  state q width = 0\n  state r width = 0\n  state s 2 = 0\n  state a width x 4\n${lines}\n  on next always: q <= q + 1\n`;
    expect(found(kind('  holds step q r'), 'kind-definition').map((x) => x.range)).toEqual(['r']);
    expect(found(kind('  holds step q\n  holds return r a'), 'kind-definition').map((x) => x.range)).toEqual(['a']);
    expect(found(kind('  holds step q\n  holds return r r'), 'kind-definition').map((x) => x.message)).toEqual(['`r` is listed twice']);
    const wired = (holds: string) => `${kind(holds)}bus b 8\npart seq k 3\naddress 8\n  step 0..2 opcode 3..7\n`;
    expect(found(wired('  holds step q\n  holds return s'), 'wrong-wiring').map((x) => x.message)[0]).toContain('return register `s` in 2');
    expect(found(`${kind('  holds return r')}part p k 3\n`, 'wrong-wiring').map((x) => x.message)[0]).toContain('holds return registers but not the step');
  });
});

describe('hover on a call machine (examples/winch-32.pwt)', () => {
  const text = read('examples/winch-32.pwt');
  const analysis = analyse(text);
  const at = (probe: string, shift = 0) => hover(analysis, text.indexOf(probe) + shift)?.markdown ?? '';

  it('says what the sugar sets and where the sequencer goes', () => {
    expect(at('call 8')).toBe('**`call`** — step sugar: sets `seqop=call`, `next=8`; at the closing edge the sequencer `seq` goes to step 8 and keeps step 3 in the return register, to come back to.');
    expect(at(', return', 2)).toContain('goes to the step the return register holds');
  });

  it('says the sequencer\'s ports act at every closing edge with no strobe', () => {
    const part = at('part seq', 5);
    expect(part).toContain('`next`: acts at every closing edge, no strobe needed: the next step');
    expect(part).not.toContain('count strobe');
  });
});
