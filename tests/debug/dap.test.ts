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
    expect(bp.verified).toBe(true);
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
});
