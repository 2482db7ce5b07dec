// The structure of a document as zod schemas. zod checks types and fields; the meaning of the
// values (counts, cells, expressions) is checked afterwards, field by field, in parse.ts.
import { z } from 'zod';
import type { PathPart } from './yaml-tree';

/** An expression written as text, or a plain YAML number. */
const expression = z.union([z.string(), z.number()]);

export const DOCUMENT_FIELDS = [
  'format',
  'name',
  'title',
  'summary',
  'cell',
  'coordinates',
  'nodes',
  'definitions',
  'shape',
  'strain',
  'quadrature',
  'material',
  'thickness',
  'area'
] as const;
export const REQUIRED_FIELDS = [
  'format',
  'name',
  'title',
  'cell',
  'nodes',
  'shape',
  'strain',
  'quadrature'
] as const;
export const CUSTOM_STRAIN_FIELDS = [
  'dofs',
  'components',
  'B',
  'D',
  'weight',
  'rigid_modes',
  'patch',
  'convergence'
] as const;

export const documentSchema = z.strictObject({
  format: z.number(),
  name: z.string(),
  title: z.string(),
  summary: z.string().optional(),
  cell: z.string(),
  coordinates: z.array(z.string()).optional(),
  nodes: z.array(z.array(expression)),
  definitions: z.array(z.string()).optional(),
  shape: z.array(expression),
  // both are unions with their own messages; checked by hand after their kind is known
  strain: z.unknown(),
  quadrature: z.unknown(),
  material: z.strictObject({ E: expression.optional(), nu: expression.optional() }).optional(),
  thickness: expression.optional(),
  area: expression.optional()
});

export const customStrainSchema = z.strictObject({
  dofs: z.array(z.string()),
  components: z.array(z.string()),
  B: z.string(),
  D: z.string(),
  weight: expression.optional(),
  rigid_modes: z.array(z.string()),
  patch: z.strictObject({ displacement: z.array(expression) }).optional(),
  convergence: z
    .strictObject({ displacement: z.array(expression), body_force: z.array(expression) })
    .optional()
});

export const quadratureSchemas = {
  gauss: z.strictObject({ rule: z.literal('gauss'), points: z.number() }),
  simplex: z.strictObject({ rule: z.literal('simplex'), degree: z.number() }),
  explicit: z.strictObject({ rule: z.literal('explicit'), points: z.array(z.array(expression)) })
};

/** Fields a mapping at `path` allows, for "unknown field" messages. */
export function allowedFields(path: readonly PathPart[], value: unknown): readonly string[] {
  const p = path.join('.');
  if (p === '') return DOCUMENT_FIELDS;
  if (p === 'strain') return CUSTOM_STRAIN_FIELDS;
  if (p === 'strain.patch') return ['displacement'];
  if (p === 'strain.convergence') return ['displacement', 'body_force'];
  if (p === 'material') return ['E', 'nu'];
  if (p === 'quadrature') {
    const rule = (value as { rule?: unknown } | undefined)?.rule;
    return rule === 'gauss'
      ? ['rule', 'points']
      : rule === 'simplex'
        ? ['rule', 'degree']
        : ['rule', 'points'];
  }
  return [];
}

/** "a number", "text", "a list", "a mapping" */
export function describeValue(value: unknown): string {
  if (value === null || value === undefined) return 'empty';
  if (Array.isArray(value)) return 'a list';
  switch (typeof value) {
    case 'string':
      return `the text '${value.length > 40 ? value.slice(0, 40) + '…' : value}'`;
    case 'number':
      return `the number ${value}`;
    case 'boolean':
      return `the value ${value}`;
    case 'object':
      return 'a mapping';
    default:
      return typeof value;
  }
}

const EXPECTED: Record<string, string> = {
  string: 'text',
  number: 'a number',
  int: 'a whole number',
  array: 'a list',
  object: 'a mapping',
  boolean: 'true or false'
};

export function expectedPhrase(expected: string): string {
  return EXPECTED[expected] ?? expected;
}

/** Follows a path into a plain value. */
export function valueAt(root: unknown, path: readonly PathPart[]): unknown {
  let v: unknown = root;
  for (const part of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = Object.prototype.hasOwnProperty.call(v, part)
      ? (v as Record<string | number, unknown>)[part]
      : undefined;
  }
  return v;
}
