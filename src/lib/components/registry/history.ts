// A version's history as dated entries: who did what and when, from what the version route tells.
import type { Person } from '$lib/server/registry/store';

export interface HistorySource {
  createdAt: string;
  author: Person;
  submittedAt: string | null;
  releasedAt: string | null;
  reviews: { reviewer: Person; decision: 'approve' | 'reject'; comment: string; at: string }[];
  withdrawn: { at: string; reason: string; by?: Person | null } | null;
}

export interface HistoryEntry {
  at: string;
  kind: 'created' | 'submitted' | 'approved' | 'rejected' | 'withdrawn';
  who: Person | null;
  what: string;
  note: string | null;
}

/** Oldest first. A rejection sends the version back to draft and clears its submission time, so only the current submission is dated. */
export function versionHistory(v: HistorySource): HistoryEntry[] {
  const entries: HistoryEntry[] = [
    { at: v.createdAt, kind: 'created', who: v.author, what: 'drafted', note: null }
  ];
  for (const r of v.reviews) {
    entries.push({
      at: r.at,
      kind: r.decision === 'approve' ? 'approved' : 'rejected',
      who: r.reviewer,
      what: r.decision === 'approve' ? 'approved and released' : 'rejected, back to draft',
      note: r.comment || null
    });
  }
  if (v.submittedAt) {
    entries.push({
      at: v.submittedAt,
      kind: 'submitted',
      who: null,
      what: 'submitted for review',
      note: null
    });
  }
  if (v.releasedAt && !v.reviews.some((r) => r.decision === 'approve')) {
    entries.push({ at: v.releasedAt, kind: 'approved', who: null, what: 'released', note: null });
  }
  if (v.withdrawn) {
    entries.push({
      at: v.withdrawn.at,
      kind: 'withdrawn',
      who: v.withdrawn.by ?? null,
      what: 'withdrawn',
      note: v.withdrawn.reason || null
    });
  }
  return entries.sort((a, b) => (a.at < b.at ? -1 : a.at > b.at ? 1 : 0));
}
