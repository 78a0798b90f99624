// Code lenses: one line above each class saying how many steps its instructions take (counted
// from its control flow, flow/cycleCounts.ts) and which RV32I instructions select it, so a
// reader sees the class's reach and cost without leaving the table; once the document's proof
// has run, how many of those instructions it proved (`proved 9/9`). The lenses carry no
// command: they inform, they do not act.
import type { Analysis } from '../analysis';
import { cycleCountsOf, cyclesSummary } from '../flow/cycleCounts';
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import type { Span } from '../text/span';
import { proofLensTitle, type DocumentProof } from './proofView';

export interface ClassLens {
  span: Span;
  title: string;
  className: string;
}

export function classLenses(analysis: Analysis, proof?: DocumentProof): ClassLens[] {
  const counts = cycleCountsOf(analysis.machine);
  return analysis.machine.classes.map((cls, i) => {
    const instructions = RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode).map((s) => s.mnemonic);
    const reach = cls.opcode === undefined ? 'no opcode' : instructions.length ? `instructions: ${instructions.join(', ')}` : 'no RV32I instruction (custom opcode)';
    const proved = proofLensTitle(cls, proof);
    return { span: cls.symbol.declSpan, title: `${cyclesSummary(counts[i])} · ${reach}${proved ? ` · ${proved}` : ''}`, className: cls.name };
  });
}
