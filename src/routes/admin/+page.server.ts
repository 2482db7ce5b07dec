import { z } from 'zod';
import { failWith, loadApi, readForm, type ApiErrorBody } from '$lib/server/api';
import { requireRole, requireUserOrSignIn } from '$lib/server/auth/guards';
import { changeRole, type Person } from '$lib/server/auth/people';
import { ROLES, ROLE_DESCRIPTIONS } from '$lib/server/auth/roles';
import type { Actions, PageServerLoad } from './$types';

interface OutboxMessage {
  to: string[];
  subject: string;
  text: string;
  sentAt: string;
}

const roleChange = z.object({
  userId: z.string().min(1, 'which person? the form sent no id'),
  role: z.enum(ROLES, { error: `the role must be one of ${ROLES.join(', ')}` }),
  grant: z.enum(['true', 'false'], { error: "grant must be 'true' or 'false'" })
});

export const load: PageServerLoad = async ({ locals, url, fetch }) => {
  requireUserOrSignIn(locals, url);
  requireRole(locals, 'admin');
  const [people, outboxResponse] = await Promise.all([
    loadApi<Person[]>(fetch, '/api/v1/people'),
    fetch('/api/v1/outbox')
  ]);
  const outbox = outboxResponse.ok
    ? { available: true as const, messages: (await outboxResponse.json()) as OutboxMessage[] }
    : { available: false as const, reason: ((await outboxResponse.json()) as ApiErrorBody).error.message };
  return {
    people,
    outbox,
    roles: ROLES.map((r) => ({ role: r, description: ROLE_DESCRIPTIONS[r] })),
    me: locals.user!.id
  };
};

export const actions = {
  role: async ({ locals, request }) => {
    const admin = requireRole(locals, 'admin');
    const parsed = await readForm(request, roleChange, 'role');
    if (!parsed.ok) return parsed.failure;
    try {
      const changed = await changeRole(
        admin,
        parsed.data.userId,
        parsed.data.role,
        parsed.data.grant === 'true'
      );
      return { changed };
    } catch (e) {
      return failWith(e, { formId: 'role' });
    }
  }
} satisfies Actions;
