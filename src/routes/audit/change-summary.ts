// One line for the before and after summaries of an audit event: `status: released, reason: "…"`.

/** Longest value shown in full on the line; the whole event is a click away. */
const VALUE_MAX = 48;

function short(v: unknown): string {
  const s = typeof v === 'string' ? v : JSON.stringify(v);
  return s.length > VALUE_MAX ? `${s.slice(0, VALUE_MAX - 1)}…` : s;
}

export function changeSummary(value: unknown): string {
  if (value === null || value === undefined) return '—';
  if (typeof value !== 'object' || Array.isArray(value)) return short(value);
  const parts = Object.entries(value as Record<string, unknown>).map(([k, v]) => `${k}: ${short(v)}`);
  return parts.length ? parts.join(', ') : '—';
}
