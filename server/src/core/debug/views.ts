// What the debugger shows of a stopped machine, as plain trees of name/value pairs: the program's
// registers (x0..x31 with their psABI names, pc), the instruction register with its fields, the
// step counter and flags, every bus with its value and its driver in the current step (or that it
// floats or its keepers hold it), the control word (asserted strobes, field values, the byte each
// chip outputs), the other parts, and the memory around an address. Also the names conditions may
// use, with their values.
//
// Values are the machine's between two steps, with the buses settled for the step about to run
// (machine.currentStep()).
//
// Deliberately not here: the protocol's variable references (the adapter numbers the trees).
import { ABI_REGISTER_NAMES, disassemble, disassembleParts } from '../isa/disasm';
import { immediateOf } from '../isa/rv32i';
import { describeAddress } from '../encode/listing';
import { chipImagesOf } from '../encode/plan';
import { heldValue } from '../model/partFacts';
import type { DebugMachine } from './machine';

export type Edit = { kind: 'register'; index: number } | { kind: 'memory'; address: number } | { kind: 'memory-address' };

export interface ViewNode {
  name: string;
  value: string;
  children?: ViewNode[];
  /** How the value can be changed, where the hardware could be changed. */
  edit?: Edit;
  /** An address the value stands for (the protocol's memory reference). */
  address?: number;
}

export interface Scope {
  name: string;
  nodes: ViewNode[];
  /** Shown folded at first (long lists). */
  expensive?: boolean;
}

export function hex(value: number, digits = 8): string {
  return `0x${(value >>> 0).toString(16).padStart(digits, '0')}`;
}

function numberText(value: number): string {
  const u = value >>> 0;
  const s = value | 0;
  return s < 0 ? `${hex(u)} (${u}, ${s})` : `${hex(u)} (${u})`;
}

function bits(value: number, width: number): string {
  return (value >>> 0).toString(2).padStart(width, '0').slice(-width);
}

/** The views of one debug machine; chip images are read from the encoded store once. */
export class MachineViews {
  private chips: ReturnType<typeof chipImagesOf>[] | null = null;

  constructor(private readonly dm: DebugMachine) {
    dm.valueOf = (name) => this.valueOf(name);
    dm.knowsName = (name) => this.knowsName(name);
  }

  scopes(memoryAddress: number): Scope[] {
    return [
      { name: 'Registers', nodes: this.registers() },
      { name: 'Step', nodes: this.stepNodes() },
      { name: 'Buses', nodes: this.buses() },
      { name: 'Control word', nodes: this.controlWord() },
      { name: 'Parts', nodes: this.parts() },
      { name: 'Memory', nodes: this.memory(memoryAddress), expensive: true },
    ];
  }

  registers(): ViewNode[] {
    const sim = this.dm.sim;
    const nodes: ViewNode[] = [{ name: 'pc', value: hex(sim.pc), address: sim.pc }];
    for (let r = 0; r < 32; r++) nodes.push({ name: `x${r} (${ABI_REGISTER_NAMES[r]})`, value: numberText(sim.regs[r]), edit: r === 0 && !this.dm.plan.x0Stored ? undefined : { kind: 'register', index: r } });
    return nodes;
  }

  /** The instruction register, its fields decoded by the RV32I formats (spec chapter 2, "Base Instruction Formats"). */
  instruction(): ViewNode {
    const sim = this.dm.sim;
    const word = sim.ir;
    const pc = sim.instructionPc;
    const parts = disassembleParts(word, pc);
    const children: ViewNode[] = [
      { name: 'disassembly', value: disassemble(word, pc) },
      { name: 'opcode', value: `0b${bits(word, 7)}` },
      { name: 'rd', value: `x${(word >>> 7) & 31}` },
      { name: 'funct3', value: `0b${bits(word >>> 12, 3)}` },
      { name: 'rs1', value: `x${(word >>> 15) & 31}` },
      { name: 'rs2', value: `x${(word >>> 20) & 31}` },
      { name: 'funct7', value: `0b${bits(word >>> 25, 7)}` },
    ];
    if (parts.spec) {
      children.push({ name: 'format', value: parts.spec.format });
      if (parts.spec.format !== 'R') children.push({ name: 'imm', value: numberText(immediateOf(parts.spec, word)) });
    }
    const cls = this.dm.plan.classOfOpcode[word & 0x7f];
    children.push({ name: 'class', value: cls >= 0 ? this.dm.plan.machine.classes[cls].name : '(none: the table has no class for this opcode)' });
    return { name: 'ir', value: `${hex(word)}  ${disassemble(word, pc)}`, children };
  }

  stepNodes(): ViewNode[] {
    const dm = this.dm;
    const sim = dm.sim;
    const plan = dm.plan;
    const here = dm.currentStep();
    const nodes: ViewNode[] = [
      { name: 'step', value: `${sim.step}  ${here.label}` },
      this.instruction(),
      { name: 'instruction address', value: `${hex(sim.instructionPc)}${dm.symbolText(sim.instructionPc) ? `  <${dm.symbolText(sim.instructionPc)}>` : ''}` },
      ...plan.stores.map((s, i) => ({ name: `address${plan.stores.length > 1 ? ` (${s.store.name})` : ''}`, value: `${hex(here.addresses[i], 4)}  (${describeAddress(s.enc, here.addresses[i])})` })),
      ...plan.flagNames.map((f, i) => ({ name: `flag ${f}`, value: String(sim.flags[i]) })),
      { name: 'instructions retired', value: String(sim.instructionsRetired) },
      { name: 'cycle', value: `${sim.steps}  (steps run since reset)` },
      { name: 'history', value: `back to cycle ${dm.history.oldestStep}` },
    ];
    return nodes;
  }

  buses(): ViewNode[] {
    const dm = this.dm;
    const sim = dm.sim;
    const plan = dm.plan;
    const info = plan.microOps.info[dm.currentStep().uop];
    return plan.busNames.map((bus, b) => {
      const drivers = info.drivers.filter((d) => d.bus === b);
      const defined = sim.isBusDefined(b);
      const value = hex(sim.busValue[b]);
      let text: string;
      let driver: string;
      if (drivers.length > 0) {
        driver = drivers.map((d) => `${d.strobe} (${d.part})`).join(' and ');
        text = `${defined ? value : 'undefined'}  driven by ${driver}${drivers.length > 1 ? '  CONTENTION' : ''}`;
      } else if (plan.busKeeper[b]) {
        driver = 'kept (nothing drives it; its keepers hold the last value)';
        text = `${defined ? value : 'undefined (held nothing since reset)'}  kept`;
      } else {
        driver = 'floating (nothing drives it and it has no keepers)';
        text = 'floating';
      }
      return { name: bus, value: text, children: [{ name: 'value', value: defined ? numberText(sim.busValue[b]) : 'undefined' }, { name: 'driver', value: driver }, { name: 'width', value: String(plan.busWidth[b]) }] };
    });
  }

  controlWord(): ViewNode[] {
    const dm = this.dm;
    const plan = dm.plan;
    const here = dm.currentStep();
    const info = plan.microOps.info[here.uop];
    const nodes: ViewNode[] = [
      { name: 'strobes', value: info.asserted.length ? info.asserted.join(' ') : '(none)', children: info.asserted.map((s) => ({ name: s, value: plan.machine.signals.get(s)?.description ?? 'asserted' })) },
    ];
    for (const [field, code] of info.fields) nodes.push({ name: field, value: `${plan.microOps.valueName(field, code) ?? '(no value has this code)'} (${code})` });
    this.chips ??= plan.stores.map((s) => chipImagesOf(s.enc));
    plan.stores.forEach((s, i) => {
      this.chips![i].forEach((chip, c) => {
        const word = chip.words[here.addresses[i]];
        nodes.push({ name: `${plan.stores.length > 1 ? `${s.store.name} ` : ''}chip ${c}`, value: `${hex(word, chip.widthBits / 4)}  0b${bits(word, chip.widthBits)}` });
      });
    });
    return nodes;
  }

  parts(): ViewNode[] {
    const sim = this.dm.sim;
    const plan = this.dm.plan;
    const nodes: ViewNode[] = [];
    plan.parts.forEach((part, i) => {
      // A part holding one register a bus can read: the simulator keeps it as the part's value.
      if (heldValue(plan.machine, part)) nodes.push({ name: part.name, value: numberText(sim.partValue[i]) });
    });
    plan.regfiles.forEach((file, f) => {
      if (f === 0) return; // the first register file is the Registers scope
      nodes.push({ name: file.name, value: `register file ${f + 1}`, children: Array.from({ length: 32 }, (_, r) => ({ name: `${file.name}${r}`, value: numberText(sim.regs[f * 32 + r]) })) });
    });
    return nodes;
  }

  /** Sixteen words from `address` rounded down to 4 bytes, minus eight words, so the address sits in the middle. */
  memory(address: number): ViewNode[] {
    const memory = this.dm.sim.memory;
    const middle = (address & ~3) >>> 0;
    const start = (middle - 32) >>> 0;
    const nodes: ViewNode[] = [{ name: 'around', value: hex(middle), edit: { kind: 'memory-address' } }];
    for (let i = 0; i < 16; i++) {
      const at = (start + 4 * i) >>> 0;
      nodes.push({ name: `${hex(at)}${at === middle ? ' ←' : ''}`, value: hex(memory.load32(at)), edit: { kind: 'memory', address: at }, address: at });
    }
    return nodes;
  }

  // ---- Names in conditions.

  valueOf(name: string): number | undefined {
    const dm = this.dm;
    const sim = dm.sim;
    const plan = dm.plan;
    const register = /^x(\d+)$/.exec(name);
    if (register && Number(register[1]) < 32) return sim.regs[Number(register[1])] >>> 0;
    const abi = ABI_REGISTER_NAMES.indexOf(name === 'fp' ? 's0' : name);
    if (abi >= 0) return sim.regs[abi] >>> 0;
    switch (name) {
      case 'pc':
        return sim.pc;
      case 'ir':
        return sim.ir;
      case 'step':
        return sim.step;
      case 'instructions':
        return sim.instructionsRetired;
      case 'cycle':
        return sim.steps;
    }
    const bus = plan.busIndex.get(name);
    if (bus !== undefined) {
      dm.currentStep();
      return sim.isBusDefined(bus) ? sim.busValue[bus] >>> 0 : undefined;
    }
    const part = plan.partIndex.get(name);
    if (part !== undefined) return sim.partValue[part] >>> 0;
    const flag = plan.flagIndex.get(name);
    if (flag !== undefined) return sim.flags[flag];
    return undefined;
  }

  knowsName(name: string): boolean {
    const plan = this.dm.plan;
    return plan.busIndex.has(name) || plan.partIndex.has(name) || plan.flagIndex.has(name);
  }
}
