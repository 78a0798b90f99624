// Public surface of the logic layer: truth tables, minimisation, GAL fitting, JEDEC fuse maps
// and equation output. It deliberately re-exports only what other layers (the CLI's `fit`
// command, the language server) need; the algorithms' internals stay in their modules.
export { LogicInputError, LogicInvariantError } from './errors';
export {
  MAX_TABLE_INPUTS,
  type ProductTerm,
  type TableOutput,
  type TableValue,
  type TruthTable,
  type CoverCheck,
  createTruthTable,
  tableFromFunction,
  setValue,
  getValue,
  outputIndexOf,
  evaluateCover,
  verifyCover,
  countMinterms,
} from './truthTable';
export { MAX_EXACT_INPUTS } from './qm';
export { type MinimiseOptions, type MinimiseMethod, type MinimisedOutput, type Minimised, minimise, distinctTermCount } from './minimise';
export type { DeviceName, DeviceSpec, DeviceModeSpec, OutputCellSpec, DevicePlan, PinLevel } from './devices/device';
export { gal16v8 } from './devices/gal16v8';
export { gal22v10 } from './devices/gal22v10';
export {
  DEVICES,
  TOO_BIG_OPTIONS,
  type FitOptions,
  type FitResult,
  type FitProblem,
  type FitProblemKind,
  type FittedDevice,
  type FittedInput,
  type FittedOutput,
  fitDevices,
} from './fit';
export { DEFAULT_MAX_VECTORS, type GalImage, type GalImageOptions, type ImageCheck, buildGalImage, checkGalImage, fuseMapLevels, testVectors } from './galImage';
export {
  type JedecFile,
  type JedecReadResult,
  type JedecVector,
  type JedecWriteOptions,
  fuseChecksum,
  readJedec,
  transmissionChecksum,
  writeJedec,
} from './jedec';
export { type EquationInput, type EquationNames, coverExpr, equationNames, equationsText, verilogModule } from './equations';
export { type EquationsRead, type ReadEquation, equationsLevels, readEquations } from './readEquations';
export { type BitRole, type StoreSafety, type WordBit, type WordHazards, storeSafety, wordHazards } from './safeCare';
export {
  type FittedLevels,
  type SafetyReport,
  type UnsafeAddress,
  coverLevels,
  describeHazards,
  equationsTextLevels,
  fuseMapsLevels,
  minimisedLevels,
  verifyFitSafety,
} from './verifyFit';
