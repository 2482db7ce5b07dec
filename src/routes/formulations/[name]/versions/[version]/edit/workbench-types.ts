// The shapes the workbench reads from the validation route (type-only: nothing of the server is bundled).
export type { Diagnostic, Definition } from '@isoledger/formulation';
export type { FieldSymbols, ShapePreview, ValidationResult } from '$lib/server/preview';
export type { RunView as RunState } from '$lib/server/runs/view';
export type { VersionDetail } from '$lib/server/registry/versions';
