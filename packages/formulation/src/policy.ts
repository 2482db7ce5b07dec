import { CELL_FACTS } from './cells';
import type { ExpressionPolicy } from './expression';
import { AUTHOR_FUNCTIONS, DERIVATIVE_FUNCTIONS, PRINTED_EXPRESSION_LIMITS } from './limits';
import { symbolsForField } from './symbols';
import type { CellName, ExpressionField } from './types';

const MATRIX_FIELDS: ReadonlySet<ExpressionField> = new Set(['B', 'D', 'rigid_modes']);

/**
 * The whitelist of one field of a parsed definition (shape functions with the definitions already
 * written out, derivatives with the functions differentiation introduces, B, D and the rest).
 */
export function policyForField(
  cell: CellName,
  coordinates: readonly string[],
  field: ExpressionField,
  label: string = field
): ExpressionPolicy {
  const symbols = symbolsForField(cell, coordinates, field);
  const facts = CELL_FACTS[cell];
  const hint =
    field === 'shape' || field === 'derivatives' || field === 'definitions'
      ? `${facts.phrase} has coordinates ${coordinates.join(', ')}`
      : symbols.length === 1
        ? `${label} is a constant: only numbers, pi and the allowed functions`
        : `${label} may use ${symbols.join(', ')}`;
  return {
    symbols: new Set(symbols),
    symbolHint: hint,
    functions: field === 'derivatives' ? DERIVATIVE_FUNCTIONS : AUTHOR_FUNCTIONS,
    matrices: MATRIX_FIELDS.has(field),
    assignment: false,
    constantExponents: field === 'shape',
    fieldLabel: label,
    // a definition's shape functions have the helpers written out, and derivatives nest deeper still
    ...(field === 'shape' || field === 'derivatives' ? { maxNesting: PRINTED_EXPRESSION_LIMITS.nodes } : {})
  };
}
