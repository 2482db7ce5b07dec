import { failMessage, failWith, loadApi, readForm } from '$lib/server/api';
import { clientAddress } from '$lib/server/auth/address';
import { changePassword } from '$lib/server/auth/credentials';
import { requireSession, requireUserOrSignIn } from '$lib/server/auth/guards';
import { MIN_PASSWORD_LENGTH } from '$lib/server/auth/password';
import {
  changePasswordSchema,
  expiryFromDays,
  MAX_TOKEN_DAYS,
  newTokenSchema
} from '$lib/server/auth/schemas';
import { createToken, revokeToken, type TokenInfo } from '$lib/server/auth/tokens';
import type { Role } from '$lib/server/auth/roles';
import type { Actions, PageServerLoad } from './$types';

interface Me {
  id: string;
  email: string;
  name: string;
  roles: Role[];
  via: 'session' | 'token';
}

export const load: PageServerLoad = async ({ locals, url, fetch }) => {
  requireUserOrSignIn(locals, url);
  const [me, tokens] = await Promise.all([
    loadApi<Me>(fetch, '/api/v1/me'),
    loadApi<TokenInfo[]>(fetch, '/api/v1/tokens')
  ]);
  return { me, tokens, minPasswordLength: MIN_PASSWORD_LENGTH, maxTokenDays: MAX_TOKEN_DAYS };
};

export const actions = {
  password: async (event) => {
    const user = requireSession(event.locals);
    const parsed = await readForm(event.request, changePasswordSchema, 'password');
    if (!parsed.ok) return parsed.failure;
    try {
      await changePassword(
        user,
        { current: parsed.data.current, next: parsed.data.password, address: clientAddress(event) },
        event.locals.sessionId
      );
    } catch (e) {
      return failWith(e, { form: parsed.form, formId: 'password' });
    }
    return { passwordChanged: true };
  },

  createToken: async (event) => {
    const user = requireSession(event.locals);
    const parsed = await readForm(event.request, newTokenSchema, 'token');
    if (!parsed.ok) return parsed.failure;
    try {
      const { token, info } = await createToken(user, {
        name: parsed.data.name,
        roleCeiling: parsed.data.role,
        expiresAt: expiryFromDays(parsed.data.expiresInDays)
      });
      // shown on this one response and never again
      return { created: { token, name: info.name } };
    } catch (e) {
      return failWith(e, { form: parsed.form, formId: 'token' });
    }
  },

  revokeToken: async (event) => {
    const user = requireSession(event.locals);
    const id = (await event.request.formData()).get('id');
    if (typeof id !== 'string' || !id) return failMessage(400, 'which token? the form sent no id', 'revoke');
    try {
      const info = await revokeToken(user, id);
      return { revoked: info.name };
    } catch (e) {
      return failWith(e, { formId: 'revoke' });
    }
  }
} satisfies Actions;
