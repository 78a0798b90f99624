// Generates large, valid control tables for the benchmarks: the Halyard-32 demo machine grown
// with extra buses, registers, fields, decode maps, shared phases and long classes full of
// guarded steps, behind a wide step counter. Classes are limited by the opcode space (32
// opcodes end in 11), so size comes from steps, phases and maps rather than from classes. The
// extra steps only move values between the extra registers, so the machine still runs RV32I
// programs (slowly). Output is deterministic: the same options give the same text. It is not a
// fuzzer; every table it writes analyses without errors or warnings.

export interface GenerateOptions {
  /** Approximate number of lines wanted; the result is within a few percent. */
  lines: number;
}

/** The 11 RV32I major opcodes, as the demo machine implements them (RISC-V Unprivileged ISA, ch. 24). */
const rv32iClasses: { name: string; opcode: string; steps: string[] }[] = [
  { name: 'LUI', opcode: '0110111', steps: ['imm.fmt=u, imm.oe, alu.fn=passb, alu.oe, x.rd.ck, pc.inc, done'] },
  { name: 'AUIPC', opcode: '0010111', steps: ['pc.oe, imm.fmt=u, imm.oe, alu.fn=add, alu.oe, x.rd.ck, pc.inc, done'] },
  { name: 'JAL', opcode: '1101111', steps: ['pc.oe, four.oe, alu.fn=add, alu.oe, x.rd.ck', 'pc.oe, imm.fmt=j, imm.oe, alu.fn=add, alu.oe, pc.ck, done'] },
  {
    name: 'JALR',
    opcode: '1100111',
    steps: ['x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, t.ck', 'pc.oe, four.oe, alu.fn=add, alu.oe, x.rd.ck', 't.oe, pc.ck, done'],
  },
  { name: 'BRANCH', opcode: '1100011', steps: ['x.rs1.oe, x.rs2.oe, cmp.ck', 'if taken: pc.oe, imm.fmt=b, imm.oe, alu.fn=add, alu.oe, pc.ck, done', 'else: pc.inc, done'] },
  { name: 'LOAD', opcode: '0000011', steps: ['x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=add, alu.oe, mar.ck', 'mem.size=load_size, mem.rd, x.rd.ck, pc.inc, done'] },
  { name: 'STORE', opcode: '0100011', steps: ['x.rs1.oe, imm.fmt=s, imm.oe, alu.fn=add, alu.oe, mar.ck', 'x.rs2.oe, mem.size=store_size, mem.wr, pc.inc, done'] },
  { name: 'OP-IMM', opcode: '0010011', steps: ['x.rs1.oe, imm.fmt=i, imm.oe, alu.fn=imm_fn, alu.oe, x.rd.ck, pc.inc, done'] },
  { name: 'OP', opcode: '0110011', steps: ['x.rs1.oe, x.rs2.oe, alu.fn=op_fn, alu.oe, x.rd.ck, pc.inc, done'] },
  { name: 'MISC-MEM', opcode: '0001111', steps: ['pc.inc, done'] },
  { name: 'SYSTEM', opcode: '1110011', steps: ['sys.trap, pc.inc, done'] },
];

const demoDeclarations = `bus left   32 keeper  "Left operand: register rs1 or the program counter."
bus right  32 keeper  "Right operand: register rs2, the immediate or the constant 4."
bus result 32         "Results: the ALU, memory data or the jump holding register."

part x    regfile 32 x0=hardwired  "Thirty-one register cards; x0 reads as zero."
part pc   counter 32 inc=4 bit0=zero "Program counter; bit 0 is always stored as 0."
part ir   instruction 32           "Instruction register."
part mar  register 32              "Memory address register."
part t    register 32              "Holds a jump target while the return address is written."
part imm  immediate from ir        "Immediate generator: I, S, B, U and J formats."
part alu  alu left right           "ALU: a from left, b from right."
part cmp  compare left right -> taken cond=funct3 "Branch comparator; the condition comes from funct3."
part mem  memory 32 addr=mar       "Memory port, addressed by the memory address register."
part four constant 32 value=4      "The constant 4, for return addresses."

strobe x.rs1.oe  enable x.rs1 -> left    active low  "Card selected by rs1 drives the left bus."
strobe x.rs2.oe  enable x.rs2 -> right   active low  "Card selected by rs2 drives the right bus."
strobe x.rd.ck   clock result -> x.rd    active high "Card selected by rd loads the result bus."
strobe pc.oe     enable pc -> left       active low  "Program counter drives the left bus."
strobe pc.ck     clock result -> pc      active high "Program counter loads the result bus."
strobe pc.inc    count pc                active high "Program counter adds 4."
strobe ir.ck     clock result -> ir      active high "Instruction register loads the fetched word."
strobe mar.ck    clock result -> mar     active high "Memory address register loads the result bus."
strobe t.ck      clock result -> t       active high "Holding register loads a jump target."
strobe t.oe      enable t -> result      active low  "Holding register drives the result bus."
strobe imm.oe    enable imm -> right     active low  "Immediate generator drives the right bus."
strobe four.oe   enable four -> right    active low  "Constant 4 drives the right bus."
strobe alu.oe    enable alu -> result    active low  "ALU drives the result bus."
strobe cmp.ck    clock cmp               active high "Comparator latches the taken flag."
strobe mem.rd    read mem -> result      active low  "Memory drives the result bus with the addressed data."
strobe mem.wr    write right -> mem      active low  "Memory stores the right bus at the closing edge."
strobe sys.trap  trap                    active high "Stops the clock and hands ecall or ebreak to the monitor."
strobe done      end                     active high "Last step: the step counter returns to 0."

field alu.fn   4 -> alu idle=passa { add=0 sll=1 slt=2 sltu=3 xor=4 srl=5 or=6 and=7 sub=8 sra=13 passa=14 passb=15 } "ALU function."
field imm.fmt  3 -> imm { i=0 s=1 b=2 u=3 j=4 } "Immediate format."
field mem.size 3 -> mem { byte=0 half=1 word=2 ubyte=4 uhalf=5 } "Memory access size; the codes follow funct3."
`;

const demoPlacements = [
  'x.rs1.oe 0',
  'x.rs2.oe 1',
  'x.rd.ck 2',
  'pc.oe 3',
  'pc.ck 4',
  'pc.inc 5',
  'ir.ck 6',
  'mar.ck 7',
  't.ck 8',
  't.oe 9',
  'imm.oe 10',
  'four.oe 11',
  'alu.oe 12',
  'cmp.ck 13',
  'mem.rd 14',
  'mem.wr 15',
  'alu.fn 16..19',
  'imm.fmt 20..22',
  'done 23',
  'mem.size 24..26',
  'sys.trap 27',
];

const demoMaps = `map op_fn (funct3, f7b5) -> alu.fn "ALU function of OP: funct7 bit 5 picks sub and sra."
  000 0 add   000 1 sub   001 0 sll   010 0 slt   011 0 sltu
  100 0 xor   101 0 srl   101 1 sra   110 0 or    111 0 and

map imm_fn (funct3, f7b5) -> alu.fn "ALU function of OP-IMM: bit 30 is an immediate bit except in shifts."
  000 - add   010 - slt   011 - sltu   100 - xor   110 - or   111 - and
  001 0 sll   101 0 srl   101 1 sra

map load_size (funct3) -> mem.size "Load size and sign from funct3."
  000 byte   001 half   010 word   100 ubyte   101 uhalf

map store_size (funct3) -> mem.size "Store size from funct3."
  000 byte   001 half   010 word
`;

/** A small deterministic pseudo-random sequence (a 32-bit linear congruential generator). */
class Sequence {
  private state: number;
  constructor(seed: number) {
    this.state = seed >>> 0;
  }
  next(limit: number): number {
    this.state = (Math.imul(this.state, 1664525) + 1013904223) >>> 0;
    return Math.floor((this.state / 2 ** 32) * limit);
  }
}

/** Every 7-bit opcode ending in 11 that RV32I does not use, for the extra (custom) classes. */
function customOpcodes(): string[] {
  const used = new Set(rv32iClasses.map((c) => c.opcode));
  const result: string[] = [];
  for (let high = 0; high < 32; high++) {
    const opcode = ((high << 2) | 3).toString(2).padStart(7, '0');
    if (!used.has(opcode)) result.push(opcode);
  }
  return result;
}

interface Shape {
  buses: number;
  registersPerBus: number;
  fields: number;
  mapsPerField: number;
  phases: number;
  phaseSteps: number;
  classes: number;
  stepBits: number;
}

function shapeFor(lines: number): Shape {
  const clamp = (v: number, lo: number, hi: number) => Math.max(lo, Math.min(hi, Math.round(v)));
  const buses = clamp(lines / 1500, 4, 16);
  // 256 word bits: 28 for the demo's signals, 2 per extra register, 4 per extra field.
  const registersPerBus = clamp(lines / 4000, 2, 5);
  const fields = clamp(lines / 2500, 2, 16);
  return {
    buses,
    registersPerBus,
    fields,
    mapsPerField: clamp(lines / 5000, 1, 8),
    phases: clamp(lines / 80, 4, 800),
    phaseSteps: 6,
    classes: clamp(lines / 400, 11, 32),
    stepBits: lines > 1200 ? 10 : 6,
  };
}

/** Writes a table of about `options.lines` lines. */
export function generateTable(options: GenerateOptions): string {
  const shape = shapeFor(options.lines);
  const rnd = new Sequence(0x5eed + options.lines);
  const out: string[] = [];
  const registers: { name: string; bus: string }[] = [];
  for (let r = 0; r < shape.buses * shape.registersPerBus; r++) registers.push({ name: `r${r}`, bus: `w${r % shape.buses}` });
  const byBus = new Map<string, string[]>();
  for (const reg of registers) byBus.set(reg.bus, [...(byBus.get(reg.bus) ?? []), reg.name]);
  const fieldNames = Array.from({ length: shape.fields }, (_, i) => `g${i}`);
  const mapNames = fieldNames.flatMap((f) => Array.from({ length: shape.mapsPerField }, (_, m) => ({ field: f, name: `${f}_m${m}` })));

  out.push(`# A generated control table of about ${options.lines} lines (bench/generate.ts): the Halyard-32`);
  out.push('# demo machine grown with extra registers, fields, maps, phases and long classes.');
  out.push(`machine "Generated-${options.lines}" isa rv32i`, '');
  out.push(demoDeclarations.trimEnd());
  out.push('');
  for (let b = 0; b < shape.buses; b++) out.push(`bus w${b} 32 "Extra bus ${b}."`);
  out.push('');
  for (const reg of registers) out.push(`part ${reg.name} register 32 "Scratch register on bus ${reg.bus}."`);
  out.push('');
  for (const reg of registers) {
    out.push(`strobe ${reg.name}.oe enable ${reg.name} -> ${reg.bus} active low "${reg.name} drives ${reg.bus}."`);
    out.push(`strobe ${reg.name}.ck clock ${reg.bus} -> ${reg.name} "${reg.name} loads ${reg.bus}."`);
  }
  out.push('');
  for (const f of fieldNames) {
    const values = Array.from({ length: 16 }, (_, v) => `v${v}=${v}`).join(' ');
    out.push(`field ${f} 4 { ${values} } "Extra field ${f}."`);
  }
  out.push('');

  // The word: the demo's 28 bits, then two bits per register and four per field (at most 256).
  const placements = [...demoPlacements];
  let bit = 28;
  for (const reg of registers) {
    placements.push(`${reg.name}.oe ${bit++}`, `${reg.name}.ck ${bit++}`);
  }
  for (const f of fieldNames) {
    placements.push(`${f} ${bit}..${bit + 3}`);
    bit += 4;
  }
  const wordBits = Math.ceil(bit / 8) * 8;
  const addressBits = shape.stepBits + 10;
  out.push(`word ${wordBits} as ${wordBits / 8} x 8 chip=${2 ** addressBits}x8 unused=0`);
  for (let i = 0; i < placements.length; i += 8) out.push('  ' + placements.slice(i, i + 8).join('   '));
  out.push('');
  const s = shape.stepBits;
  out.push(`address ${addressBits}`);
  out.push(`  step 0..${s - 1}   taken ${s}   f7b5 ${s + 1}   funct3 ${s + 2}..${s + 4}   opcode ${s + 5}..${s + 9}`);
  out.push('');
  out.push(demoMaps.trimEnd());
  out.push('');
  for (const map of mapNames) {
    const a = rnd.next(16);
    const b = (a + 1 + rnd.next(15)) % 16;
    out.push(`map ${map.name} (funct3, f7b5) -> ${map.field} "Extra map for ${map.field}."`);
    out.push(`  0-- - v${a}   1-- 0 v${b}   1-- 1 v${(b + 3) % 16}`);
  }
  out.push('');

  // Every register strobe, field and map must be used somewhere: hand them out in turn.
  let regTurn = 0;
  let mapTurn = 0;
  let fieldTurn = 0;
  const transfer = (bus: string): string => {
    const group = byBus.get(bus)!;
    const from = group[regTurn % group.length];
    const to = group[(regTurn + 1) % group.length];
    regTurn++;
    return `${from}.oe, ${to}.ck`;
  };
  const busList = [...byBus.keys()];
  const workActions = (): string => {
    const nTransfers = 1 + rnd.next(3);
    const first = rnd.next(busList.length);
    const actions: string[] = [];
    for (let i = 0; i < nTransfers; i++) actions.push(transfer(busList[(first + i) % busList.length]));
    const roll = rnd.next(3);
    if (roll === 0) {
      const map = mapNames[mapTurn++ % mapNames.length];
      actions.push(`${map.field}=${map.name}`);
    } else if (roll === 1) {
      actions.push(`${fieldNames[fieldTurn++ % fieldNames.length]}=v${rnd.next(16)}`);
    }
    return actions.join(', ');
  };
  const guards = ['if taken', 'if funct3=1--', 'if f7b5', 'if !taken'];
  /** Disjoint pairs of guards for three-way steps (the third line is the `else`). */
  const pairs = [
    ['if taken & f7b5', 'if taken & !f7b5'],
    ['if funct3=00-', 'if funct3=01-'],
    ['if !taken & funct3=1--', 'if taken & funct3=0--'],
  ];
  /** Lines of one step number: plain, guarded with an else, or two guards and an else. */
  const stepLines = (step: number, indent: string): string[] => {
    const roll = rnd.next(10);
    if (roll < 4) {
      const guard = guards[rnd.next(guards.length)];
      return [`${indent}${step} ${guard}: ${workActions()}`, `${indent}${step} else: ${workActions()}`];
    }
    if (roll < 7) {
      const [a, b] = pairs[rnd.next(pairs.length)];
      return [`${indent}${step} ${a}: ${workActions()}`, `${indent}${step} ${b}: ${workActions()}`, `${indent}${step} else: ${workActions()}`];
    }
    return [`${indent}${step}: ${workActions()}`];
  };

  out.push('phase fetch "Fetch the instruction at pc into ir."');
  out.push('  0: pc.oe, alu.fn=passa, alu.oe, mar.ck');
  out.push('  1: mem.size=word, mem.rd, ir.ck');
  out.push('');
  const phaseNames = Array.from({ length: shape.phases }, (_, p) => `work${p}`);
  for (const phase of phaseNames) {
    out.push(`phase ${phase} "Shuffles scratch registers."`);
    for (let step = 0; step < shape.phaseSteps; step++) out.push(...stepLines(step, '  '));
    out.push('');
  }

  const classes = [
    ...rv32iClasses,
    ...customOpcodes()
      .slice(0, Math.max(0, shape.classes - rv32iClasses.length))
      .map((opcode, i) => ({ name: `EXT-${String.fromCharCode(97 + i)}`, opcode, steps: ['pc.inc, done'] })),
  ];
  const maxSteps = 2 ** shape.stepBits;
  const headerLines = out.length;
  const budget = Math.max(0, options.lines - headerLines - classes.length * 4);
  const perClass = Math.floor(budget / classes.length);
  let phaseTurn = 0;
  classes.forEach((cls, index) => {
    out.push(`class ${cls.name} opcode=${cls.opcode} "Generated class ${index}."`);
    out.push('  use fetch');
    let step = 2;
    let written = 0;
    // Every phase is used at least once; the first classes take the phases still unused.
    const phasesLeft = phaseNames.length - phaseTurn;
    const classesLeft = classes.length - index;
    const mustUse = Math.ceil(phasesLeft / classesLeft);
    const finalSteps = cls.steps.filter((l) => !l.startsWith('else')).length;
    let used = 0;
    const room = () => maxSteps - finalSteps - step;
    while ((written < perClass || used < mustUse) && room() > 0) {
      if ((used < mustUse || rnd.next(10) === 0) && room() >= shape.phaseSteps) {
        out.push(`  use ${phaseNames[phaseTurn++ % phaseNames.length]}`);
        step += shape.phaseSteps;
        used++;
        written++;
        continue;
      }
      const lines = stepLines(step, '  ');
      out.push(...lines);
      written += lines.length;
      step++;
    }
    for (const line of cls.steps) {
      if (line.startsWith('else')) out.push(`  ${step - 1} ${line}`);
      else if (line.startsWith('if')) out.push(`  ${step++} ${line}`);
      else out.push(`  ${step++}: ${line}`);
    }
    out.push('');
  });
  return out.join('\n');
}
