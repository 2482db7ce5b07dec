// How the registry screens write times, hashes and figures.

/** `2026-12-01 22:21 UTC`: minutes are enough to follow a history; the title attribute keeps the full instant. */
export function instantText(iso: string | null | undefined, none = '—'): string {
  if (!iso) return none;
  return `${iso.replace('T', ' ').slice(0, 16)} UTC`;
}

/** `sha256:3f9a1c0e…b71d`: enough of a hash to tell two apart at a glance; the full value stays beside it for copying. */
export function shortHash(hash: string | null | undefined): string {
  if (!hash) return '—';
  const [algo, hex] = hash.includes(':') ? hash.split(':', 2) : ['', hash];
  const body = hex.length > 16 ? `${hex.slice(0, 8)}…${hex.slice(-4)}` : hex;
  return algo ? `${algo}:${body}` : body;
}

/** A check metric as the record prints it: integers plainly, small and large values in exponent form. */
export function metricText(value: number | null | undefined): string {
  if (value === null || value === undefined) return '—';
  if (!Number.isFinite(value)) return String(value);
  if (Number.isInteger(value) && Math.abs(value) < 1e6) return String(value);
  const a = Math.abs(value);
  if (a !== 0 && (a < 1e-3 || a >= 1e6)) return value.toExponential(2).replace('e+', 'e');
  return String(Number(value.toPrecision(4)));
}

/** The people and times of a history, plural-aware. */
export function count(n: number, one: string, many = `${one}s`): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** `?a=1&b=x` from the entries that have a value (empty, null and undefined are left out); '' when none has. */
export function queryString(entries: Record<string, string | number | null | undefined>): string {
  const parts = Object.entries(entries)
    .filter(([, v]) => v !== '' && v !== null && v !== undefined)
    .map(([k, v]) => `${encodeURIComponent(k)}=${encodeURIComponent(String(v))}`);
  return parts.length ? `?${parts.join('&')}` : '';
}
