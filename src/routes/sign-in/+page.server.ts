import { redirect } from '@sveltejs/kit';
import { failWith, readForm } from '$lib/server/api';
import { clientAddress } from '$lib/server/auth/address';
import { authenticate } from '$lib/server/auth/credentials';
import { safeNext } from '$lib/server/auth/guards';
import { signInSchema } from '$lib/server/auth/schemas';
import { applyCookie, createSession } from '$lib/server/auth/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ locals, url }) => {
  const next = safeNext(url.searchParams.get('next'));
  if (locals.user) redirect(303, next);
  return { next };
};

export const actions = {
  default: async (event) => {
    const parsed = await readForm(event.request, signInSchema);
    if (!parsed.ok) return parsed.failure;
    let userId: string;
    try {
      userId = (await authenticate({ ...parsed.data, address: clientAddress(event) })).id;
    } catch (e) {
      return failWith(e, { form: parsed.form });
    }
    const { cookie } = await createSession(userId);
    applyCookie(event.cookies, cookie);
    redirect(303, safeNext(parsed.form.get('next')?.toString()));
  }
} satisfies Actions;
