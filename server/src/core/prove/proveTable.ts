// Proving a whole table for `check` and the editor: every RV32I instruction's verdict and the
// diagnostics they give (proofDiagnostics.ts). The same script gets the same answer, so a cache
// keyed by an instruction's scripts lets an edit re-decide only the instructions whose
// obligations it changed: an edit in one class leaves the other classes' scripts, and with them
// their verdicts, as they were. The symbolic walk still runs for every instruction (about 160 ms
// for the demo's 40 once warm); the solver, which costs the seconds, runs only for what changed.
// `cancelled` is asked between instructions, so a newer edit stops a proof that is out of date.
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import type { Machine } from '../model/types';
import type { Diagnostic } from '../text/diagnostic';
import { previousInstructionPatterns, proofPlan } from './execute';
import { proofDiagnostics, unavailableDiagnostic } from './proofDiagnostics';
import { cannotProve, decideObligations, obligationsOf, type InstructionResult, type Verdict } from './prove';
import type { Solver } from './smtlib';

/** What a proof covers and what it does not (the docs, the hover and the CLI say it in these words). */
export const PROOF_SCOPE = 'the table over the datapath as described, for RV32I in user mode (pc aligned, no misaligned-address exceptions); not the wiring, the timing or electrical faults of the board';

export interface TableProof {
  /** Why nothing was proved (a machine the prover cannot run), or undefined. */
  readonly unavailable?: string;
  /** Per instruction, in the order of rv32i.ts; `reused` when the cache answered. */
  readonly results: readonly (InstructionResult & { readonly reused?: boolean })[];
  /** Proof diagnostics (codes proof-refuted and proof-incomplete) at default severities. */
  readonly diagnostics: Diagnostic[];
}

/** Verdicts by the scripts that decided them: a few per instruction (an edit back and forth hits). */
export interface ProofCache {
  readonly byInstruction: Map<string, { key: string; verdict: Verdict }[]>;
}

const KEPT_PER_INSTRUCTION = 3;

export function newProofCache(): ProofCache {
  return { byInstruction: new Map() };
}

export interface ProveTableOptions {
  readonly cache?: ProofCache;
  /** Asked between instructions; true stops the proof (the result is then undefined). */
  readonly cancelled?: () => boolean;
  readonly now?: () => number;
  /** Only these mnemonics (the CLI's --instruction); all 40 by default. */
  readonly only?: readonly string[];
  /** Called before each instruction: how many are done of how many, and the next one's mnemonic. */
  readonly onProgress?: (done: number, total: number, mnemonic: string) => void;
}

/**
 * Proves every instruction of a table that has no errors (the caller checks that: a table with
 * errors has no meaning to prove). Undefined when cancelled.
 */
export async function proveTable(machine: Machine, solver: Solver, options: ProveTableOptions = {}): Promise<TableProof | undefined> {
  const now = options.now ?? (() => Date.now());
  const built = proofPlan(machine);
  const why = built.ok ? cannotProve(built.plan) : built.errors.join('; ');
  // A table that is not a whole processor (no pc, no memory...) gets a note; a processor the
  // prover does not follow gets the warning: its builder expects a proof and has none.
  if (!built.ok) return { unavailable: why, results: [], diagnostics: [unavailableDiagnostic(machine, why!, 'info')] };
  if (why) return { unavailable: why, results: [], diagnostics: [unavailableDiagnostic(machine, why, 'warning')] };
  const plan = built.plan;
  const previous = previousInstructionPatterns(plan);
  const results: (InstructionResult & { reused?: boolean })[] = [];
  const specs = RV32I_INSTRUCTIONS.filter((s) => !options.only || options.only.includes(s.mnemonic));
  for (const spec of specs) {
    if (options.cancelled?.()) return undefined;
    options.onProgress?.(results.length, specs.length, spec.mnemonic);
    const t0 = now();
    let verdict: Verdict;
    let reused = false;
    try {
      const obligations = obligationsOf(plan, spec, previous);
      const key = [...obligations.obligations.map((o) => o.script), '\u0000', ...obligations.bounded.map((b) => b.script), '\u0000', obligations.settled ? JSON.stringify(obligations.settled) : ''].join('\u0001');
      const kept = options.cache?.byInstruction.get(spec.mnemonic) ?? [];
      const hit = kept.find((k) => k.key === key);
      if (hit) {
        verdict = hit.verdict;
        reused = true;
      } else {
        verdict = await decideObligations(obligations, solver);
        // An unknown may be the solver's load (a timeout): ask again next time rather than remember it.
        if (options.cache && verdict.kind !== 'unknown') options.cache.byInstruction.set(spec.mnemonic, [{ key, verdict }, ...kept].slice(0, KEPT_PER_INSTRUCTION));
      }
    } catch (e) {
      verdict = { kind: 'unknown', reason: `the prover failed: ${(e as Error).message}` };
    }
    results.push({ mnemonic: spec.mnemonic, verdict, milliseconds: now() - t0, ...(reused && { reused }) });
  }
  return { results, diagnostics: proofDiagnostics(machine, plan, results) };
}

/** `proved`, `refuted` and `unknown` counts of some results. */
export function proofCounts(results: readonly InstructionResult[]): { proved: number; refuted: number; unknown: number } {
  const n = (k: Verdict['kind']) => results.filter((r) => r.verdict.kind === k).length;
  return { proved: n('proved'), refuted: n('refuted'), unknown: n('unknown') };
}

/** One instruction's verdict as the editor shows it (plain data: it crosses from the proof worker). */
export interface VerdictSummary {
  readonly mnemonic: string;
  readonly kind: Verdict['kind'];
  readonly milliseconds: number;
  /** Why it is unknown, or which case refutes it. */
  readonly detail?: string;
}

export function summarise(results: readonly InstructionResult[]): VerdictSummary[] {
  return results.map((r) => ({
    mnemonic: r.mnemonic,
    kind: r.verdict.kind,
    milliseconds: r.milliseconds,
    ...(r.verdict.kind === 'unknown' && { detail: r.verdict.reason }),
    ...(r.verdict.kind === 'refuted' && { detail: r.verdict.description }),
  }));
}
