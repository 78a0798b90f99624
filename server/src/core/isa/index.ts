// The RV32I layer in one import: instruction table and field decoders (rv32i), disassembler
// (disasm), sparse memory (memory), system-call environment (environment), ELF and raw loaders
// (elf), the reference interpreter (interp) and the semantics table (semantics). See each module's header for its API and limits.
// This barrel adds nothing of its own.
export * from './rv32i';
export * from './disasm';
export * from './memory';
export * from './environment';
export * from './elf';
export {
  Rv32iReference,
  createReferenceMachine,
  describeStop,
  type CreateMachineResult,
  type ReferenceMachineOptions,
  type RunResult,
  type StepResult,
  type StopReason,
} from './interp';
export {
  SEMANTICS,
  SEMANTICS_INPUTS,
  IMMEDIATES,
  REGISTER_FIELDS,
  describeEffect,
  effectOf,
  evaluateEffect,
  parseSemanticsRow,
  semanticsProblems,
  type Effect,
  type EffectInputs,
  type EffectOutcome,
  type SemanticsRow,
} from './semantics';
