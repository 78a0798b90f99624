// Code lenses: one line above each class saying how many steps its instructions take (counted
// from its control flow, flow/cycleCounts.ts) and which RV32I instructions select it, so a
// reader sees the class's reach and cost without leaving the table. The lenses carry no
// command: they inform, they do not act.
import type { Analysis } from '../analysis';
import { cycleCountsOf, cyclesSummary } from '../flow/cycleCounts';
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import type { Span } from '../text/span';

export interface ClassLens {
  span: Span;
  title: string;
  className: string;
}

export function classLenses(analysis: Analysis): ClassLens[] {
  const counts = cycleCountsOf(analysis.machine);
  return analysis.machine.classes.map((cls, i) => {
    const instructions = RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode).map((s) => s.mnemonic);
    const reach = cls.opcode === undefined ? 'no opcode' : instructions.length ? `instructions: ${instructions.join(', ')}` : 'no RV32I instruction (custom opcode)';
    return { span: cls.symbol.declSpan, title: `${cyclesSummary(counts[i])} · ${reach}`, className: cls.name };
  });
}
