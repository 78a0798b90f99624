// Unit checks of the reference interpreter's behaviour at the points where the RISC-V
// Unprivileged ISA (20191213, ch. 2) is specific: x0, misaligned jump targets, illegal words,
// EBREAK/ECALL, and the reporting contract (step results, run budgets) the lock-step simulator
// relies on. Whole-program agreement with qemu-riscv32 is in tests/outside/programs-qemu.test.ts.
import { describe, expect, it } from 'vitest';
import { encodeInstruction, type EncodeOperands } from '../../server/src/core/isa/rv32i';
import { LinuxUserEnvironment } from '../../server/src/core/isa/environment';
import { Rv32iReference, SparseMemory, describeStop, type Memory } from '../../server/src/core/isa/interp';

const BASE = 0x1000;

type Line = [mnemonic: string, operands?: EncodeOperands];

/** A machine with `program` at BASE and pc there. */
function machineWith(program: Line[], environment?: LinuxUserEnvironment): Rv32iReference {
  const memory = new SparseMemory();
  program.forEach(([mnemonic, operands], index) => {
    const encoded = encodeInstruction(mnemonic, operands ?? {});
    if (!encoded.ok) throw new Error(encoded.error);
    memory.store32(BASE + 4 * index, encoded.word);
  });
  const machine = new Rv32iReference(memory, environment);
  machine.pc = BASE;
  return machine;
}

describe('registers', () => {
  // Spec 2.1: "Register x0 is hardwired with all bits equal to 0."
  it('writes to x0 are discarded, writes to x1 are not', () => {
    const machine = machineWith([
      ['addi', { rd: 0, rs1: 0, imm: 5 }],
      ['lui', { rd: 0, imm: 0x12345000 }],
      ['addi', { rd: 1, rs1: 0, imm: 5 }],
      ['add', { rd: 2, rs1: 0, rs2: 1 }],
    ]);
    machine.run(4);
    expect(machine.readRegister(0)).toBe(0);
    expect(machine.readRegister(1)).toBe(5);
    expect(machine.readRegister(2)).toBe(5);
    machine.writeRegister(0, 99);
    expect(machine.readRegister(0)).toBe(0);
  });

  // Spec 2.5: JALR computes the target from the old rs1 before writing rd, so rd = rs1 works.
  it('jalr with rd = rs1 jumps to the old value and links', () => {
    const machine = machineWith([['jalr', { rd: 5, rs1: 5, imm: 0x10 }]]);
    machine.x[5] = BASE;
    machine.step();
    expect(machine.pc).toBe(BASE + 0x10);
    expect(machine.x[5]).toBe(BASE + 4);
  });

  // Spec 2.5: JALR sets the least-significant bit of the target to zero.
  it('jalr clears bit 0 of an odd target', () => {
    const machine = machineWith([['jalr', { rd: 1, rs1: 2, imm: 1 }]]);
    machine.x[2] = BASE + 0x20;
    const result = machine.step();
    expect(result.retired).toBe(true);
    expect(machine.pc).toBe(BASE + 0x20);
  });
});

describe('step() results', () => {
  it('reports the store with its size and masked value; loads report nothing', () => {
    const machine = machineWith([
      ['sw', { rs1: 1, rs2: 2, imm: -4 }],
      ['sb', { rs1: 1, rs2: 2, imm: 1 }],
      ['sh', { rs1: 1, rs2: 2, imm: 3 }],
      ['lw', { rd: 3, rs1: 1, imm: -4 }],
    ]);
    machine.x[1] = 0x8000;
    machine.x[2] = 0xdeadbeef | 0;
    expect(machine.step()).toEqual({ pc: BASE, word: 0xfe20ae23, retired: true, nextPc: BASE + 4, memoryWrites: [{ address: 0x7ffc, size: 4, value: 0xdeadbeef }], stop: null });
    expect(machine.step().memoryWrites).toEqual([{ address: 0x8001, size: 1, value: 0xef }]);
    expect(machine.step().memoryWrites).toEqual([{ address: 0x8003, size: 2, value: 0xbeef }]);
    const load = machine.step();
    expect(load.memoryWrites).toEqual([]);
    expect(machine.x[3]).toBe(0xdeadbeef | 0);
  });

  // Spec 2.2: a taken branch or jump to a target that is not four-byte aligned raises the
  // exception on the branch itself (IALIGN = 32 without C), so it must not retire.
  it('a taken branch to a 2-byte aligned target stops without retiring; a not-taken one continues', () => {
    const taken = machineWith([['beq', { rs1: 0, rs2: 0, imm: 6 }]]);
    const result = taken.step();
    expect(result.retired).toBe(false);
    expect(result.stop).toEqual({ kind: 'misaligned-target', pc: BASE, target: BASE + 6 });
    expect(taken.pc).toBe(BASE);
    const notTaken = machineWith([['bne', { rs1: 0, rs2: 0, imm: 6 }]]);
    expect(notTaken.step()).toMatchObject({ retired: true, stop: null, nextPc: BASE + 4 });
  });

  it('jal and jalr to a target with bit 1 set stop without writing the link register', () => {
    const jal = machineWith([['jal', { rd: 1, imm: 2 }]]);
    expect(jal.step().stop?.kind).toBe('misaligned-target');
    expect(jal.x[1]).toBe(0);
    const jalr = machineWith([['jalr', { rd: 1, rs1: 2, imm: 2 }]]);
    jalr.x[2] = BASE;
    expect(jalr.step().stop).toEqual({ kind: 'misaligned-target', pc: BASE, target: BASE + 2 });
    expect(jalr.x[1]).toBe(0);
  });

  it('an illegal word stops the machine at its address; later steps do nothing', () => {
    const machine = machineWith([['addi', { rd: 1, rs1: 0, imm: 1 }]]);
    machine.memory.store32(BASE + 4, 0x023100b3); // mul x1,x2,x3: M extension
    expect(machine.step().retired).toBe(true);
    const stopped = machine.step();
    expect(stopped).toMatchObject({ retired: false, pc: BASE + 4, stop: { kind: 'illegal-instruction', pc: BASE + 4, word: 0x023100b3 } });
    expect(describeStop(stopped.stop!)).toBe('illegal instruction 0x023100b3 at 0x00001004 (not an RV32I instruction)');
    expect(machine.step()).toMatchObject({ retired: false, stop: stopped.stop });
    expect(machine.instructionsRetired).toBe(1);
  });

  it('ebreak stops without retiring', () => {
    const machine = machineWith([['ebreak']]);
    expect(machine.step()).toMatchObject({ retired: false, nextPc: BASE, stop: { kind: 'ebreak', pc: BASE } });
  });

  it('a start pc that is not a multiple of 4 stops before fetching', () => {
    const machine = machineWith([['addi']]);
    machine.pc = BASE + 2;
    expect(machine.run(10)).toEqual({ instructionsExecuted: 0, stop: { kind: 'misaligned-target', pc: BASE + 2, target: BASE + 2 } });
  });
});

describe('ecall environment', () => {
  // Linux RISC-V convention: a7 = 64 write(a0 fd, a1 buf, a2 count), a7 = 93 exit(a0).
  it('write appends to stdout and returns the count; exit keeps the low 8 bits and retires', () => {
    const machine = machineWith([
      ['addi', { rd: 17, imm: 64 }],
      ['addi', { rd: 10, imm: 1 }],
      ['addi', { rd: 11, imm: 0x100 }],
      ['addi', { rd: 12, imm: 3 }],
      ['ecall'],
      ['lui', { rd: 10, imm: 0x12000 }],
      ['addi', { rd: 10, rs1: 10, imm: 0x345 }],
      ['addi', { rd: 17, imm: 93 }],
      ['ecall'],
    ]);
    machine.memory.writeBytes(0x100, new Uint8Array([0x68, 0x69, 0x0a]));
    const result = machine.run(100);
    expect(result).toEqual({ instructionsExecuted: 9, stop: { kind: 'exit', exitCode: 0x45, status: 0x12345 } });
    expect(machine.environment.stdoutText()).toBe('hi\n');
    expect(machine.x[10]).toBe(0x12345);
    expect(machine.run(100)).toEqual({ instructionsExecuted: 0, stop: result.stop });
  });

  it('write to a descriptor that is not open returns -EBADF (-9)', () => {
    const machine = machineWith([['addi', { rd: 17, imm: 64 }], ['addi', { rd: 10, imm: 7 }], ['ecall']]);
    machine.run(3);
    expect(machine.x[10]).toBe(-9);
    expect(machine.stopReason).toBeNull();
  });

  it('an unknown system call stops the machine with its number, without retiring', () => {
    const machine = machineWith([['addi', { rd: 17, imm: 214 }], ['ecall']]);
    expect(machine.run(5)).toEqual({ instructionsExecuted: 1, stop: { kind: 'unsupported-syscall', pc: BASE + 4, syscallNumber: 214 } });
  });

  it('output beyond the limit stops the machine instead of growing without bound', () => {
    const program: Line[] = [['addi', { rd: 17, imm: 64 }], ['addi', { rd: 10, imm: 1 }], ['addi', { rd: 12, imm: 8 }], ['ecall'], ['jal', { imm: -12 }]]; // loops back to a0 = 1
    const machine = machineWith(program, new LinuxUserEnvironment({ outputLimitBytes: 20 }));
    const result = machine.run(1000);
    expect(result.stop).toEqual({ kind: 'output-limit', pc: BASE + 12, outputLimitBytes: 20 });
    expect(machine.environment.stdout().length).toBe(16);
    const unlimited = machineWith(program.slice(0, 4));
    expect(unlimited.run(4).stop).toBeNull();
  });
});

describe('run()', () => {
  it('stops after the budget with stop = null and continues where it left off', () => {
    // A loop counting x1 up forever: addi x1,x1,1 ; jal x0,-4
    const machine = machineWith([['addi', { rd: 1, rs1: 1, imm: 1 }], ['jal', { rd: 0, imm: -4 }]]);
    expect(machine.run(1001)).toEqual({ instructionsExecuted: 1001, stop: null });
    expect(machine.x[1]).toBe(501);
    expect(machine.pc).toBe(BASE + 4);
    machine.run(1);
    expect(machine.pc).toBe(BASE);
    expect(machine.instructionsRetired).toBe(1002);
  });
});

describe('instruction fetch', () => {
  // Without FENCE.I (Zifencei) the spec does not promise that stores become visible to fetch, but
  // qemu user mode and a simple bus machine both see them at once, and so must we: the fast fetch
  // path reads the live page, not a copy.
  it('executes an instruction stored just ahead of the pc (self-modifying code)', () => {
    const addi = encodeInstruction('addi', { rd: 6, rs1: 0, imm: 42 });
    if (!addi.ok) throw new Error(addi.error);
    const machine = machineWith([
      ['sw', { rs1: 1, rs2: 2, imm: 4 }], // overwrites the next instruction
      ['addi', { rd: 6, rs1: 0, imm: 1 }],
    ]);
    machine.x[1] = BASE;
    machine.x[2] = addi.word;
    machine.run(2);
    expect(machine.x[6]).toBe(42);
  });

  it('any Memory implementation works, not only SparseMemory', () => {
    const backing = new SparseMemory();
    const fetches: number[] = [];
    const logging: Memory = {
      load8: (a) => backing.load8(a),
      load16: (a) => backing.load16(a),
      load32: (a) => {
        fetches.push(a);
        return backing.load32(a);
      },
      store8: (a, v) => backing.store8(a, v),
      store16: (a, v) => backing.store16(a, v),
      store32: (a, v) => backing.store32(a, v),
      readBytes: (a, n) => backing.readBytes(a, n),
      writeBytes: (a, b) => backing.writeBytes(a, b),
    };
    const words = [encodeInstruction('addi', { rd: 1, imm: 7 }), encodeInstruction('slli', { rd: 1, rs1: 1, imm: 4 })];
    words.forEach((w, i) => w.ok && backing.store32(BASE + 4 * i, w.word));
    const machine = new Rv32iReference(logging);
    machine.pc = BASE;
    expect(machine.run(2)).toEqual({ instructionsExecuted: 2, stop: null });
    expect(machine.x[1]).toBe(7 << 4);
    expect(fetches).toEqual([BASE, BASE + 4]);
  });
});
