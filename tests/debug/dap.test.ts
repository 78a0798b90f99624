// The debug adapter driven over stdio by a Debug Adapter Protocol client
// (@vscode/debugadapter-testsupport's DebugClient), on the demo table and
// tests/programs/debugdemo.S, built with Debian's RISC-V cross compiler.
// Expected values come from outside the project:
//   - register values by the RV32I spec (Unprivileged ISA, chapter 2): ADDI adds the
//     sign-extended immediate and ADD adds registers (2.4), JAL writes pc + 4 to rd (2.5);
//   - instruction words and addresses from GNU objdump of the same ELF (binutils), as written in
//     the program's comments: 0x10038 add3 `add x10,x10,x11` = 0x00b50533, `ret` at 0x10040;
//   - the exit code 15 and the output "ok\n" also as qemu-riscv32 gives them (checked below when
//     qemu is installed).
// Cycle counts follow the demo table (fetch is steps 0 and 1; ADDI runs step 2; JAL steps 2, 3).
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DebugClient } from '@vscode/debugadapter-testsupport';
import type { DebugProtocol } from '@vscode/debugprotocol';
import { afterEach, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { haveTools } from '../support/tools';
import { buildPrograms } from '../programs/build.mjs';

const REPO = join(__dirname, '..', '..');
const DEBUG_JS = join(REPO, 'dist', 'debug.js');
const DEMO = join(REPO, 'examples', 'halyard-32.pwt');
const DEMO_TEXT = readFileSync(DEMO, 'utf8');
const haveGcc = haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf');

/** The 1-based line of the demo whose text (trimmed) starts with `prefix`, after the line starting with `after`. */
function demoLine(prefix: string, after?: string): number {
  const lines = DEMO_TEXT.split('\n');
  const from = after ? lines.findIndex((l) => l.trimStart().startsWith(after)) : 0;
  const index = lines.findIndex((l, i) => i >= from && l.trimStart().startsWith(prefix));
  if (index < 0) throw new Error(`no line ${prefix}`);
  return index + 1;
}

describe.skipIf(!haveGcc)('the debug adapter over stdio', () => {
  let elf = '';
  let dc: DebugClient;
  beforeAll(() => {
    execFileSync(process.execPath, [join(REPO, 'scripts/build.mjs')], { cwd: REPO });
    elf = buildPrograms({ names: ['debugdemo'] })[0].elfPath;
  }, 120_000);
  beforeEach(async () => {
    dc = new DebugClient(process.execPath, DEBUG_JS, 'phasewright');
    await dc.start();
  });
  afterEach(async () => {
    await dc.stop();
  });

  /** Starts a session stopped on entry, with breakpoints set in the configuration phase. */
  async function startSession(options: { table?: string; lockStep?: boolean; lines?: { line: number; condition?: string }[]; functions?: string[]; instructions?: string[] } = {}) {
    await dc.initializeRequest({ adapterID: 'phasewright', linesStartAt1: true, columnsStartAt1: true, pathFormat: 'path' });
    const initialized = dc.waitForEvent('initialized');
    await dc.launchRequest({ table: options.table ?? DEMO, program: elf, lockStep: options.lockStep ?? true } as DebugProtocol.LaunchRequestArguments);
    await initialized;
    const results: DebugProtocol.Breakpoint[] = [];
    if (options.lines) results.push(...(await dc.setBreakpointsRequest({ source: { path: options.table ?? DEMO }, breakpoints: options.lines })).body.breakpoints);
    if (options.functions) results.push(...(await dc.setFunctionBreakpointsRequest({ breakpoints: options.functions.map((name) => ({ name })) })).body.breakpoints);
    if (options.instructions) await dc.customRequest('setInstructionBreakpoints', { breakpoints: options.instructions.map((instructionReference) => ({ instructionReference })) });
    const stopped = dc.waitForEvent('stopped');
    await dc.configurationDoneRequest();
    expect((await stopped).body.reason).toBe('entry');
    return results;
  }

  /** Sends a request and waits for the stop it causes. */
  async function stopAfter(request: () => Promise<unknown>): Promise<DebugProtocol.StoppedEvent> {
    const stopped = dc.waitForEvent('stopped');
    await request();
    return (await stopped) as DebugProtocol.StoppedEvent;
  }

  async function frames() {
    return (await dc.stackTraceRequest({ threadId: 1 })).body.stackFrames;
  }

  /** Every scope's variables by name. */
  async function variables(): Promise<Record<string, Record<string, string>>> {
    const scopes = (await dc.scopesRequest({ frameId: 1 })).body.scopes;
    const out: Record<string, Record<string, string>> = {};
    for (const scope of scopes) {
      out[scope.name] = {};
      for (const v of (await dc.variablesRequest({ variablesReference: scope.variablesReference })).body.variables) out[scope.name][v.name] = v.value;
    }
    return out;
  }

  async function children(scopeName: string, name: string): Promise<Record<string, string>> {
    const scope = (await dc.scopesRequest({ frameId: 1 })).body.scopes.find((s) => s.name === scopeName)!;
    const v = (await dc.variablesRequest({ variablesReference: scope.variablesReference })).body.variables.find((x) => x.name === name)!;
    const out: Record<string, string> = {};
    for (const c of (await dc.variablesRequest({ variablesReference: v.variablesReference })).body.variables) out[c.name] = c.value;
    return out;
  }

  it('stops on a table step line, shows the step, the registers, the buses and the control word', async () => {
    const opStep2 = demoLine('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn');
    const [bp] = await startSession({ lines: [{ line: opStep2 }] });
    // The ten OP instructions of RV32I (spec 2.4: ADD SUB SLL SLT SLTU XOR SRL SRA OR AND), each with the taken flag 0 or 1.
    expect(bp).toMatchObject({ verified: true, message: 'class OP step 2: 20 addresses in the store' });
    const event = await stopAfter(() => dc.continueRequest({ threadId: 1 }));
    expect(event.body.reason).toBe('breakpoint');
    const [step, instruction] = await frames();
    expect(step.line).toBe(opStep2);
    expect(step.source?.path).toBe(DEMO);
    expect(step.name).toBe('step 2: class OP step 2');
    expect(instruction.name).toBe('0x00010038 <add3>: add x10,x10,x11');
    const v = await variables();
    expect(v.Registers['x10 (a0)']).toBe('0x00000005 (5)');
    expect(v.Registers['x11 (a1)']).toBe('0x00000007 (7)');
    expect(v.Registers['x1 (ra)']).toBe('0x0001000c (65548)'); // JAL at 0x10008: ra = pc + 4
    expect(v.Registers.pc).toBe('0x00010038'); // the demo counts pc up at the closing edge of this step (pc.inc)
    expect(v.Buses.left).toBe('0x00000005  driven by x.rs1.oe (x)');
    expect(v.Buses.right).toBe('0x00000007  driven by x.rs2.oe (x)');
    expect(v.Buses.result).toBe('0x0000000c  driven by alu.oe (alu)');
    expect(v['Control word'].strobes).toBe('x.rs1.oe x.rs2.oe x.rd.ck pc.inc alu.oe done');
    expect(v['Control word']['alu.fn']).toBe('add (0)');
    const ir = await children('Step', 'ir');
    expect(ir).toMatchObject({ disassembly: 'add x10,x10,x11', opcode: '0b0110011', rd: 'x10', rs1: 'x10', rs2: 'x11', funct3: '0b000', funct7: '0b0000000', format: 'R', class: 'OP' });
  });

  it('stops on a function by name and steps out of it to the instruction after the call', async () => {
    const [bp] = await startSession({ functions: ['add3'] });
    expect(bp).toMatchObject({ verified: true, instructionReference: '0x00010038' });
    await stopAfter(() => dc.continueRequest({ threadId: 1 }));
    let [step, instruction] = await frames();
    expect(step.name).toBe('step 0: phase fetch step 0 (used by class JAL)');
    expect(instruction.name).toBe('0x00010038 <add3>: add x10,x10,x11');
    await stopAfter(() => dc.stepOutRequest({ threadId: 1 }));
    [step, instruction] = await frames();
    expect(instruction.name).toBe('0x0001000c <_start+0xc>: addi x8,x10,0');
    const v = await variables();
    expect(v.Registers['x10 (a0)']).toBe('0x0000000f (15)'); // 5 + 7 + 3
    expect(v.Step['instructions retired']).toBe('6');
  });

  it('steps by microcycle (step in) and by instruction (next), and back by one of each', async () => {
    await startSession();
    const cycle = async () => (await variables()).Step.cycle.split(' ')[0];
    await stopAfter(() => dc.stepInRequest({ threadId: 1 }));
    expect(await cycle()).toBe('1');
    // At reset the instruction register holds 0, whose opcode bits select LOAD's row of the store.
    expect((await frames())[0].name).toBe('step 1: phase fetch step 1 (used by class LOAD)');
    await stopAfter(() => dc.nextRequest({ threadId: 1 }));
    // addi x10,x0,5 runs steps 0..2: the next instruction starts at cycle 3.
    let v = await variables();
    expect(v.Step.cycle).toBe('3  (steps run since reset)');
    expect(v.Registers['x10 (a0)']).toBe('0x00000005 (5)');
    await stopAfter(() => dc.nextRequest({ threadId: 1 }));
    expect((await variables()).Registers['x11 (a1)']).toBe('0x00000007 (7)');
    // One microcycle back: before the closing edge of step 2 of addi x11, which loads x11.
    await stopAfter(() => dc.stepBackRequest({ threadId: 1 }));
    v = await variables();
    expect(v.Step.cycle).toBe('5  (steps run since reset)');
    expect(v.Step.step).toBe('2  class OP-IMM step 2');
    expect(v.Registers['x11 (a1)']).toBe('0x00000000 (0)');
    expect(v.Buses.result).toBe('0x00000007  driven by alu.oe (alu)');
    // One instruction back: the start of addi x11 (cycle 3), then of addi x10 (cycle 0).
    await stopAfter(() => dc.stepBackRequest({ threadId: 1, granularity: 'instruction' }));
    expect(await cycle()).toBe('3');
    await stopAfter(() => dc.stepBackRequest({ threadId: 1, granularity: 'instruction' }));
    expect(await cycle()).toBe('0');
    expect((await variables()).Registers['x10 (a0)']).toBe('0x00000000 (0)');
    // And forward again to the same state.
    await stopAfter(() => dc.nextRequest({ threadId: 1 }));
    await stopAfter(() => dc.nextRequest({ threadId: 1 }));
    v = await variables();
    expect(v.Step.cycle).toBe('6  (steps run since reset)');
    expect(v.Registers['x11 (a1)']).toBe('0x00000007 (7)');
  });

  it('goes back one microcycle at a time to reset, and says when the history ends', async () => {
    await startSession();
    let event = await stopAfter(() => dc.customRequest('setInstructionBreakpoints', { breakpoints: [{ instructionReference: '0x00010034' }] }).then(() => dc.continueRequest({ threadId: 1 })));
    expect(event.body.reason).toBe('breakpoint');
    const at = Number((await variables()).Step.cycle.split(' ')[0]);
    for (let i = 0; i < at; i++) await stopAfter(() => dc.stepBackRequest({ threadId: 1 }));
    expect((await variables()).Step.cycle).toBe('0  (steps run since reset)');
    event = await stopAfter(() => dc.stepBackRequest({ threadId: 1 }));
    expect(event.body.description).toBe('oldest step in the history');
  });

  it('conditional breakpoints: a register value, an instruction count', async () => {
    const [conditional] = await startSession({ lines: [{ line: demoLine('class OP-IMM'), condition: 'a0 == 15' }] });
    expect(conditional.verified).toBe(true);
    await stopAfter(() => dc.continueRequest({ threadId: 1 }));
    // a0 becomes 15 at the closing edge of addi x10,x10,3; the next step is the fetch of `ret`,
    // which still runs under OP-IMM's row (the instruction register loads at the end of fetch).
    const [fetch, ret] = await frames();
    expect(ret.name).toBe('0x00010040 <add3+0x8>: jalr x0,0(x1)');
    expect(fetch.name).toBe('step 0: phase fetch step 0 (used by class OP-IMM)');
    const bad = await dc.setBreakpointsRequest({ source: { path: DEMO }, breakpoints: [{ line: demoLine('class OP-IMM'), condition: 'q7 == 1' }, { line: demoLine('class OP-IMM'), condition: 'instructions == 4' }] });
    expect(bad.body.breakpoints[0]).toMatchObject({ verified: false, message: 'condition: no register, bus, part or flag is named `q7`' });
    expect(bad.body.breakpoints[1].verified).toBe(true);
    expect((await stopAfter(() => dc.restartRequest({}))).body.reason).toBe('entry');
    await stopAfter(() => dc.continueRequest({ threadId: 1 }));
    // Four retired (addi, addi, jal, add): the fifth, addi x10,x10,3, is the first OP-IMM word with the count at 4.
    const [step, instruction] = await frames();
    expect(instruction.name).toBe('0x0001003c <add3+0x4>: addi x10,x10,3');
    expect(step.name).toBe('step 2: class OP-IMM step 2');
  });

  it('memory around sp, changing a register, the program output in the console and the exit', async () => {
    await startSession({ instructions: ['0x00010028'] });
    await stopAfter(() => dc.continueRequest({ threadId: 1 }));
    const memory = await variables();
    expect(memory.Memory.around).toBe('0x7fff0000');
    expect(memory.Memory['0x7ffefffc']).toBe('0x0000000f'); // sw x8,-4(x2) stored s0 = 15
    // write(1, "ok\n", a2): a2 = 2 writes "ok" only.
    const scope = (await dc.scopesRequest({ frameId: 1 })).body.scopes.find((s) => s.name === 'Registers')!;
    const set = await dc.setVariableRequest({ variablesReference: scope.variablesReference, name: 'x12 (a2)', value: '2' });
    expect(set.body.value).toBe('0x00000002');
    const refused = await dc.setVariableRequest({ variablesReference: scope.variablesReference, name: 'x0 (zero)', value: '1' }).catch((e: Error) => e.message);
    expect(refused).toContain('cannot be changed');
    const output = dc.assertOutput('stdout', 'ok');
    const exited = dc.waitForEvent('exited');
    await dc.continueRequest({ threadId: 1 });
    await output;
    expect((await exited).body.exitCode).toBe(15);
  });

  it('a faulty table stops at the divergence, naming the register expected and obtained', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pw-dap-'));
    const faulty = join(dir, 'faulty.pwt');
    // OP's funct3=000 funct7b5=0 row computes `or` instead of `add`.
    writeFileSync(faulty, DEMO_TEXT.replace('000 0 add   000 1 sub', '000 0 or    000 1 sub'));
    await startSession({ table: faulty });
    const event = await stopAfter(() => dc.continueRequest({ threadId: 1 }));
    expect(event.body.reason).toBe('exception');
    const info = await dc.exceptionInfoRequest({ threadId: 1 });
    // 5 + 7 = 12 by ADD (spec 2.4); the table's OR gives 5 | 7 = 7.
    expect(info.body.description).toBe('x10: expected 0x0000000c (reference), got 0x00000007 (table)');
    const [step] = await frames();
    expect(step.line).toBe(demoLine('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn'));
    expect(step.source?.path).toBe(faulty);
    const back = await dc.stepBackRequest({ threadId: 1 }).catch((e: Error) => e.message);
    expect(back).toContain('restart to run again');
  });

  it('disassembles the program around the pc', async () => {
    await startSession();
    const result = await dc.disassembleRequest({ memoryReference: '0x00010038', instructionCount: 3 });
    expect(result.body!.instructions.map((i) => `${i.address} ${i.instructionBytes} ${i.instruction}${i.symbol ? ` <${i.symbol}>` : ''}`)).toEqual([
      '0x00010038 00b50533 add x10,x10,x11 <add3>',
      '0x0001003c 00350513 addi x10,x10,3',
      '0x00010040 00008067 jalr x0,0(x1)',
    ]);
  });

  it.skipIf(!haveTools(['qemu-riscv32'], 'qemu-user'))('the program exits with the code and output qemu-riscv32 gives', () => {
    const qemu = spawnSync('qemu-riscv32', [elf], { encoding: 'utf8' });
    expect(qemu.status).toBe(15);
    expect(qemu.stdout).toBe('ok\n');
  });
});
