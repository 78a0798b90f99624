// not-addressable: everything the table depends on must reach some store's address lines:
// guard and map inputs (instruction bits, flags), the opcode bits that tell classes apart, and
// the step counter when classes have more than one step. A ROM cannot react to what it
// cannot see. Whether each store sees enough for its own signals is store-ambiguous's job.
import type { InputVar } from '../model/types';
import type { Span } from '../text/span';
import { type Check, writtenAlternatives } from './context';
import { cubeOfBits } from './inputSpace';

export const notAddressable: Check = {
  codes: ['not-addressable'],
  run(ctx) {
    const machine = ctx.machine;
    if (!machine.stores.some((s) => s.address)) {
      if (machine.classes.length > 0) {
        ctx.report('not-addressable', machine.classes[0].symbol.span, 'the file declares no address layout, so the control store cannot tell steps or instructions apart; add one, e.g. `address 13` with `step 0..2  opcode 8..12`');
      }
      return;
    }
    let irVisible = 0;
    const flagsVisible = new Set<string>();
    let stepVisible = false;
    for (const store of machine.stores) {
      for (const s of store.address?.sources ?? []) {
        if (s.input.kind === 'ir') irVisible |= cubeOfBits(s.input.hi, s.input.lo, '0'.repeat(s.input.hi - s.input.lo + 1)).mask;
        else if (s.input.kind === 'flag') flagsVisible.add(s.input.name);
        else if (s.input.kind === 'step') stepVisible = true;
      }
    }
    irVisible >>>= 0;
    const reported = new Set<string>();
    const need = (input: InputVar, label: string, at: Span, use: string) => {
      if (input.kind === 'flag' && flagsVisible.has(input.name)) return;
      if (input.kind === 'ir') {
        const mask = cubeOfBits(input.hi, input.lo, '0'.repeat(input.hi - input.lo + 1)).mask;
        if (((mask & irVisible) >>> 0) === mask) return;
      }
      if (input.kind === 'step') return;
      const key = `${label}@${at.start}`;
      if (reported.has(key)) return;
      reported.add(key);
      ctx.report('not-addressable', at, `${use} tests \`${label}\`, but no store's address lines carry it, so the ROM cannot react to it; add \`${label}\` to an address layout`);
    };
    for (const { alt, owner } of writtenAlternatives(machine)) {
      for (const lit of alt.guard ?? []) need(lit.input, lit.label, lit.span, `step ${alt.step} of ${owner}`);
    }
    for (const map of machine.maps.values()) for (const input of map.inputs) need(input.input, input.label, input.span, `map ${map.name}`);
    const classesWithOpcode = machine.classes.filter((c) => c.opcode !== undefined);
    if (classesWithOpcode.length > 1) {
      const opcodeMask = cubeOfBits(6, 2, '00000').mask;
      if (((irVisible & opcodeMask) >>> 0) !== opcodeMask) {
        ctx.report('not-addressable', classesWithOpcode[0].opcodeSpan!, 'the classes differ by opcode, but no store\'s address lines carry all of opcode bits 6..2; add `opcode` (5 lines) to the address layout');
      }
    }
    if (!stepVisible && machine.classes.some((c) => c.steps.size > 1)) {
      const cls = machine.classes.find((c) => c.steps.size > 1)!;
      ctx.report('not-addressable', cls.symbol.span, `class ${cls.name} has several steps, but no store's address lines carry the step counter; add \`step\` lines to the address layout`);
    }
  },
};
