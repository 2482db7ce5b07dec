import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { getFormulation } from '$lib/server/registry';

/** The formulation with its versions, newest first (drafts only for authors, reviewers and auditors), and the projects pinning it. */
export const GET = api(async ({ locals, params }) =>
  json(await getFormulation(requireUser(locals), params.name))
);
