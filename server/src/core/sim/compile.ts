// The fast path of the simulator: the micro-ops of a one-store machine compiled into
// JavaScript (through the standard Function constructor) with every bus number, mask, ALU
// function, immediate format and memory size folded in as a constant. The interpreter in
// simulator.ts stays the definition of what a step does; the compiled code does the same for
// the common case and hands every unusual step back to it untouched: a word that traps or
// faults, a load that would read an undefined value. Handing back is safe because a step
// changes nothing but bus values before its closing edge, and the interpreter recomputes those
// from the same state. tests/sim/compiled.test.ts runs programs through both and requires
// identical results.
//
// The unit compiled is a CHAIN: the steps that follow one another while the address's static
// part (the instruction register's bits and the flags on the address lines) stays the same. From
// a given address the chain is fixed: each step's word is known, and whether it ends the
// instruction (the step counter returns to 0) or changes an input (then the chain stops). On the
// demo table one chain runs an instruction's execute steps, its `end`, and the next
// instruction's fetch up to the instruction register's load: one call per instruction, straight
// code inside. Chains are compiled on first use, one small function each (shared by every
// address with the same steps), so V8 optimizes each separately and cheaply; a loop calls them.
//
// Deliberately not here: machines with several stores or very many distinct words (they run on
// the interpreter), traces and bus recording (interpreter only), any report.
import { D_CUSTOM, DRIVER_WORDS, EDGE_WORDS, E_CUSTOM, HEADER_END, HEADER_STOP, HEADER_TRAP, U_DRIVERS, U_FLOAT_MASK, U_NEED_MASK } from './microops';
import type { SimPlan } from './plan';
import { ByteStage, type InlineSite } from './customParts';

/** What the compiled stepping loop returns: why it stopped. */
export const FAST_BUDGET = 0; // the step budget is used up, or what is left of it is shorter than the next chain
export const FAST_SLOW_STEP = 1; // the next step needs the interpreter
export const FAST_RETIRED = 2; // an instruction retired and the caller asked to hear of it (or an exit is pending)
export const FAST_WRAP = 3; // the step counter wrapped without `end`

/** The state the compiled code works on: the simulator's own arrays and fields. */
export interface FastState {
  step: number;
  definedMask: number;
  steps: number;
  instructionsRetired: number;
  instructionPc: number;
  lastRetireStep: number;
  lastRetiredWord: number;
  lastWriteCount: number;
  writeCount: number;
  instructionLoaded: boolean;
  readonly pendingExitSet: boolean;
  /**
   * Called by the compiled loop after an instruction retires, where the caller asked to hear of
   * retirements, with the state written back (step 0 of the next instruction): true goes on
   * running, false stops with FAST_RETIRED. Lock-step compares there without leaving the loop.
   */
  readonly retireHook: (() => boolean) | null;
  readonly busValue: Int32Array;
  readonly partValue: Int32Array;
  readonly regs: Int32Array;
  readonly customState: Int32Array;
  readonly flags: Uint8Array;
  readonly memory: { load8(a: number): number; load16(a: number): number; load32(a: number): number; wordsOfPage(a: number): Int32Array | undefined };
  readonly logAddress: Int32Array;
  readonly classInstructions: Float64Array;
  readonly classSteps: Float64Array;
  readonly retiredByKey: Uint32Array;
  storeMemory(size: number, address: number, value: number): void;
}

export interface FastStepper {
  /** Runs up to `maxSteps` steps; returns a FAST_* status. */
  run(maxSteps: number, stopAtRetire: boolean): number;
  /** How many distinct chains have been compiled so far. */
  chains(): number;
}

// What one word does to the step (bits), or WORD_SLOW alone.
const WORD_END = 1; // the word ends the instruction
const WORD_INPUTS = 2; // the instruction register or a flag changed: the address's static part must be recomputed
const WORD_SLOW = 4; // the interpreter must run this step (traps, faults)

// Why a chain returned (io[IO_STATUS] holds the same).
const CHAIN_DONE = 0; // its steps ran; the next step continues with the same static part
const CHAIN_INPUTS = 1; // its last step changed the instruction register or a flag
const CHAIN_RETIRED = 2; // an instruction retired and the caller wants to know
const CHAIN_SLOW = 3; // the current step needs the interpreter (nothing of it was done)
const CHAIN_WRAP = 4; // the step counter wrapped without `end`

// The chains share their state with the loop through io: the step counter, the defined-bus mask
// and the number of steps the chain ran.
const IO_STEP = 0;
const IO_DEFINED = 1;
const IO_STEPS = 2;

/** Largest number of distinct words compiled; larger tables use the interpreter. */
export const MAX_COMPILED_WORDS = 4096;
/** Most steps in one chain (a table whose steps never change an input still returns to the loop). */
const MAX_CHAIN_STEPS = 16;

/** Whether the fast path can run this machine at all. */
export function canCompile(plan: SimPlan): boolean {
  // A sequencer part (`holds step`) computes the next step at every closing edge: a jump, a
  // hold or a loop. The chains here assume the step counts up or returns to 0 at `end`, so such
  // machines run on the interpreter (following jumps in compiled chains is a later slice).
  if (plan.seqPart >= 0) return false;
  // Strobes that drive some lines of a bus run on the interpreter.
  const partial = [...plan.machine.signals.values()].some((s) => s.type === 'strobe' && s.lines !== undefined);
  // And connections (`connect`), which drive in every step, and combinational flags, whose
  // settle (the address formed again within a step) only the interpreter runs.
  return !partial && plan.machine.connections.length === 0 && plan.custom.combinationalCount === 0 && plan.stores.length === 1 && plan.microOps.byKey !== null && plan.microOps.count <= MAX_COMPILED_WORDS;
}

// Word reads (every instruction fetch among them) go through the live word view of the page the
// same read found last time (one cache per place in the code, so a fetch and a data read do not
// evict each other), as the reference interpreter's fetch does; stores land in the same array, so
// a program that writes its own code is seen at once. Misaligned or unmapped reads take the
// general path.
function wordReader(index: number): string[] {
  return [
    `let pageTag${index} = -1, pageWords${index} = null;`,
    `function loadWord${index}(a) {`,
    `  if ((a & 3) === 0 && (a >>> 12) === pageTag${index}) return pageWords${index}[(a & 0xfff) >>> 2];`,
    `  const words = (a & 3) === 0 ? memory.wordsOfPage(a) : undefined;`,
    '  if (words === undefined) return memory.load32(a);',
    `  pageTag${index} = a >>> 12;`,
    `  pageWords${index} = words;`,
    '  return words[(a & 0xfff) >>> 2];',
    '}',
  ];
}

/** The buses whose bits are set in `mask`. */
function busesOf(mask: number, nBuses: number): number[] {
  const out: number[] = [];
  for (let bus = 0; bus < nBuses; bus++) if (mask & (1 << bus)) out.push(bus);
  return out;
}

/** The names the generated code can reach, and their values for a simulator. */
function environmentOf(plan: SimPlan, state: FastState, io: Int32Array): [string[], unknown[]] {
  const classSlots = Int16Array.from(plan.classOfOpcode, (c) => (c < 0 ? plan.machine.classes.length : c));
  // Bytes the parts run from their definitions write, grouped into the writes the board makes.
  const bytes = new ByteStage();
  const stageByte = (address: number, value: number) => bytes.stage(address, value);
  const storeMemory = (size: number, address: number, value: number) => state.storeMemory(size, address, value);
  const flushBytes = () => bytes.flush(storeMemory);
  const names = ['state', 'io', 'busValue', 'partValue', 'regs', 'customState', 'flags', 'memory', 'logAddress', 'classOfOpcode', 'classInstructions', 'classSteps', 'retiredByKey', 'stageByte', 'flushBytes'];
  const values = [state, io, state.busValue, state.partValue, state.regs, state.customState, state.flags, state.memory, state.logAddress, classSlots, state.classInstructions, state.classSteps, state.retiredByKey, stageByte, flushBytes];
  return [names, values];
}

type Chain = (sp: number, stopAtRetire: boolean) => number;

/**
 * The compiled stepping loop of a one-store machine working on `state`, or null when the
 * machine is not one the fast path handles. It runs chains until the budget is used up, an
 * instruction retires (when asked), or a step needs the interpreter.
 */
export function compileStepper(plan: SimPlan, state: FastState): FastStepper | null {
  if (!canCompile(plan)) return null;
  const store = plan.stores[0];
  const io = new Int32Array(3);
  const [names, values] = environmentOf(plan, state, io);
  const chainAt: (Chain | undefined)[] = new Array(store.wordOfAddress.length);
  /** The most steps the chain at each address runs (0: not compiled yet). */
  const chainSteps = new Int32Array(store.wordOfAddress.length);
  const chainsBySteps = new Map<string, Chain>();
  /** The chain that starts at `address` (step counter `step`), compiled on first use. */
  const chainFor = (address: number, step: number): Chain => {
    const { key, lines, steps } = chainSource(plan, address, step);
    let chain = chainsBySteps.get(key);
    if (!chain) {
      chain = new Function(...names, lines.join('\n'))(...values) as Chain;
      chainsBySteps.set(key, chain);
    }
    chainAt[address] = chain;
    chainSteps[address] = steps;
    return chain;
  };
  const irPart = plan.irPart;
  const staticExpression = [String(store.constantPart), ...store.irSources.map((s) => `(((ir >>> ${s.inputLo}) & ${s.lineMask}) << ${s.addressLo})`), ...store.flagSources.map((s) => `((flags[${s.flag}] & ${s.lineMask}) << ${s.addressLo})`)].join(' + ');
  const loop = [
    '"use strict";',
    'return function fastSteps(maxSteps, stopAtRetire) {',
    `  let step = state.step, ir = partValue[${irPart}], n = 0, synced = 0, status = ${FAST_BUDGET};`,
    `  let sp = ${staticExpression};`,
    `  io[${IO_DEFINED}] = state.definedMask;`,
    '  while (n < maxSteps) {',
    '    const address = sp + stepPart[step];',
    '    const chain = chainAt[address] ?? chainFor(address, step);',
    // A chain runs to its end; one longer than the budget left is for the interpreter (exact).
    '    if (chainSteps[address] > maxSteps - n) break;',
    '    const r = chain(sp, stopAtRetire);',
    `    n += io[${IO_STEPS}];`,
    `    step = io[${IO_STEP}];`,
    `    if (r === ${CHAIN_DONE}) continue;`,
    `    if (r === ${CHAIN_INPUTS}) { ir = partValue[${irPart}]; sp = ${staticExpression}; continue; }`,
    // A retirement the hook takes (not one with an exit pending: that goes back to the caller).
    `    if (r === ${CHAIN_RETIRED} && state.retireHook !== null && !state.pendingExitSet) {`,
    `      state.step = step; state.definedMask = io[${IO_DEFINED}]; state.steps += n - synced; synced = n;`,
    '      if (state.retireHook()) {',
    `        io[${IO_DEFINED}] = state.definedMask; ir = partValue[${irPart}]; sp = ${staticExpression};`,
    '        continue;',
    '      }',
    `      status = ${FAST_RETIRED};`,
    '      break;',
    '    }',
    `    status = r === ${CHAIN_RETIRED} ? ${FAST_RETIRED} : r === ${CHAIN_SLOW} ? ${FAST_SLOW_STEP} : ${FAST_WRAP};`,
    '    break;',
    '  }',
    `  state.step = step; state.definedMask = io[${IO_DEFINED}]; state.steps += n - synced;`,
    '  return status;',
    '};',
  ];
  const run = new Function('state', 'io', 'partValue', 'flags', 'stepPart', 'chainAt', 'chainSteps', 'chainFor', loop.join('\n'))(state, io, state.partValue, state.flags, store.stepPart, chainAt, chainSteps, chainFor) as FastStepper['run'];
  // Calls that run no step pass through the function's exit, so V8 has type feedback for that
  // code before it optimizes the loop (else the first return deoptimizes it). V8 keeps feedback
  // only from a function's first few calls on, hence several calls.
  for (let i = 0; i < 16; i++) run(0, false);
  return { run, chains: () => chainsBySteps.size };
}

/**
 * The source of the chain starting at `address` with the step counter at `step`, and a key
 * naming its steps (addresses with the same key share one function). The chain's steps follow
 * from the table: each word's effect on the step is known while compiling.
 */
function chainSource(plan: SimPlan, address: number, firstStep: number): { key: string; lines: string[]; steps: number } {
  const mo = plan.microOps;
  const code = mo.code.data;
  const store = plan.stores[0];
  const sp = address - store.stepPart[firstStep];
  const readers: string[] = [];
  let nReaders = 0;
  const wordLoad = (address: string) => {
    readers.push(...wordReader(nReaders));
    return `loadWord${nReaders++}(${address})`;
  };
  const lines: string[] = ['return function chain(sp, stopAtRetire) {', `  let defined = io[${IO_DEFINED}];`, `  const ir = partValue[${plan.irPart}];`];
  const keyParts: string[] = [];
  const leave = (status: number, nextStep: number, stepsRun: number) => `{ io[${IO_STEP}] = ${nextStep}; io[${IO_DEFINED}] = defined; io[${IO_STEPS}] = ${stepsRun}; return ${status}; }`;
  let step = firstStep;
  let count = 0;
  for (;;) {
    const word = store.wordOfAddress[sp + store.stepPart[step]];
    const body = wordBody(plan, code, mo.byKey![word], leave(CHAIN_SLOW, step, count), wordLoad, `s${count}_`);
    if (body.result === WORD_SLOW) {
      // The interpreter runs this word; the loop comes back here for it.
      lines.push(`  ${leave(count === 0 ? CHAIN_SLOW : CHAIN_DONE, step, count)}`);
      keyParts.push(`${step}:${word}:slow`);
      break;
    }
    keyParts.push(`${step}:${word}`);
    lines.push(`  logAddress[${step}] = sp + ${store.stepPart[step]};`, '  {');
    lines.push(...body.lines.map((l) => `    ${l}`), '  }');
    count++;
    if (body.result & WORD_END) {
      lines.push(
        `  classInstructions[classOfOpcode[ir & 0x7f]]++;`,
        `  classSteps[classOfOpcode[ir & 0x7f]] += ${step + 1};`,
        '  retiredByKey[(ir & 0x7f) | (((ir >>> 12) & 7) << 7) | (((ir >>> 25) & 0x7f) << 10) | (((ir >>> 20) & 1) << 17)]++;',
        '  state.instructionsRetired++;',
        '  state.lastWriteCount = state.writeCount;',
        '  state.writeCount = 0;',
        `  state.lastRetireStep = ${step};`,
        '  state.lastRetiredWord = ir >>> 0;',
        `  state.instructionPc = partValue[${plan.pcPart}] >>> 0;`,
      );
      step = 0;
      lines.push(`  if (stopAtRetire || state.pendingExitSet) ${leave(CHAIN_RETIRED, 0, count)}`);
    } else if (step + 1 === plan.nSteps) {
      lines.push(`  ${leave(CHAIN_WRAP, 0, count)}`);
      break;
    } else {
      step++;
    }
    if (body.result & WORD_INPUTS) {
      lines.push(`  ${leave(CHAIN_INPUTS, step, count)}`);
      break;
    }
    if (count >= MAX_CHAIN_STEPS) {
      lines.push(`  ${leave(CHAIN_DONE, step, count)}`);
      break;
    }
  }
  lines.push('};');
  return { key: keyParts.join(' '), lines: ['"use strict";', ...readers, ...lines], steps: Math.max(1, count) };
}

/**
 * The statements of one word: they read `ir` and `defined` and update `defined`. When a value
 * the closing edge needs turns out undefined they restore `defined` and run `slowExit` (which
 * must leave the statements). `result` says what the word does to the step (WORD_END,
 * WORD_INPUTS bits), or WORD_SLOW when the interpreter must always run it (traps, faults).
 */
function wordBody(plan: SimPlan, code: Int32Array, base: number, slowExit: string, wordLoad?: (address: string) => string, prefix = 'w_'): { lines: string[]; result: number } {
  const out: string[] = [];
  const header = code[base];
  if (header & (HEADER_STOP | HEADER_TRAP)) return { lines: [], result: WORD_SLOW };
  const floatMask = code[base + U_FLOAT_MASK];
  const needMask = code[base + U_NEED_MASK];
  const nDrivers = code[base + U_DRIVERS];
  const nBuses = plan.busNames.length;
  // Definedness known while compiling: true (a driver that always gives a value drove the bus in
  // this step), false (it floats, or an unnamed code drives it); absent: decided at run time
  // from `defined` (a bus held by keepers, or computed from one).
  const known = new Map<number, boolean>();
  for (let bus = 0; bus < nBuses; bus++) if (floatMask & (1 << bus)) known.set(bus, false);
  const statements: string[] = [];
  if (floatMask) statements.push(`defined &= ${~floatMask};`);
  // Buses driven in this step live in locals b<N>; the others are read from busValue.
  const local = new Set<number>();
  const busRead = (bus: number) => (local.has(bus) ? `b${bus}` : `busValue[${bus}]`);
  // Ports of parts run from their definitions are inlined (sim/customParts.ts), each with its own prefix.
  let sites = 0;
  const site = (): InlineSite => ({ prefix: `${prefix}p${sites++}_`, bus: busRead, loadWord: (address) => (wordLoad ? wordLoad(address) : `memory.load32(${address})`) });
  /** Definedness of a value computed from `inputs`: a known boolean, or a run-time expression (bit 0). */
  const definednessOf = (inputs: number[]): boolean | string => {
    if (inputs.some((bus) => known.get(bus) === false)) return false;
    const open = inputs.filter((bus) => !known.has(bus));
    return open.length === 0 ? true : open.map((bus) => `(defined >>> ${bus})`).join(' & ');
  };
  let p = base + U_DRIVERS + 1;
  for (let k = 0; k < nDrivers; k++, p += DRIVER_WORDS) {
    const [op, bus, a, b] = [code[p], code[p + 1], code[p + 2], code[p + 3]];
    let value: string;
    let definedness: boolean | string = true;
    if (op === D_CUSTOM) {
      const src = plan.custom.driverSource(a, site());
      statements.push(...src.lines);
      value = src.value;
      definedness = definednessOf(busesOf(b, nBuses));
    } else {
      value = '0'; // D_UNDEFINED
      definedness = false;
    }
    const mask = plan.busMask[bus];
    const masked = mask === -1 ? value : `(${value} & ${mask})`;
    statements.push(local.has(bus) ? `b${bus} = ${masked};` : `let b${bus} = ${masked};`);
    local.add(bus);
    // Only keepers hold a value into later steps; a bus without them is read in this step only (the local).
    if (plan.busKeeper[bus]) statements.push(`busValue[${bus}] = b${bus};`);
    if (definedness === true) statements.push(`defined |= ${1 << bus};`);
    else if (definedness === false) statements.push(`defined &= ${~(1 << bus)};`);
    else statements.push(`defined = ((${definedness}) & 1) !== 0 ? defined | ${1 << bus} : defined & ${~(1 << bus)};`);
    if (typeof definedness === 'boolean') known.set(bus, definedness);
    else known.delete(bus);
  }
  // Every bus the closing edge loads from must be defined: known ones are settled now.
  let openNeed = 0;
  for (let bus = 0; bus < nBuses; bus++) {
    if (!(needMask & (1 << bus))) continue;
    if (known.get(bus) === false) return { lines: [], result: WORD_SLOW }; // always a fault: the interpreter reports it
    if (!known.has(bus)) openNeed |= 1 << bus;
  }
  if (openNeed) out.push('const defined0 = defined;');
  out.push(...statements);
  if (openNeed) out.push(`if ((defined & ${openNeed}) !== ${openNeed}) { defined = defined0; ${slowExit} }`);
  const nEdges = code[p++];
  let inputsChanged = false;
  // Edge ports of parts run from their definitions compute first (from the values before the
  // edge, as every action here reads them) and store after every other action, as the interpreter's commit.
  const customStores: string[] = [];
  let writesMemory = false;
  for (let k = 0; k < nEdges; k++, p += EDGE_WORDS) {
    const [op, a, c] = [code[p], code[p + 2], code[p + 4]];
    // A fault entry (sorted first): the interpreter runs the word and reports it.
    if (op !== E_CUSTOM) return { lines: [], result: WORD_SLOW };
    const src = plan.custom.edgeSource(a, site());
    // Names carry the site's prefix, so the compute and store statements share the word's block.
    out.push(...src.compute);
    customStores.push(...src.store);
    writesMemory ||= src.writesMemory;
    if (src.changesInputs) inputsChanged = true;
    if (c !== 0) {
      inputsChanged = true;
      customStores.push('state.instructionLoaded = true;');
    }
  }
  out.push(...customStores);
  if (writesMemory) out.push('flushBytes();');
  return { lines: out, result: (header & HEADER_END ? WORD_END : 0) | (inputsChanged ? WORD_INPUTS : 0) };
}
