// The input universe of a machine: every combination of the step counter, the instruction
// bits and the flags that any store's address lines carry. Each control store is a function of
// (part of) this universe; the encoder walks it once and lays each point into every store.
import type { Machine } from '../model/types';

export interface Universe {
  stepBits: number;
  /** Instruction bit positions carried by some store's address, ascending. */
  irBits: number[];
  /** Flags carried by some store's address, in declaration order. */
  flags: string[];
  /** Total number of input bits: stepBits + irBits.length + flags.length. */
  bits: number;
}

/** Point index layout: step in the low bits, then the instruction bits, then the flags. */
export function universeOf(machine: Machine): Universe {
  const ir = new Set<number>();
  const flags = new Set<string>();
  for (const store of machine.stores) {
    for (const s of store.address?.sources ?? []) {
      if (s.input.kind === 'ir') for (let b = s.input.lo; b <= s.input.hi; b++) ir.add(b);
      else if (s.input.kind === 'flag') flags.add(s.input.name);
    }
  }
  const irBits = [...ir].sort((a, b) => a - b);
  const flagList = [...machine.flags.keys()].filter((f) => flags.has(f));
  const stepBits = machine.stepBits ?? 0;
  return { stepBits, irBits, flags: flagList, bits: stepBits + irBits.length + flagList.length };
}

export interface PointInputs {
  step: number;
  /** Instruction word with the universe's bits set as the point says, others 0. */
  ir: number;
  /** Mask of the instruction bits the universe carries. */
  irMask: number;
  flags: Map<string, number>;
}

export function pointInputs(universe: Universe, point: number): PointInputs {
  return pointInputsInto(universe, point, { step: 0, ir: 0, irMask: 0, flags: new Map() });
}

/** Fills `target` with the inputs of a point; the hot loops reuse one object this way. */
export function pointInputsInto(universe: Universe, point: number, target: PointInputs): PointInputs {
  target.step = point & ((1 << universe.stepBits) - 1);
  let ir = 0;
  let irMask = 0;
  let bit = universe.stepBits;
  const irBits = universe.irBits;
  for (let i = 0; i < irBits.length; i++) {
    const pos = irBits[i];
    irMask |= 1 << pos;
    if ((point >>> bit) & 1) ir |= 1 << pos;
    bit++;
  }
  target.ir = ir >>> 0;
  target.irMask = irMask >>> 0;
  for (const flag of universe.flags) target.flags.set(flag, (point >>> bit++) & 1);
  return target;
}
