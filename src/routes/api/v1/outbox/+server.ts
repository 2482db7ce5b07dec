import { json } from '@sveltejs/kit';
import { api, ApiError } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { config } from '$lib/server/config';

interface SinkMessage {
  to: string[];
  subject: string;
  text: string;
  sentAt: string;
}

/** What the local mail sink has received, newest first; only while the local sink is the transport. */
export const GET = api(async ({ locals }) => {
  requireRole(locals, 'admin');
  const sink = config().mailSinkUrl;
  if (!sink) {
    throw new ApiError(
      404,
      'not-found',
      'there is no local outbox: mail goes to the SMTP relay in SMTP_URL (MAIL_SINK_URL is set only for the local mail sink)'
    );
  }
  let messages: SinkMessage[];
  try {
    // the global fetch: nothing of the visitor's request (cookies) goes to the sink
    const r = await fetch(sink);
    if (!r.ok) throw new Error(`status ${r.status}`);
    messages = await r.json();
  } catch (e) {
    throw new ApiError(
      502,
      'mail-sink-unreachable',
      `the local mail sink at ${sink} did not answer: ${(e as Error).message}`
    );
  }
  return json(messages.map(({ to, subject, text, sentAt }) => ({ to, subject, text, sentAt })));
});
