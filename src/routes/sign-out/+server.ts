import { redirect } from '@sveltejs/kit';
import { applyCookie, blankSessionCookie, invalidateSession } from '$lib/server/auth/sessions';
import type { RequestHandler } from './$types';

/** Ends this browser's session. A form POST, so SvelteKit's origin check guards it. */
export const POST: RequestHandler = async ({ locals, cookies }) => {
  if (locals.sessionId) await invalidateSession(locals.sessionId);
  applyCookie(cookies, blankSessionCookie());
  redirect(303, '/');
};
