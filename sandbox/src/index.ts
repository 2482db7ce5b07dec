// @isoledger/sandbox: the only place compiled formulation expressions run, inside isolated-vm isolates.
export { SandboxPool } from './pool';
export type { SandboxOptions, EvaluateOptions } from './pool';
export { SandboxError } from './errors';
export type { SandboxErrorCode } from './errors';
export { compileDefinition, programKey, FIELD_REFS } from './compile';
export type { FieldRef, CompiledProgram, CompiledField } from './compile';
export type { Tabulation } from './tabulation';
