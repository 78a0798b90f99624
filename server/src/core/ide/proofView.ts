// What the editor shows of a class's proof: a code-lens title (`proved 9/9`) and hover lines with
// each instruction's verdict and the proof's scope. The verdicts come from the proof worker
// (lsp/proofWorker.ts) for the same document version; undefined means no proof has finished for
// this version yet (or proofs are off), and the views then say nothing rather than guess.
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import type { ClassDef } from '../model/types';
import { PROOF_SCOPE, type VerdictSummary } from '../prove/proveTable';

/** The proof of a document version as the views read it. */
export interface DocumentProof {
  /** Why nothing was proved, when that is so. */
  readonly unavailable?: string;
  readonly verdicts: readonly VerdictSummary[];
}

function verdictsOf(cls: ClassDef, proof: DocumentProof): VerdictSummary[] {
  const mnemonics = new Set(RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode).map((s) => s.mnemonic));
  return proof.verdicts.filter((v) => mnemonics.has(v.mnemonic));
}

/** `proved 9/9`, `refuted 2 of 10 (slt, sltu)`, `proved 3/4, 1 unknown`; undefined for a class with no RV32I instruction. */
export function proofLensTitle(cls: ClassDef, proof: DocumentProof | undefined): string | undefined {
  if (!proof || proof.unavailable) return undefined;
  const verdicts = verdictsOf(cls, proof);
  if (!verdicts.length) return undefined;
  const refuted = verdicts.filter((v) => v.kind === 'refuted').map((v) => v.mnemonic);
  const unknown = verdicts.filter((v) => v.kind === 'unknown').length;
  const proved = verdicts.length - refuted.length - unknown;
  if (refuted.length) return `refuted ${refuted.length} of ${verdicts.length} (${refuted.join(', ')})`;
  return `proved ${proved}/${verdicts.length}${unknown ? `, ${unknown} unknown` : ''}`;
}

/** Hover lines: the proved instructions on one line, each other verdict on its own with its reason, then what the proof covers. */
export function proofHoverLines(cls: ClassDef, proof: DocumentProof | undefined): string[] {
  if (!proof) return [];
  if (proof.unavailable) return [`- **proof** not run: ${proof.unavailable}`];
  const verdicts = verdictsOf(cls, proof);
  if (!verdicts.length) return [];
  const proved = verdicts.filter((v) => v.kind === 'proved');
  const times = proved.map((v) => v.milliseconds);
  const spread = times.length ? ` (${Math.min(...times) === Math.max(...times) ? Math.min(...times) : `${Math.min(...times)}-${Math.max(...times)}`} ms each)` : '';
  const lines = [`- **proof** ${proved.length} of ${verdicts.length} proved for all operand values, against the RISC-V Unprivileged ISA${proved.length ? `: ${proved.map((v) => v.mnemonic).join(', ')}${spread}` : ''}`];
  for (const v of verdicts) if (v.kind !== 'proved') lines.push(`  - ${v.mnemonic}: **${v.kind}**${v.detail ? ` — ${v.detail}` : ''}`);
  lines.push(`- **proof covers** ${PROOF_SCOPE}`);
  return lines;
}
