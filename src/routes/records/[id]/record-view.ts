// How the record page reads a verification record (verification.md): which section each check belongs
// to, what its metric means, how its tolerance is written, and which of its fields are extras.
import type { CheckResult, VerificationRecord } from '@isoledger/verify';
import { formatNumber } from '$lib/components/charts/number-format';
import type { StatusTone } from '$lib/components/shell/status-mark.svelte';

export type { CheckResult, VerificationRecord };

export type SectionKey = 'shape' | 'element' | 'patch' | 'convergence' | 'benchmarks' | 'other';

export interface SectionInfo {
  key: SectionKey;
  title: string;
  about: string;
}

export const SECTIONS: readonly SectionInfo[] = [
  {
    key: 'shape',
    title: 'Shape functions',
    about: 'On the reference cell, before any geometry: interpolation, completeness and conformity.'
  },
  {
    key: 'element',
    title: 'Element',
    about:
      'One physical element, the reference cell mapped to a regular and to a distorted shape: Jacobian, symmetry, rigid-body and zero-energy modes, invariance.'
  },
  {
    key: 'patch',
    title: 'Patch tests',
    about:
      'Assembled patches of the element under a constant-strain field, in three variants: A every node prescribed, B boundary prescribed and interior solved, C minimal supports with consistent tractions.'
  },
  {
    key: 'convergence',
    title: 'Convergence',
    about:
      'A manufactured smooth solution on uniformly refined, mildly distorted meshes; the observed orders of the L2 and energy-norm errors against the theoretical ones.'
  },
  {
    key: 'benchmarks',
    title: 'Accuracy benchmarks',
    about: 'Informative figures with no pass or fail: computed values against published reference values.'
  },
  {
    key: 'other',
    title: 'Other checks',
    about: 'Checks this page has no special layout for, shown with all their fields.'
  }
];

interface CheckInfo {
  section: SectionKey;
  title: string;
  /** what the metric measures, in words */
  metric: string;
  /** how metric and tolerance compare when the check passes */
  compare?: '≤' | '>' | '≥';
}

/** The checks of verification.md by id. */
const CHECKS: Record<string, CheckInfo> = {
  'kronecker-delta': {
    section: 'shape',
    title: 'Kronecker delta at the nodes',
    metric: 'max |Nᵢ(ξⱼ) − δᵢⱼ|',
    compare: '≤'
  },
  'partition-of-unity': {
    section: 'shape',
    title: 'Partition of unity',
    metric: 'max |Σ Nᵢ − 1|',
    compare: '≤'
  },
  'linear-completeness': {
    section: 'shape',
    title: 'Linear completeness',
    metric: 'max deviation of Σ Nᵢ ξᵢ and Σ ∂Nᵢ/∂ξ',
    compare: '≤'
  },
  'completeness-degree': {
    section: 'shape',
    title: 'Completeness degree',
    metric: 'largest complete degree p'
  },
  'face-conformity': {
    section: 'shape',
    title: 'Edge and face conformity',
    metric: 'max |Nᵢ| on facets without node i',
    compare: '≤'
  },
  'jacobian-positive': { section: 'element', title: 'Positive Jacobian', metric: 'min det J', compare: '>' },
  'stiffness-symmetry': {
    section: 'element',
    title: 'Stiffness symmetry',
    metric: '‖K − Kᵀ‖ / ‖K‖',
    compare: '≤'
  },
  'rigid-body-modes': {
    section: 'element',
    title: 'Rigid-body modes',
    metric: 'max ‖K r‖ / (‖K‖ ‖r‖)',
    compare: '≤'
  },
  'zero-energy-modes': {
    section: 'element',
    title: 'Zero-energy modes',
    metric: 'zero eigenvalues found / expected'
  },
  'positive-semidefinite': {
    section: 'element',
    title: 'Positive semidefinite',
    metric: 'λmin / λmax',
    compare: '≥'
  },
  'frame-invariance': {
    section: 'element',
    title: 'Frame invariance',
    metric: 'max relative eigenvalue change',
    compare: '≤'
  },
  convergence: { section: 'convergence', title: 'Convergence rates', metric: 'observed orders (L2, energy)' },
  'bending-accuracy': {
    section: 'benchmarks',
    title: 'Cantilever bending accuracy',
    metric: 'computed / theoretical'
  },
  'membrane-benchmark': { section: 'benchmarks', title: 'Tapered membrane', metric: 'corner displacement' }
};

const PATCH_TITLES: Record<string, string> = {
  'patch-membrane': 'Membrane patch',
  'patch-solid': 'Solid patch',
  'patch-bar': 'Bar patch',
  'patch-axisymmetric': 'Axisymmetric patch'
};

function humanise(id: string): string {
  const words = id
    .replace(/[-_]+/g, ' ')
    .replace(/([a-z])([A-Z])/g, '$1 $2')
    .toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

export function sectionOf(check: CheckResult): SectionKey {
  if (CHECKS[check.id]) return CHECKS[check.id].section;
  if (check.id.startsWith('patch-')) return 'patch';
  return 'other';
}

export function checkTitle(check: CheckResult): string {
  return CHECKS[check.id]?.title ?? PATCH_TITLES[check.id] ?? humanise(check.id);
}

export function metricMeaning(check: CheckResult): string | null {
  if (CHECKS[check.id]) return CHECKS[check.id].metric;
  if (check.id.startsWith('patch-')) return 'largest error over the variants';
  return null;
}

/** Fields the page lays out itself; everything else in a check is listed as an extra. */
const BASE_FIELDS = ['id', 'required', 'status', 'message', 'metric', 'tolerance'];
const OWN_FIELDS: Record<string, string[]> = {
  'zero-energy-modes': ['zeroModes', 'expected', 'spurious', 'eigenvalues', 'spuriousModes', 'nodes'],
  convergence: ['theoretical', 'observed', 'series']
};

export function extraFields(check: CheckResult): [string, unknown][] {
  const own = new Set([
    ...BASE_FIELDS,
    ...(OWN_FIELDS[check.id] ?? []),
    ...(check.id.startsWith('patch-') ? ['variants'] : [])
  ]);
  return Object.entries(check).filter(([k, v]) => !own.has(k) && v !== undefined);
}

const num = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** Pass rule of the convergence check: observed order ≥ theoretical − 0.2 on the last two meshes (verification.md §4). */
export const ORDER_SLACK = 0.2;

/** The metric as the table shows it. */
export function metricText(check: CheckResult): string {
  if (check.id === 'zero-energy-modes' && num(check.zeroModes)) {
    const expected = num(check.expected) ? `, ${check.expected} expected` : '';
    return `${check.zeroModes} zero${expected}`;
  }
  if (check.id === 'convergence') {
    const observed = check.observed as { l2?: unknown; energy?: unknown } | undefined;
    if (observed && (num(observed.l2) || num(observed.energy))) {
      const part = (v: unknown) => (num(v) ? v.toFixed(2) : '—');
      return `L2 ${part(observed.l2)} · energy ${part(observed.energy)}`;
    }
  }
  if (check.id === 'completeness-degree' && num(check.metric)) return `p = ${check.metric}`;
  return num(check.metric) ? formatNumber(check.metric) : '—';
}

/** The acceptance rule as the table shows it: "≤ 1e-12", "> 0", "spurious = 0". */
export function toleranceText(check: CheckResult): string {
  if (check.id === 'zero-energy-modes') return 'spurious = 0';
  if (check.id === 'convergence') {
    const t = check.theoretical as { l2?: unknown; energy?: unknown } | undefined;
    const at = (v: unknown) => (num(v) ? `≥ ${formatNumber(v - ORDER_SLACK, 2)}` : '—');
    if (t && (num(t.l2) || num(t.energy))) return `L2 ${at(t.l2)} · energy ${at(t.energy)}`;
    return 'observed ≥ theoretical − 0.2';
  }
  if (check.id === 'jacobian-positive')
    return `> ${num(check.tolerance) ? formatNumber(check.tolerance) : 0}`;
  if (!num(check.tolerance)) return check.required ? '—' : 'informative';
  const compare = CHECKS[check.id]?.compare ?? '≤';
  const value = check.id === 'positive-semidefinite' ? -Math.abs(check.tolerance) : check.tolerance;
  const relative = check.id.startsWith('patch-') ? ' relative' : '';
  return `${compare} ${formatNumber(value)}${relative}`;
}

export const STATUS_TONE: Record<string, StatusTone> = {
  pass: 'pass',
  fail: 'fail',
  error: 'fail',
  skipped: 'neutral',
  incomplete: 'warn'
};

export const VERDICT_MEANING: Record<VerificationRecord['verdict'], string> = {
  pass: 'Every required check passed.',
  fail: 'At least one required check failed or could not run.',
  incomplete:
    'No required check failed, but at least one was skipped; this version cannot be submitted for review until it runs.'
};

/** 412 ms, 12.3 s, 2 min 5 s. */
export function durationText(ms: number): string {
  if (!Number.isFinite(ms) || ms < 0) return '—';
  if (ms < 1000) return `${Math.round(ms)} ms`;
  if (ms < 60_000) return `${(ms / 1000).toFixed(1)} s`;
  const s = Math.round(ms / 1000);
  return `${Math.floor(s / 60)} min ${s % 60} s`;
}

/** 2026-12-01 10:00:00 UTC: the same text on the server and in every browser. */
export function instantText(iso: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  return d
    .toISOString()
    .replace('T', ' ')
    .replace(/\.\d+Z$/, ' UTC')
    .replace(/Z$/, ' UTC');
}

/** Counts per status of a list of checks, for the section index. */
export function statusCounts(checks: readonly CheckResult[]): Record<string, number> {
  const counts: Record<string, number> = {};
  for (const c of checks) counts[c.status] = (counts[c.status] ?? 0) + 1;
  return counts;
}

/** What a panel says when its check left no figures to draw: skipped, or stopped early. */
export function missingFigures(check: CheckResult, what: string): string {
  if (check.status === 'skipped') return `Skipped, so no ${what}: the reason is in the table above.`;
  return `No ${what}: the check stopped before producing it; its message is in the table above.`;
}
