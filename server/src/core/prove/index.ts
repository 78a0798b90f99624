// The prover (issue 16): symbolic execution of the encoded control store against the RV32I
// semantics, obligations as SMT-LIB 2 QF_BV scripts, verdicts from a solver behind `Solver`.
// Pure: the adapters give the solver (the CLI spawns z3).
export { cannotProve, decideObligations, describeCounterexample, obligationsOf, proveInstruction, proveMachine, type BoundedPath, type Counterexample, type InstructionResult, type Obligation, type Unrolled, type Verdict } from './prove';
export { proofPlan, WALK_LIMITS, type WalkLimits } from './execute';
export { readSolverOutput, smtScript, type Solver, type SolverReply } from './smtlib';
export { proveTable, proofCounts, newProofCache, summarise, PROOF_SCOPE, type ProofCache, type TableProof, type VerdictSummary } from './proveTable';
