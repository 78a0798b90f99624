// A table's own kind gets the service a library kind gets, because hover, completion, the
// budget, the debugger's views and the x0 checks read part definitions (model/partFacts.ts),
// not kind names: a kind written in the fixture is explained, offered, timed and shown like the
// library's, and the register-file facts follow from running a definition, whatever its name.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { budgetOf } from '../../server/src/core/budget/budget';
import { DebugMachine } from '../../server/src/core/debug/machine';
import { StepLineIndex } from '../../server/src/core/debug/stepLines';
import { MachineViews } from '../../server/src/core/debug/views';
import { complete } from '../../server/src/core/ide/completion';
import { hover } from '../../server/src/core/ide/hover';
import { elementZeroStored, elementZeroWritable, heldValue, registerArrayFacts } from '../../server/src/core/model/partFacts';
import { prepareTable } from '../../server/src/core/sim/session';
import { standardLibraryText } from '../../server/src/core/parts/library';
import { dedent } from '../support/annotated';
import { cursor, offsetOf } from '../ide/support';

// An accumulator kind of this table: it loads or adds the bus at its edge, drives what it holds
// or its sum with an operand bus, and raises a flag when it holds zero.
const table = dedent(`
  machine "Acc" clock_khz=1000
  kind acc "accumulator: loads or adds the bus at the closing edge"
    setting width number = 8 "bits"
    input b width "the operand bus"
    control op: load add
    state q width = 0
    drive out width = q "the value it holds"
    drive sum width = q + b "what it holds plus the operand bus"
    on take width: q <= select op { load: in, add: q + in } "takes the bus"
    flag zero = q == 0
  bus left 8
  bus result 8
  part src register 8 en_ns=20
  part a acc 8 left en_ns=10 tpd_ns=40 tsu_ns=5 -> az
  strobe src.oe enable src -> left
  strobe a.oe enable a -> result
  strobe a.sum enable a.sum -> result
  strobe a.ck clock result -> a
  strobe done end
  field a.op 1 -> a { load=0 add=1 }
  word 8 as 1 x 8 access_ns=100
    src.oe 0  a.oe 1  a.sum 2  a.ck 3  a.op 4  done 5
  address 2
    step 0  az 1
  class OP opcode=0110011
    0: src.oe, a.sum, a.ck, a.op=add
    1: done
`);

const analysis = analyse(table);
const hoverAt = (needle: string, delta = 0) => hover(analysis, offsetOf(table, needle, delta))?.markdown;
const labelsAt = (marked: string) => {
  const { text, offset } = cursor(marked);
  return complete(analyse(text), offset).items.map((i) => i.label);
};

describe('a part of the table\'s own kind', () => {
  it('hover explains its kind, settings, inputs, ports and the values its field may take', () => {
    const part = hoverAt('part a ', 5)!;
    expect(part).toContain('- **kind** `acc` (of this table) — accumulator: loads or adds the bus at the closing edge');
    expect(part).toContain('- **settings** width=8; b from bus `left` (the operand bus); `op` from field `a.op`');
    expect(part).toContain("`sum`: output, drives a bus through an enable strobe: what it holds plus the operand bus (`q + b`)");
    expect(part).toContain("`take`: input, loads a bus at a clock strobe's closing edge: takes the bus (`q <= select op { load: in, add: q + in }`)");
    expect(part).toContain('`zero`: flag `az` (`q == 0`), an address input');
    // The value's meaning is the arm of the edge its control selects.
    expect(hoverAt('add=1', 1)).toContain('`a`: at `take`: `q <= q + in`');
    expect(hoverAt('strobe a.sum', 8)).toContain('- **effect** `a.sum` (what it holds plus the operand bus) drives bus `result` for the whole step; reading b from `left`');
    expect(hoverAt('bus left', 4)).toContain('- **read by** `a` (input `b`)');
  });

  it('completion offers its ports to strobes, its control values to fields and its inputs on the part line', () => {
    expect(labelsAt(table + 'strobe s enable $0')).toEqual(['src', 'a', 'a.sum']);
    expect(labelsAt(table + 'strobe s clock result -> $0')).toEqual(['src', 'a']);
    expect(labelsAt(table + 'field f 1 -> a { load=0 $0 }')).toEqual(['add']);
    expect(labelsAt(table + 'part c $0')).toContain('acc');
    expect(labelsAt(table + 'part c acc 8 $0')).toEqual(['left', 'result']);
    expect(labelsAt(table + 'part c acc 8 left $0')).toEqual(['->']);
  });

  it('the budget follows a path through its combinational port, and the bus it reads loads it', () => {
    // Hand-worked: 100 ns store access, src enable 20 ns, a.sum through its 40 ns adder from
    // bus left (read by input b), a.ck setup 5 ns = 165 ns; the enable of a (10 ns) is shorter.
    const budget = budgetOf(analysis.machine);
    const step0 = budget.paths.find((p) => p.step === 0)!;
    expect(step0.segments.map((s) => `${s.what} ${s.ns}`)).toEqual(['control store access 100', 'src.oe enable 20', 'a accumulator 40', 'a.ck setup 5']);
    expect(step0.totalNs).toBe(165);
    expect(budget.buses.find((r) => r.name === 'left')!.reaches).toContain('a');
  });

  it('holds a value the debugger and the bring-up board show, like a library register', () => {
    expect(heldValue(analysis.machine, analysis.machine.parts.get('a')!)).toEqual({ state: 'q', width: 8 });
    expect(heldValue(analysis.machine, analysis.machine.parts.get('src')!)).toEqual({ state: 'q', width: 8 });
  });
});

describe('debugger views read definitions', () => {
  it('the Parts scope shows a holding register of the table\'s own kind (gantry-32\'s `t`)', () => {
    const text = readFileSync(new URL('../../examples/gantry-32.pwt', import.meta.url), 'utf8');
    // addi x1, x0, 5 then ebreak (RISC-V Unprivileged ISA 20191213, 2.4 and 2.8), as a raw image.
    const words = [0x00500093, 0x00100073];
    const bytes = new Uint8Array(new Uint32Array(words).buffer);
    const prepared = prepareTable({ text, sourceName: 'gantry-32.pwt', program: bytes, loadAddress: 0 });
    if (!prepared.ok) throw new Error(prepared.reason);
    const dm = new DebugMachine(prepared.plan, prepared.program, { reference: false }, new StepLineIndex(prepared.plan, prepared.analysis.lines));
    const parts = new MachineViews(dm).parts().map((n) => n.name);
    expect(parts).toEqual(['pc', 'ir', 'mar', 't']);
  });
});

describe('register-file facts come from running the definition', () => {
  const demo = readFileSync(new URL('../../examples/halyard-32.pwt', import.meta.url), 'utf8');
  const file = (x0: string) => {
    const m = analyse(demo.replace('x0=hardwired', `x0=${x0}`)).machine;
    return { m, x: m.parts.get('x')! };
  };

  it('hardwired: reads 0 for x0 and no write reaches it; guarded: a register no rd write reaches; stored: both', () => {
    // RISC-V Unprivileged ISA 20191213, 2.1: x0 reads zero; rd is instruction bits 11..7 (2.2).
    const expected = { hardwired: [false, false], guarded: [true, false], stored: [true, true] } as const;
    for (const [x0, [stored, writable]] of Object.entries(expected)) {
      const { m, x } = file(x0);
      expect([elementZeroStored(m, x), elementZeroWritable(m, x)], x0).toEqual([stored, writable]);
      expect(registerArrayFacts(m, x)[0].writes.map((w) => w.indexBits)).toEqual([{ hi: 11, lo: 7 }]);
    }
  });

  it('a copy of the library register file under another name is a register file to the x0 check', () => {
    // The library's regfile definition, renamed: only its definition tells the check what it is.
    const regfile = /kind regfile [^\n]*\n(?: [^\n]*\n)+/.exec(standardLibraryText)![0].replace('kind regfile', 'kind bank');
    const text = dedent(`
      bus result 32
      part ir instruction 32
      part x bank 32 x0=stored
      part t register 32
      strobe t.oe   enable t -> result active low
      strobe x.rd.ck clock result -> x.rd
      strobe ir.ck  clock result -> ir
      strobe done   end
      word 8 as 1 x 8
        t.oe 0  x.rd.ck 1  ir.ck 2  done 3
      address 2
        step 0..1
      class OP opcode=0110011
        0: t.oe, ir.ck
        1: t.oe, x.rd.ck, done
    `).replace('part ir', regfile + 'part ir');
    const d = analyse(text).diagnostics.filter((x) => x.code === 'x0-stored-write');
    expect(d.map((x) => x.message)).toEqual([expect.stringContaining('`x` stores x0 (element 0 of `r`) in a real register and 1 step(s) write rd through `x.rd`')]);
    expect(d[0].message).toContain('declare `x0=hardwired` or `x0=guarded`');
    expect(analyse(text.replace('x0=stored', 'x0=guarded')).diagnostics.filter((x) => x.code === 'x0-stored-write')).toEqual([]);
  });
});
