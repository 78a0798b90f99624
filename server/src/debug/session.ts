// The Debug Adapter Protocol adapter: a session over one DebugMachine (core/debug/machine.ts),
// started by a `phasewright` launch configuration { table, program, lockStep, stopOnEntry,
// loadAddress, force }. One thread, "machine"; two stack frames: the step about to run (its
// table line, which the editor highlights) and the program's instruction (its pc, for the
// disassembly view). Scopes and variables come from core/debug/views.ts; registers and memory
// can be changed. Stepping: step in = one microcycle, next = one instruction, step out = to the
// return from the program's function, step back = one microcycle back (one instruction back
// with the `instruction` granularity), reverse continue = back to the last breakpoint in the
// history. A divergence, fault or illegal instruction stops the session as an exception.
//
// The adapter reads the table and the program itself (it is an adapter: it may touch files);
// everything it shows is computed in the core.
//
// Deliberately not here: what is shown (views.ts), how the machine moves (machine.ts), the
// editor's side (client/src/debugAdapter.ts).
import { basename, resolve } from 'node:path';
import { DebugSession, ExitedEvent, InitializedEvent, InvalidatedEvent, OutputEvent, StoppedEvent, TerminatedEvent, Thread } from '@vscode/debugadapter';
import type { DebugProtocol } from '@vscode/debugprotocol';
import { DebugMachine, type StopEvent } from '../core/debug/machine';
import { bringUpRows, type BringUpRequest } from '../core/debug/bringUp';
import { StepLineIndex } from '../core/debug/stepLines';
import { MachineViews, hex, type ViewNode } from '../core/debug/views';
import { disassemble } from '../core/isa/disasm';
import { parseNumber } from '../core/model/numbers';
import { prepareTable, type PreparedTable } from '../core/sim/session';
import { inputLimits, readInputFile } from '../cli/inputFile';
import { readSource } from '../cli/readSource';

export interface LaunchArguments extends DebugProtocol.LaunchRequestArguments {
  /** The .pwt table. */
  table: string;
  /** The RV32I program: an ELF file, or a raw image with loadAddress. */
  program: string;
  /** Compare every instruction with the RV32I reference (default true). */
  lockStep?: boolean;
  /** Stop before the first step (default true). */
  stopOnEntry?: boolean;
  loadAddress?: number | string;
  /** Debug a table with errors anyway. */
  force?: boolean;
  /** Folder relative paths are taken from (default: the adapter's working folder). */
  cwd?: string;
}

const THREAD = 1;
const FRAME_STEP = 1;
const FRAME_INSTRUCTION = 2;
/** Steps per chunk of a resumption; between chunks the adapter answers requests (pause). */
const CHUNK_STEPS = 1_000_000;

type Ready = Extract<PreparedTable, { ok: true }>;

export class PhasewrightDebugSession extends DebugSession {
  private launch: { args: LaunchArguments; tablePath: string; prepared: Ready } | null = null;
  private machine: DebugMachine | null = null;
  private views: MachineViews | null = null;
  private stepBreakpointRequests: { line: number; condition?: string }[] = [];
  private functionBreakpointRequests: { target: string; condition?: string }[] = [];
  private instructionBreakpointRequests: { target: string; condition?: string }[] = [];
  private references = new Map<number, ViewNode[]>();
  private nextReference = 1;
  private memoryAddress: number | null = null;
  private pauseRequested = false;
  private running = false;
  private sent = { out: 0, err: 0 };
  private decoders = { out: new TextDecoder(), err: new TextDecoder() };

  constructor() {
    super();
    this.setDebuggerLinesStartAt1(false);
    this.setDebuggerColumnsStartAt1(false);
  }

  protected initializeRequest(response: DebugProtocol.InitializeResponse): void {
    response.body = {
      supportsConfigurationDoneRequest: true,
      supportsConditionalBreakpoints: true,
      supportsFunctionBreakpoints: true,
      supportsInstructionBreakpoints: true,
      supportsStepBack: true,
      supportsRestartRequest: true,
      supportsSetVariable: true,
      supportsEvaluateForHovers: true,
      supportsDisassembleRequest: true,
      supportsReadMemoryRequest: true,
      supportsWriteMemoryRequest: true,
      supportsExceptionInfoRequest: true,
      supportsSteppingGranularity: true,
      supportsTerminateRequest: true,
    };
    this.sendResponse(response);
  }

  protected launchRequest(response: DebugProtocol.LaunchResponse, args: LaunchArguments): void {
    const failed = this.prepare(args);
    if (failed) {
      this.sendErrorResponse(response, { id: 1, format: failed, showUser: true });
      return;
    }
    this.sendResponse(response);
    // Configuration (breakpoints) comes after this event, against a machine that exists.
    this.sendEvent(new InitializedEvent());
  }

  /** Reads and checks the table and the program; returns why not when they cannot be debugged. */
  private prepare(args: LaunchArguments): string | null {
    if (typeof args.table !== 'string' || typeof args.program !== 'string') return 'the launch configuration needs "table" (the .pwt file) and "program" (an RV32I ELF file)';
    const cwd = args.cwd ?? process.cwd();
    const tablePath = resolve(cwd, args.table);
    const source = readSource(tablePath, undefined, args.table);
    if (!source.ok) return source.reason;
    const program = readInputFile(resolve(cwd, args.program), inputLimits.program, args.program);
    if (!program.ok) return program.reason;
    let loadAddress: number | undefined;
    if (args.loadAddress !== undefined) {
      loadAddress = typeof args.loadAddress === 'number' ? args.loadAddress : parseNumber(String(args.loadAddress));
      if (loadAddress === undefined || loadAddress < 0 || loadAddress > 0xffffffff) return `loadAddress ${args.loadAddress} is not a 32-bit address`;
    }
    const prepared = prepareTable({ text: source.text, sourceName: basename(tablePath), program: program.bytes, loadAddress, force: args.force === true });
    if (!prepared.ok) return prepared.reason;
    this.launch = { args, tablePath, prepared };
    if (prepared.untrusted) this.output(`${prepared.untrusted}\n`, 'important');
    for (const warning of prepared.warnings) this.output(`note: ${warning}\n`, 'console');
    this.makeMachine();
    return null;
  }

  private makeMachine(): void {
    const { args, prepared, tablePath } = this.launch!;
    const machine = new DebugMachine(prepared.plan, prepared.program, { reference: args.lockStep !== false, format: { lines: prepared.analysis.lines, file: basename(tablePath) } }, new StepLineIndex(prepared.plan, prepared.analysis.lines));
    this.machine = machine;
    this.views = new MachineViews(machine);
    this.sent = { out: 0, err: 0 };
    machine.setStepBreakpoints(this.stepBreakpointRequests);
    machine.setAddressBreakpoints('function', this.functionBreakpointRequests);
    machine.setAddressBreakpoints('instruction', this.instructionBreakpointRequests);
    this.output(`Phasewright: ${basename(tablePath)} running ${basename(args.program)}${args.lockStep === false ? ' (no lock-step)' : ' in lock-step with the RV32I reference'}\n`, 'console');
  }

  protected configurationDoneRequest(response: DebugProtocol.ConfigurationDoneResponse): void {
    this.sendResponse(response);
    this.startRunning();
  }

  private startRunning(): void {
    if (this.launch?.args.stopOnEntry === false) this.resumeWith('continue');
    else this.sendEvent(new StoppedEvent('entry', THREAD));
  }

  protected restartRequest(response: DebugProtocol.RestartResponse): void {
    if (!this.launch) return this.sendErrorResponse(response, { id: 2, format: 'nothing to restart' });
    this.pauseRequested = true;
    this.makeMachine();
    this.sendResponse(response);
    this.startRunning();
  }

  protected disconnectRequest(response: DebugProtocol.DisconnectResponse): void {
    this.pauseRequested = true;
    this.sendResponse(response);
  }

  protected terminateRequest(response: DebugProtocol.TerminateResponse): void {
    this.pauseRequested = true;
    this.sendResponse(response);
    this.sendEvent(new TerminatedEvent());
  }

  // ---- Breakpoints.

  protected setBreakPointsRequest(response: DebugProtocol.SetBreakpointsResponse, args: DebugProtocol.SetBreakpointsArguments): void {
    const requested = args.breakpoints ?? [];
    const path = args.source.path ? resolve(args.source.path) : undefined;
    if (!this.machine || path !== this.launch?.tablePath) {
      response.body = { breakpoints: requested.map(() => ({ verified: false, message: 'this file is not the table the session runs' })) };
      return this.sendResponse(response);
    }
    this.stepBreakpointRequests = requested.map((b) => ({ line: this.convertClientLineToDebugger(b.line), condition: b.condition }));
    const results = this.machine.setStepBreakpoints(this.stepBreakpointRequests);
    response.body = { breakpoints: results.map((r, i) => ({ id: r.id, verified: r.verified, message: r.message, line: requested[i].line, source: this.tableSource() })) };
    this.sendResponse(response);
  }

  protected setFunctionBreakPointsRequest(response: DebugProtocol.SetFunctionBreakpointsResponse, args: DebugProtocol.SetFunctionBreakpointsArguments): void {
    this.functionBreakpointRequests = args.breakpoints.map((b) => ({ target: b.name, condition: b.condition }));
    const results = this.machine ? this.machine.setAddressBreakpoints('function', this.functionBreakpointRequests) : [];
    response.body = { breakpoints: results.map((r) => ({ id: r.id, verified: r.verified, message: r.message, instructionReference: r.address !== undefined ? hex(r.address) : undefined })) };
    this.sendResponse(response);
  }

  protected setInstructionBreakpointsRequest(response: DebugProtocol.SetInstructionBreakpointsResponse, args: DebugProtocol.SetInstructionBreakpointsArguments): void {
    this.instructionBreakpointRequests = args.breakpoints.map((b) => ({ target: String(Number(b.instructionReference) + (b.offset ?? 0)), condition: b.condition }));
    const results = this.machine ? this.machine.setAddressBreakpoints('instruction', this.instructionBreakpointRequests) : [];
    response.body = { breakpoints: results.map((r) => ({ id: r.id, verified: r.verified, message: r.message, instructionReference: r.address !== undefined ? hex(r.address) : undefined })) };
    this.sendResponse(response);
  }

  // ---- Moving.

  protected continueRequest(response: DebugProtocol.ContinueResponse): void {
    response.body = { allThreadsContinued: true };
    this.sendResponse(response);
    this.resumeWith('continue');
  }

  protected nextRequest(response: DebugProtocol.NextResponse): void {
    this.sendResponse(response);
    this.resumeWith('instruction');
  }

  protected stepInRequest(response: DebugProtocol.StepInResponse): void {
    this.sendResponse(response);
    if (!this.machine || this.running) return;
    this.report(this.machine.stepMicrocycle());
  }

  protected stepOutRequest(response: DebugProtocol.StepOutResponse): void {
    this.sendResponse(response);
    this.resumeWith('out');
  }

  protected stepBackRequest(response: DebugProtocol.StepBackResponse, args: DebugProtocol.StepBackArguments): void {
    if (!this.machine || this.running) return this.sendResponse(response);
    const result = args.granularity === 'instruction' ? this.machine.stepBackInstruction() : this.machine.stepBackMicrocycle();
    if (typeof result === 'string') return this.sendErrorResponse(response, { id: 3, format: result, showUser: true });
    this.sendResponse(response);
    this.report(result);
  }

  protected reverseContinueRequest(response: DebugProtocol.ReverseContinueResponse): void {
    if (!this.machine || this.running) return this.sendResponse(response);
    const result = this.machine.reverseContinue();
    if (typeof result === 'string') return this.sendErrorResponse(response, { id: 3, format: result, showUser: true });
    this.sendResponse(response);
    this.report(result);
  }

  protected pauseRequest(response: DebugProtocol.PauseResponse): void {
    this.pauseRequested = true;
    this.sendResponse(response);
  }

  /** Runs a resumption in chunks, answering other requests (pause) between them. */
  private resumeWith(mode: 'continue' | 'instruction' | 'out'): void {
    const machine = this.machine;
    if (!machine || this.running) return;
    this.running = true;
    this.pauseRequested = false;
    machine.beginResume(mode);
    const chunk = () => {
      if (this.machine !== machine) return void (this.running = false);
      const event = machine.resumeChunk(CHUNK_STEPS, this.pauseRequested);
      this.forwardOutput();
      if (event.reason === 'budget') return void setImmediate(chunk);
      this.running = false;
      this.report(event);
    };
    setImmediate(chunk);
  }

  /** Tells the client where the machine stopped (or that the program ended). */
  private report(event: StopEvent): void {
    this.forwardOutput();
    this.references.clear();
    switch (event.reason) {
      case 'exited':
        this.output(`Phasewright: program exited with code ${event.exitCode}\n`, 'console');
        this.sendEvent(new ExitedEvent(event.exitCode));
        this.sendEvent(new TerminatedEvent());
        return;
      case 'exception':
        this.output(`${event.details.trimEnd()}\n`, 'stderr');
        this.sendEvent(new StoppedEvent('exception', THREAD, event.headline));
        return;
      case 'ebreak':
        this.sendEvent(stopped('breakpoint', `EBREAK at ${hex(event.pc)}`));
        return;
      case 'history-start':
        this.output(`Phasewright: the history goes back to cycle ${event.oldestStep} only\n`, 'console');
        this.sendEvent(stopped('step', 'oldest step in the history'));
        return;
      case 'breakpoint': {
        const e = stopped('breakpoint');
        (e as DebugProtocol.StoppedEvent).body.hitBreakpointIds = event.ids;
        this.sendEvent(e);
        return;
      }
      case 'pause':
      case 'step':
      case 'budget':
        this.sendEvent(new StoppedEvent(event.reason === 'pause' ? 'pause' : 'step', THREAD));
    }
  }

  private forwardOutput(): void {
    const env = this.machine?.sim.environment;
    if (!env) return;
    const [outLength, errLength] = env.outputLengths();
    // Only bytes beyond what was sent: replaying after a step back writes the same output again.
    if (outLength > this.sent.out) {
      this.output(this.decoders.out.decode(env.stdout().subarray(this.sent.out), { stream: true }), 'stdout');
      this.sent.out = outLength;
    }
    if (errLength > this.sent.err) {
      this.output(this.decoders.err.decode(env.stderr().subarray(this.sent.err), { stream: true }), 'stderr');
      this.sent.err = errLength;
    }
  }

  private output(text: string, category: string): void {
    if (text) this.sendEvent(new OutputEvent(text, category));
  }

  // ---- What is shown.

  protected threadsRequest(response: DebugProtocol.ThreadsResponse): void {
    response.body = { threads: [new Thread(THREAD, 'machine')] };
    this.sendResponse(response);
  }

  private tableSource(): DebugProtocol.Source {
    return { name: basename(this.launch!.tablePath), path: this.launch!.tablePath };
  }

  protected stackTraceRequest(response: DebugProtocol.StackTraceResponse): void {
    const machine = this.machine;
    if (!machine) return this.sendErrorResponse(response, { id: 4, format: 'no session' });
    const sim = machine.sim;
    const here = machine.currentStep();
    const ending = machine.run.ending;
    // At a divergence or fault the step to look at is the report's, not the next one.
    const report = ending && (ending.kind === 'divergence' || ending.kind === 'fault') ? ending.report : undefined;
    const span = report?.source ?? here.source;
    const lines = this.launch!.prepared.analysis.lines;
    const stepFrame: DebugProtocol.StackFrame = {
      id: FRAME_STEP,
      name: report ? `${report.kind === 'fault' ? 'fault' : 'diverged'}: ${report.culprit !== undefined ? report.steps[report.culprit].sourceLabel : here.label}` : `step ${here.step}: ${here.label}`,
      line: 0,
      column: 0,
      instructionPointerReference: hex(sim.instructionPc),
    };
    if (span) {
      const position = lines.position(span.start);
      const end = lines.position(span.end);
      Object.assign(stepFrame, { source: this.tableSource(), line: this.convertDebuggerLineToClient(position.line), column: this.convertDebuggerColumnToClient(position.col), endLine: this.convertDebuggerLineToClient(end.line), endColumn: this.convertDebuggerColumnToClient(end.col) });
    } else {
      stepFrame.presentationHint = 'label';
    }
    const pc = sim.instructionPc;
    const symbol = machine.symbolText(pc);
    const instructionFrame: DebugProtocol.StackFrame = {
      id: FRAME_INSTRUCTION,
      name: `${hex(pc)}${symbol ? ` <${symbol}>` : ''}: ${disassemble(machine.sim.memory.load32(pc), pc)}`,
      line: 0,
      column: 0,
      instructionPointerReference: hex(pc),
      presentationHint: 'subtle',
    };
    response.body = { stackFrames: [stepFrame, instructionFrame], totalFrames: 2 };
    this.sendResponse(response);
  }

  protected scopesRequest(response: DebugProtocol.ScopesResponse): void {
    if (!this.views) return this.sendErrorResponse(response, { id: 4, format: 'no session' });
    const address = this.memoryAddress ?? this.machine!.sim.regs[2] >>> 0;
    response.body = {
      scopes: this.views.scopes(address).map((scope) => ({ name: scope.name, variablesReference: this.referenceFor(scope.nodes), expensive: scope.expensive ?? false, presentationHint: scope.name === 'Registers' ? 'registers' : undefined })),
    };
    this.sendResponse(response);
  }

  private referenceFor(nodes: ViewNode[]): number {
    const reference = this.nextReference++;
    this.references.set(reference, nodes);
    return reference;
  }

  protected variablesRequest(response: DebugProtocol.VariablesResponse, args: DebugProtocol.VariablesArguments): void {
    const nodes = this.references.get(args.variablesReference) ?? [];
    response.body = {
      variables: nodes.map((node) => ({
        name: node.name,
        value: node.value,
        variablesReference: node.children?.length ? this.referenceFor(node.children) : 0,
        memoryReference: node.address !== undefined ? hex(node.address) : undefined,
        presentationHint: node.edit ? undefined : { attributes: ['readOnly'] },
      })),
    };
    this.sendResponse(response);
  }

  protected setVariableRequest(response: DebugProtocol.SetVariableResponse, args: DebugProtocol.SetVariableArguments): void {
    const machine = this.machine;
    const node = this.references.get(args.variablesReference)?.find((n) => n.name === args.name);
    if (!machine || !node?.edit) return this.sendErrorResponse(response, { id: 5, format: `${args.name} cannot be changed: only registers and memory can be, as on the board`, showUser: true });
    const value = parseValue(args.value);
    if (value === undefined) return this.sendErrorResponse(response, { id: 5, format: `"${args.value}" is not a 32-bit number (decimal, 0x hex, or negative)`, showUser: true });
    const edit = node.edit;
    if (edit.kind === 'register') {
      const refused = machine.setRegister(edit.index, value);
      if (refused) return this.sendErrorResponse(response, { id: 5, format: refused, showUser: true });
      response.body = { value: hex(value) };
    } else if (edit.kind === 'memory') {
      machine.writeMemory(edit.address, Uint8Array.of(value & 0xff, (value >>> 8) & 0xff, (value >>> 16) & 0xff, value >>> 24));
      response.body = { value: hex(value) };
    } else {
      this.memoryAddress = value;
      response.body = { value: hex(value & ~3) };
    }
    this.sendResponse(response);
    this.sendEvent(new InvalidatedEvent(['variables']));
  }

  protected evaluateRequest(response: DebugProtocol.EvaluateResponse, args: DebugProtocol.EvaluateArguments): void {
    const views = this.views;
    if (!views) return this.sendErrorResponse(response, { id: 4, format: 'no session' });
    const value = views.valueOf(args.expression.trim());
    if (value !== undefined) {
      response.body = { result: `${hex(value)} (${value})`, variablesReference: 0 };
      return this.sendResponse(response);
    }
    const held = this.machine!.evaluateCondition(args.expression);
    if (typeof held === 'string') return this.sendErrorResponse(response, { id: 6, format: held });
    response.body = { result: String(held), variablesReference: 0 };
    this.sendResponse(response);
  }

  protected exceptionInfoRequest(response: DebugProtocol.ExceptionInfoResponse): void {
    const exception = this.machine?.lastException;
    if (!exception) return this.sendErrorResponse(response, { id: 7, format: 'no exception' });
    const report = exception.report;
    response.body = {
      exceptionId: report?.kind ?? 'stopped',
      description: report?.differences.length ? report.differences.map((d) => d.text).join('; ') : exception.headline,
      breakMode: 'always',
      details: { message: exception.headline, stackTrace: exception.details },
    };
    this.sendResponse(response);
  }

  protected disassembleRequest(response: DebugProtocol.DisassembleResponse, args: DebugProtocol.DisassembleArguments): void {
    const machine = this.machine;
    const base = Number(args.memoryReference);
    if (!machine || !Number.isFinite(base)) return this.sendErrorResponse(response, { id: 8, format: `cannot read the address ${args.memoryReference}` });
    const first = ((base + (args.offset ?? 0)) & ~3) + (args.instructionOffset ?? 0) * 4;
    const instructions: DebugProtocol.DisassembledInstruction[] = [];
    for (let i = 0; i < Math.min(args.instructionCount, 4096); i++) {
      const address = (first + 4 * i) >>> 0;
      const word = machine.sim.memory.load32(address);
      const symbol = machine.symbols.find((s) => s.address === address && s.kind === 'function');
      instructions.push({ address: hex(address), instructionBytes: hex(word).slice(2), instruction: disassemble(word, address), symbol: symbol?.name });
    }
    response.body = { instructions };
    this.sendResponse(response);
  }

  protected readMemoryRequest(response: DebugProtocol.ReadMemoryResponse, args: DebugProtocol.ReadMemoryArguments): void {
    const machine = this.machine;
    const base = Number(args.memoryReference);
    if (!machine || !Number.isFinite(base)) return this.sendErrorResponse(response, { id: 8, format: `cannot read the address ${args.memoryReference}` });
    const address = (base + (args.offset ?? 0)) >>> 0;
    const bytes = machine.sim.memory.readBytes(address, Math.min(args.count, 1 << 16));
    response.body = { address: hex(address), data: Buffer.from(bytes).toString('base64') };
    this.sendResponse(response);
  }

  protected writeMemoryRequest(response: DebugProtocol.WriteMemoryResponse, args: DebugProtocol.WriteMemoryArguments): void {
    const machine = this.machine;
    const base = Number(args.memoryReference);
    if (!machine || !Number.isFinite(base)) return this.sendErrorResponse(response, { id: 8, format: `cannot write the address ${args.memoryReference}` });
    const bytes = new Uint8Array(Buffer.from(args.data, 'base64'));
    machine.writeMemory((base + (args.offset ?? 0)) >>> 0, bytes);
    response.body = { bytesWritten: bytes.length };
    this.sendResponse(response);
    this.sendEvent(new InvalidatedEvent(['variables']));
  }

  /**
   * `phasewright.bringUp` { from?, count? }: the indicator rows of a range of cycles, and the
   * cycle the session stands at (`current`). Without `from` the range ends at the current cycle
   * (the last `count` cycles up to it), which is what the bring-up view shows by default.
   */
  protected customRequest(command: string, response: DebugProtocol.Response, args: Partial<BringUpRequest> | undefined): void {
    if (command !== 'phasewright.bringUp' || !this.launch || !this.machine) return this.sendErrorResponse(response, { id: 9, format: `unknown request ${command}` });
    const { prepared, args: launchArgs } = this.launch;
    const current = this.machine.sim.steps;
    const count = Math.min(256, Math.max(1, Math.floor(Number(args?.count ?? 16)) || 1));
    const from = args?.from === undefined ? Math.max(0, current - count + 1) : Math.max(0, Math.floor(Number(args.from)) || 0);
    const rows = bringUpRows(prepared.plan, prepared.program, { from, count: args?.from === undefined ? Math.min(count, current + 1) : count, reference: launchArgs.lockStep !== false, lines: prepared.analysis.lines });
    response.body = { ...rows, current };
    this.sendResponse(response);
  }
}

function stopped(reason: string, description?: string): StoppedEvent {
  const event = new StoppedEvent(reason, THREAD);
  if (description) (event as DebugProtocol.StoppedEvent).body.description = description;
  return event;
}

function parseValue(text: string): number | undefined {
  const t = text.trim().replace(/_/g, '');
  const negative = t.startsWith('-');
  const value = parseNumber(negative ? t.slice(1) : t);
  if (value === undefined || value > 0xffffffff) return undefined;
  return (negative ? -value : value) | 0;
}
