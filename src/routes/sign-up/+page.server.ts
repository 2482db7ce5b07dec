import { redirect } from '@sveltejs/kit';
import { failWith, readForm } from '$lib/server/api';
import { signUp } from '$lib/server/auth/credentials';
import { MIN_PASSWORD_LENGTH } from '$lib/server/auth/password';
import { signUpSchema } from '$lib/server/auth/schemas';
import { applyCookie, createSession } from '$lib/server/auth/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ locals }) => {
  if (locals.user) redirect(303, '/account');
  return { minPasswordLength: MIN_PASSWORD_LENGTH };
};

export const actions = {
  default: async (event) => {
    const parsed = await readForm(event.request, signUpSchema);
    if (!parsed.ok) return parsed.failure;
    let userId: string;
    try {
      userId = (await signUp(parsed.data)).id;
    } catch (e) {
      return failWith(e, { form: parsed.form });
    }
    const { cookie } = await createSession(userId);
    applyCookie(event.cookies, cookie);
    redirect(303, '/account');
  }
} satisfies Actions;
