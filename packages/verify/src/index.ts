/**
 * @isoledger/verify: the verification engine. Every check of verification.md on any valid
 * formulation document, one reproducible record per run, and the `isoledger verify` command.
 * A passing record is evidence that the checks hold, not approval for use.
 */
export {
  ENGINE_VERSION,
  STAGES,
  RECORD_NOTICE,
  verdictOf,
  recordHash,
  jsonSafe,
  type CheckStatus,
  type CheckResult,
  type VerificationRecord,
  type Progress
} from './record';
export {
  verifyDefinition,
  verifySource,
  checkPlan,
  InvalidDocumentError,
  type VerifyOptions,
  type VerifySourceOptions,
  type StageTiming
} from './engine';
export {
  verifyCommand,
  formatRecord,
  figureOf,
  VERIFY_USAGE,
  type CommandIO,
  type CommandStream
} from './command';
export { manufacturedField, type ManufacturedField } from './manufactured';
