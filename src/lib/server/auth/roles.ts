export const ROLES = ['admin', 'author', 'reviewer', 'lead', 'auditor'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_DESCRIPTIONS: Record<Role, string> = {
  admin: 'people and roles',
  author: 'creates formulations and drafts, runs verification, submits for review',
  reviewer: 'approves, rejects and withdraws versions',
  lead: 'creates projects and pins released versions',
  auditor: 'reads everything, including drafts and the audit trail; changes nothing'
};

export function isRole(v: unknown): v is Role {
  return typeof v === 'string' && (ROLES as readonly string[]).includes(v);
}
