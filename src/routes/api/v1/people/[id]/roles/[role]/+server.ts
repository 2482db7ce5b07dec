import { json } from '@sveltejs/kit';
import { api, ApiError } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { changeRole } from '$lib/server/auth/people';
import { isRole, ROLES } from '$lib/server/auth/roles';

function handler(granted: boolean) {
  return api<{ id: string; role: string }>(async ({ locals, params }) => {
    const admin = requireRole(locals, 'admin');
    if (!isRole(params.role)) {
      throw new ApiError(404, 'not-found', `'${params.role}' is not a role (roles: ${ROLES.join(', ')})`);
    }
    return json(await changeRole(admin, params.id, params.role, granted));
  });
}

/** Grants the role (idempotent). */
export const PUT = handler(true);
/** Removes the role (idempotent); never the last admin's admin role. */
export const DELETE = handler(false);
