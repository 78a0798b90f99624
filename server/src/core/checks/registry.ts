// The checks that run, in order. Adding a check: write checks/<name>.ts exporting a Check,
// add its codes to catalogue.ts and docs/diagnostics.md, add a fault example, list it here.
import type { Check } from './context';
import { addressLoop } from './addressLoop';
import { bitOverlap } from './bitOverlap';
import { busContention } from './busContention';
import { chipCapacity } from './chipCapacity';
import { classEnd } from './classEnd';
import { microLoop } from './microLoop';
import { loopExit } from './loopExit';
import { jumpOutside } from './jumpOutside';
import { stepUnreachable } from './stepUnreachable';
import { callReturn } from './callReturn';
import { returnDepth } from './returnDepth';
import { nextStepUnknown } from './nextStepUnknown';
import { classOpcode } from './classOpcode';
import { clockConflict } from './clockConflict';
import { fieldConflict } from './fieldConflict';
import { guardCoverage } from './guardCoverage';
import { instructionCoverage } from './instructionCoverage';
import { mapOverlap } from './mapOverlap';
import { notAddressable } from './notAddressable';
import { placementWidth } from './placementWidth';
import { rdWithoutField } from './rdWithoutField';
import { repeatedStrobe } from './repeatedStrobe';
import { stepRange } from './stepRange';
import { storeAmbiguous } from './storeAmbiguous';
import { entryReach } from './entryReach';
import { undrivenLatch } from './undrivenLatch';
import { unplacedSignal } from './unplacedSignal';
import { unusedName } from './unusedName';
import { x0StoredWrite } from './x0StoredWrite';
import { x0Write } from './x0Write';
import { strobeOverload } from './strobeOverload';
import { busOverload } from './busOverload';
import { supplyBudget } from './supplyBudget';
import { stepTiming } from './stepTiming';

export const checks: Check[] = [
  busContention,
  fieldConflict,
  repeatedStrobe,
  clockConflict,
  x0Write,
  rdWithoutField,
  x0StoredWrite,
  undrivenLatch,
  classOpcode,
  instructionCoverage,
  classEnd,
  microLoop,
  loopExit,
  jumpOutside,
  stepUnreachable,
  callReturn,
  returnDepth,
  nextStepUnknown,
  stepRange,
  guardCoverage,
  addressLoop,
  mapOverlap,
  bitOverlap,
  placementWidth,
  unplacedSignal,
  chipCapacity,
  notAddressable,
  storeAmbiguous,
  entryReach,
  strobeOverload,
  busOverload,
  supplyBudget,
  stepTiming,
  unusedName,
];
