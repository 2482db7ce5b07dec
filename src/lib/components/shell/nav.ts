// The areas of the application and who sees them in the navigation.
import type { Role } from '$lib/server/auth/roles';

export interface Area {
  href: string;
  label: string;
  summary: string;
  /** shown to anyone signed in when absent; otherwise to holders of any of these roles */
  roles?: Role[];
}

export const AREAS: Area[] = [
  {
    href: '/formulations',
    label: 'Catalogue',
    summary: 'released formulations and their verification records'
  },
  {
    href: '/review',
    label: 'Review',
    summary: 'versions waiting for a second engineer',
    roles: ['reviewer', 'auditor']
  },
  { href: '/projects', label: 'Projects', summary: 'which released versions each project has pinned' },
  {
    href: '/audit',
    label: 'Audit',
    summary: 'every change, on a hash chain anyone can re-check',
    roles: ['auditor', 'admin']
  },
  { href: '/admin', label: 'Admin', summary: 'people, roles and the local outbox', roles: ['admin'] },
  { href: '/account', label: 'Account', summary: 'your password and API tokens' }
];

export function areasFor(roles: readonly Role[] | null): Area[] {
  if (roles === null) return [];
  return AREAS.filter((a) => !a.roles || a.roles.some((r) => roles.includes(r)));
}

export function isCurrent(href: string, pathname: string): boolean {
  return pathname === href || pathname.startsWith(href + '/');
}
