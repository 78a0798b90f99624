// What the notation understands besides the part kinds' own definitions: the strobe kinds, the
// instruction-bit names it accepts as address inputs, and, read from the standard library, the
// names of its part kinds (for suggestions and highlighting).
import type { InputVar, StrobeKind } from './types';
import { standardLibrary } from '../parts/library';

/** The standard library's part kinds, in the order it declares them. */
export const partKinds: string[] = [...standardLibrary().kinds.keys()];
export const strobeKinds: StrobeKind[] = ['enable', 'read', 'write', 'clock', 'count', 'end', 'trap'];

export const strobeKindDescriptions: Record<StrobeKind, string> = {
  enable: 'output enable: the part drives the bus for the whole step',
  read: 'memory read: memory data drives the bus for the whole step',
  write: 'memory write: the bus is written to memory at the closing edge',
  clock: 'clock: the part loads at the step\'s closing edge',
  count: 'count: the counter adds its increment at the closing edge',
  end: 'end of instruction: the step counter returns to 0 after this step',
  trap: 'trap: hands the instruction to the environment (monitor or simulator), for ecall and ebreak',
};

/** Named slices of the instruction word usable as address inputs, guards and map inputs (RV32I base formats). */
export const instructionFields: Record<string, InputVar & { kind: 'ir' }> = {
  opcode: { kind: 'ir', hi: 6, lo: 2 },
  funct3: { kind: 'ir', hi: 14, lo: 12 },
  f7b5: { kind: 'ir', hi: 30, lo: 30 },
  funct7: { kind: 'ir', hi: 31, lo: 25 },
};

export function inputWidth(input: InputVar, stepBits = 0): number {
  if (input.kind === 'ir') return input.hi - input.lo + 1;
  if (input.kind === 'flag') return 1;
  return stepBits;
}

export function sameInput(a: InputVar, b: InputVar): boolean {
  if (a.kind === 'ir' && b.kind === 'ir') return a.hi === b.hi && a.lo === b.lo;
  if (a.kind === 'flag' && b.kind === 'flag') return a.name === b.name;
  return a.kind === b.kind;
}
