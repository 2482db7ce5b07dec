// The parts of @isoledger/formulation with no Node.js imports, for the browser workbench
// (completion lists, limits, the function whitelist). Parsing and hashing run on the server.
export { symbolsForField, RESERVED_NAMES, NAME_PATTERN } from './symbols';
export { FORMAT_LIMITS, ALLOWED_FUNCTIONS } from './limits';
export { CELL_FACTS, STRAIN_KINDS, STRAIN_DIMENSION } from './cells';
export type {
  CellName,
  CustomStrain,
  Definition,
  Diagnostic,
  ExpressionField,
  ParseResult,
  Quadrature,
  StrainKind
} from './types';
