import { type Definition, type ExpressionField, symbolsForField } from '@isoledger/formulation';

/** The symbols a field of the document may use (the format's own list), so the sandbox sees no others. */
export function symbolsOfField(def: Definition, field: string): string[] {
  return symbolsForField(def.cell, def.coordinates, field as ExpressionField);
}
