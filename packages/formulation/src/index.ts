// @isoledger/formulation: the formulation document (formulation-format.md), parsed, validated,
// differentiated and hashed. Pure: nothing here runs user expressions; that is @isoledger/sandbox.
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
export { parseFormulation } from './parse';
export { canonicalJson, definitionHash, sourceHash, meaningOf, printExpression } from './canonical';
export { symbolsForField, RESERVED_NAMES, NAME_PATTERN } from './symbols';
export {
  FORMAT_LIMITS,
  PRINTED_EXPRESSION_LIMITS,
  ALLOWED_FUNCTIONS,
  DERIVED_FUNCTIONS,
  AUTHOR_FUNCTIONS,
  DERIVATIVE_FUNCTIONS,
  MATH_TABLE,
  CELLS
} from './limits';
export type { Arity } from './limits';
export { CELL_FACTS, STRAIN_KINDS, STRAIN_DIMENSION, insideCell } from './cells';
export { checkExpression, parseExpressionText, bracketDepth, Locator, AUTHOR_LIMITS } from './expression';
export { policyForField } from './policy';
export type { ExpressionPolicy, ExpressionProblem, ValueShape, TextLimits } from './expression';
export { loadCatalogue, CATALOGUE_DIR } from './catalogue';
