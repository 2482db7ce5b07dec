// Compare two versions of a formulation: the unified diff of the sources, the paths of the parsed
// definition whose values differ, and every check's metric in the two versions' records.
import { createTwoFilesPatch } from 'diff';
import type { Viewer } from './access';
import { malformed } from './errors';
import { verificationOf } from './formulations';
import { checkVersion } from './semver-order';
import { visibleVersion } from './versions';
import { recordChecks, type RecordCheck } from './verification';

/** Derived from `shape`, so a change there is already reported; listing it would only repeat it. */
const DERIVED_FIELDS = new Set(['derivatives']);

export interface CheckSide {
  status: string;
  metric: number | null;
}

export interface CheckComparison {
  id: string;
  required: boolean;
  before: CheckSide | null;
  after: CheckSide | null;
}

export interface Comparison {
  name: string;
  from: { version: string; status: string; definitionHash: string; recordId: string | null };
  to: { version: string; status: string; definitionHash: string; recordId: string | null };
  source: string;
  definition: string[];
  checks: CheckComparison[];
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Paths (`shape[2]`, `material.E`, `quadrature`) whose values differ between two parsed definitions. */
export function changedPaths(a: unknown, b: unknown, path = '', out: string[] = []): string[] {
  if (Array.isArray(a) && Array.isArray(b)) {
    const n = Math.max(a.length, b.length);
    for (let i = 0; i < n; i++) {
      const p = `${path}[${i}]`;
      if (i >= a.length || i >= b.length) out.push(p);
      else changedPaths(a[i], b[i], p, out);
    }
    return out;
  }
  if (isObject(a) && isObject(b)) {
    const keys = [...new Set([...Object.keys(a), ...Object.keys(b)])].sort();
    for (const k of keys) {
      if (path === '' && DERIVED_FIELDS.has(k)) continue;
      const p = path ? `${path}.${k}` : k;
      if (!(k in a) || !(k in b)) out.push(p);
      else changedPaths(a[k], b[k], p, out);
    }
    return out;
  }
  if (!Object.is(a, b)) out.push(path || '(document)');
  return out;
}

/** The one figure of a check that a reader compares: `metric`, else the spurious-mode count, else the observed energy-norm order. */
export function metricOf(check: RecordCheck): number | null {
  if (typeof check.metric === 'number') return check.metric;
  if (typeof check.spurious === 'number') return check.spurious;
  const observed = check.observed as { energy?: unknown } | undefined;
  if (observed && typeof observed.energy === 'number') return observed.energy;
  return null;
}

export function compareChecks(before: RecordCheck[], after: RecordCheck[]): CheckComparison[] {
  const ids: string[] = [];
  for (const c of [...before, ...after]) if (!ids.includes(c.id)) ids.push(c.id);
  const side = (c: RecordCheck | undefined): CheckSide | null =>
    c ? { status: c.status, metric: metricOf(c) } : null;
  return ids.map((id) => {
    const b = before.find((c) => c.id === id);
    const a = after.find((c) => c.id === id);
    return { id, required: Boolean((a ?? b)?.required), before: side(b), after: side(a) };
  });
}

export async function compareVersions(
  viewer: Viewer,
  name: string,
  from: string | null,
  to: string | null
): Promise<Comparison> {
  if (!from || !to)
    throw malformed('compare needs both versions: ?from=MAJOR.MINOR.PATCH&to=MAJOR.MINOR.PATCH', {
      field: from ? 'to' : 'from'
    });
  checkVersion(from);
  checkVersion(to);
  const a = await visibleVersion(viewer, name, from);
  const b = await visibleVersion(viewer, name, to);
  const [ra, rb] = [await verificationOf(a), await verificationOf(b)];
  const source = createTwoFilesPatch(
    `${name}@${from}`,
    `${name}@${to}`,
    a.source,
    b.source,
    undefined,
    undefined,
    { context: 3 }
  );
  return {
    name,
    from: {
      version: a.version,
      status: a.status,
      definitionHash: a.definition_hash,
      recordId: ra?.recordId ?? null
    },
    to: {
      version: b.version,
      status: b.status,
      definitionHash: b.definition_hash,
      recordId: rb?.recordId ?? null
    },
    source,
    definition: changedPaths(JSON.parse(a.definition), JSON.parse(b.definition)),
    checks: compareChecks(
      ra ? await recordChecks(ra.recordId) : [],
      rb ? await recordChecks(rb.recordId) : []
    )
  };
}
