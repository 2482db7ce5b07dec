// Who sees what (api.md, "Roles"): drafts and versions in review only for authors, reviewers and
// auditors; released and withdrawn versions for anyone signed in.
import type { SessionUser } from '../auth/types';
import type { Role } from '../auth/roles';
import type { AuditActor } from './audit';

export type Viewer = Pick<SessionUser, 'id' | 'email' | 'name' | 'roles'>;

export type VersionStatus = 'draft' | 'in-review' | 'released' | 'withdrawn';
export const VERSION_STATUSES: readonly VersionStatus[] = ['draft', 'in-review', 'released', 'withdrawn'];

export const DRAFT_READERS: readonly Role[] = ['author', 'reviewer', 'auditor'];

export function seesDrafts(viewer: Viewer): boolean {
  return viewer.roles.some((r) => DRAFT_READERS.includes(r));
}

export function isPublished(status: VersionStatus): boolean {
  return status === 'released' || status === 'withdrawn';
}

export function canSee(viewer: Viewer, status: VersionStatus): boolean {
  return isPublished(status) || seesDrafts(viewer);
}

export function actorOf(user: Viewer): AuditActor {
  return { id: user.id, label: user.email };
}
