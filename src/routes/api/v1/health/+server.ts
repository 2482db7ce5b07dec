import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';

/** Liveness for load balancers and the start scripts; also the baseline route of the load benchmark. */
export const GET: RequestHandler = () => json({ ok: true, service: 'isoledger', api: 1 });
