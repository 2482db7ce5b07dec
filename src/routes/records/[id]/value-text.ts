// Plain-text forms of the figures a check may carry, for fields this page has no layout of its own for.
import { formatNumber } from '$lib/components/charts/number-format';

/** Longest list of numbers written out inline; longer ones are summarised and listed on demand. */
export const INLINE_LIST_MAX = 12;

export function isRowList(v: unknown): v is Record<string, unknown>[] {
  return (
    Array.isArray(v) &&
    v.length > 0 &&
    v.every((r) => r !== null && typeof r === 'object' && !Array.isArray(r))
  );
}

export function isPlainObject(v: unknown): v is Record<string, unknown> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

/** A scalar or a short list as text; null for values that need a table or a nested list. */
export function scalarText(v: unknown): string | null {
  if (v === null) return '—';
  if (typeof v === 'number') return formatNumber(v, 4);
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'string') return v;
  if (Array.isArray(v) && v.every((x) => typeof x !== 'object' || x === null)) {
    return v.map((x) => scalarText(x)).join(', ');
  }
  // a list of short tuples, e.g. node numbers per facet: (1, 2), (2, 3)
  if (
    Array.isArray(v) &&
    v.every((x) => Array.isArray(x) && x.every((y) => typeof y !== 'object' || y === null))
  ) {
    return v.map((x) => `(${scalarText(x)})`).join(', ');
  }
  return null;
}

/**
 * Where known columns go: what a row is (variant, shape, load, mesh), then its size, then the figures
 * and their reference. Records are stored as canonical JSON with keys sorted, so key order says nothing.
 */
const COLUMN_ORDER = [
  'variant',
  'shape',
  'load',
  'mesh',
  'divisions',
  'h',
  'dofs',
  'maxResidual',
  'maxDisplacementError',
  'maxStressError',
  'computed',
  'theoretical',
  'ratio',
  'value',
  'corner',
  'reference'
];

/** Columns of a list of rows: the known ones in COLUMN_ORDER, then any others in order of first appearance. */
export function columnsOf(rows: Record<string, unknown>[]): string[] {
  const seen: string[] = [];
  for (const r of rows) for (const k of Object.keys(r)) if (!seen.includes(k)) seen.push(k);
  const rank = (k: string) => {
    const i = COLUMN_ORDER.indexOf(k);
    return i < 0 ? COLUMN_ORDER.length : i;
  };
  return seen
    .map((k, i) => ({ k, i }))
    .sort((a, b) => rank(a.k) - rank(b.k) || a.i - b.i)
    .map((e) => e.k);
}

/** Column names whose meaning the plain words of the key would hide. */
const LABELS: Record<string, string> = { ratio: 'computed / theoretical' };

/** fieldName or field-name → "field name". */
export function fieldLabel(key: string): string {
  if (LABELS[key]) return LABELS[key];
  return key
    .replace(/[-_]+/g, ' ')
    .replace(/([a-z0-9])([A-Z])/g, '$1 $2')
    .toLowerCase();
}
