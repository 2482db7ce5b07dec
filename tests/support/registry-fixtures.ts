// Registry set-ups shared by the browser journeys, made through the HTTP API as people would make
// them: the demo author creates a formulation and drafts it from a document of the example catalogue
// (packages/formulation/catalogue), the real run queue verifies it, the author submits it, the demo
// reviewer approves it, the demo lead pins it. Every name carries a random tag, so journeys of one
// run never meet each other's formulations or projects.
import { randomBytes } from 'node:crypto';
import { parseDocument } from 'yaml';
import type { Page } from 'playwright-core';
import { loadCatalogue } from '@isoledger/formulation';
import { Client, DEMO, DEMO_PASSWORD, signedIn, testUrl } from './http';

/** A verification run queued behind others on two shared cores can take a while. */
export const RUN_WAIT_MS = 180_000;
const POLL_MS = 250;

export type DemoRole = keyof typeof DEMO;

/** A short random tag for names: lower-case for formulations, upper-case for project keys. */
export function tag(): string {
  return randomBytes(3).toString('hex');
}

/** The demo accounts, each signed in through the sign-in form with its own cookie jar. */
export async function demoClients<R extends DemoRole>(...roles: R[]): Promise<Record<R, Client>> {
  const out = {} as Record<R, Client>;
  for (const r of roles) out[r] = await signedIn(DEMO[r]);
  return out;
}

/**
 * A Young's modulus no other document of the run is likely to carry. The definitionHash leaves out
 * name, title and summary, and the queue reuses the record of a definition it has verified before, so
 * a draft meant to be unverified needs a meaning of its own.
 */
export function unusedStiffness(): number {
  return 1_000 + randomBytes(4).readUInt32BE(0) * 10;
}

/**
 * A document of the example catalogue renamed to `name` (the slug must match the formulation), with
 * its title, summary, check material or Gauss point count changed where asked. Everything else —
 * nodes, shape functions, strain — is the catalogue's own.
 */
export function catalogueSource(
  file: string,
  name: string,
  opts: { title?: string; E?: number; nu?: number; quadraturePoints?: number; summary?: string } = {}
): string {
  const entry = loadCatalogue().find((d) => d.file === file || d.file === `${file}.formulation.yaml`);
  if (!entry) {
    const files = loadCatalogue()
      .map((d) => d.file)
      .join(', ');
    throw new Error(`the example catalogue has no document ${file}; it holds ${files}`);
  }
  const doc = parseDocument(entry.source);
  doc.set('name', name);
  if (opts.title) doc.set('title', opts.title);
  if (opts.summary) doc.set('summary', opts.summary);
  if (opts.E !== undefined) doc.setIn(['material', 'E'], opts.E);
  if (opts.nu !== undefined) doc.setIn(['material', 'nu'], opts.nu);
  if (opts.quadraturePoints !== undefined) doc.setIn(['quadrature', 'points'], opts.quadraturePoints);
  return doc.toString();
}

async function expectJson<T>(r: Response, what: string, status: number): Promise<T> {
  const text = await r.text();
  if (r.status !== status)
    throw new Error(`${what}: expected ${status}, got ${r.status}: ${text.slice(0, 600)}`);
  return (text ? JSON.parse(text) : null) as T;
}

const path = (...segments: string[]) => `/api/v1/${segments.map(encodeURIComponent).join('/')}`;

export async function createFormulation(author: Client, name: string, title: string): Promise<void> {
  await expectJson(
    await author.request('POST', path('formulations'), { json: { name, title } }),
    `create ${name}`,
    201
  );
}

export async function createDraft(
  author: Client,
  name: string,
  version: string,
  source: string
): Promise<void> {
  await expectJson(
    await author.request('POST', path('formulations', name, 'versions'), { json: { version, source } }),
    `draft ${name}@${version}`,
    201
  );
}

export interface RunOutcome {
  runId: string;
  recordId: string;
  verdict: string;
}

/** Queues a verification run of the draft and polls the run until the queue's workers finish it. */
export async function verify(author: Client, name: string, version: string): Promise<RunOutcome> {
  const { runId } = await expectJson<{ runId: string }>(
    await author.request('POST', path('formulations', name, 'versions', version, 'runs')),
    `queue a run of ${name}@${version}`,
    202
  );
  const until = Date.now() + RUN_WAIT_MS;
  for (;;) {
    const run = await author.getJson<{
      status: string;
      error?: string;
      record: { verdict: string } | null;
    }>(path('runs', runId));
    if (run.status === 'failed') throw new Error(`run ${runId} of ${name}@${version} failed: ${run.error}`);
    if (run.status === 'done') {
      const v = await author.getJson<{ verification: { recordId: string; verdict: string } | null }>(
        path('formulations', name, 'versions', version)
      );
      if (!v.verification) throw new Error(`run ${runId} is done but ${name}@${version} cites no record`);
      return { runId, recordId: v.verification.recordId, verdict: v.verification.verdict };
    }
    if (Date.now() > until)
      throw new Error(`run ${runId} of ${name}@${version} still ${run.status} after ${RUN_WAIT_MS} ms`);
    await new Promise((r) => setTimeout(r, POLL_MS));
  }
}

export async function submit(author: Client, name: string, version: string): Promise<void> {
  await expectJson(
    await author.request('POST', path('formulations', name, 'versions', version, 'submit')),
    `submit ${name}@${version}`,
    200
  );
}

export async function review(
  reviewer: Client,
  name: string,
  version: string,
  decision: 'approve' | 'reject',
  comment: string
): Promise<void> {
  await expectJson(
    await reviewer.request('POST', path('formulations', name, 'versions', version, 'review'), {
      json: { decision, comment }
    }),
    `${decision} ${name}@${version}`,
    200
  );
}

export async function withdraw(
  reviewer: Client,
  name: string,
  version: string,
  reason: string
): Promise<void> {
  await expectJson(
    await reviewer.request('POST', path('formulations', name, 'versions', version, 'withdraw'), {
      json: { reason }
    }),
    `withdraw ${name}@${version}`,
    200
  );
}

/** Drafts, verifies (the verdict must be pass) and submits: the version then waits in the review queue. */
export async function submitted(
  author: Client,
  name: string,
  version: string,
  source: string
): Promise<RunOutcome> {
  await createDraft(author, name, version, source);
  const run = await verify(author, name, version);
  if (run.verdict !== 'pass')
    throw new Error(`${name}@${version} verified '${run.verdict}', not pass: record ${run.recordId}`);
  await submit(author, name, version);
  return run;
}

/** The whole path to a release: draft, verify, submit, approve by a second person. */
export async function released(
  people: { author: Client; reviewer: Client },
  name: string,
  version: string,
  source: string
): Promise<RunOutcome> {
  const run = await submitted(people.author, name, version, source);
  await review(
    people.reviewer,
    name,
    version,
    'approve',
    'Checked the record and the summary; released for the fixture.'
  );
  return run;
}

export async function createProject(lead: Client, key: string, title: string): Promise<void> {
  await expectJson(
    await lead.request('POST', path('projects'), { json: { key, title } }),
    `create ${key}`,
    201
  );
}

export async function pin(lead: Client, key: string, name: string, version: string): Promise<void> {
  await expectJson(
    await lead.request('PUT', path('projects', key, 'pins', name), { json: { version } }),
    `pin ${name}@${version} in ${key}`,
    200
  );
}

export interface VersionState {
  status: string;
  verification: { recordId: string; verdict: string } | null;
  reviews: { decision: string; comment: string }[];
  withdrawn: { reason: string } | null;
}

export function versionState(client: Client, name: string, version: string): Promise<VersionState> {
  return client.getJson<VersionState>(path('formulations', name, 'versions', version));
}

/** What the local mail sink has received, through the admin's outbox route. */
export function outbox(
  admin: Client
): Promise<{ to: string[]; subject: string; text: string; sentAt: string }[]> {
  return admin.getJson(path('outbox'));
}

/** Signs a browser page in through the sign-in form and waits until it has left the form. */
export async function signInPage(page: Page, email: string, password = DEMO_PASSWORD): Promise<void> {
  await page.goto(`${testUrl()}/sign-in`);
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

/** Signs the page out (the header's button) so another account can sign in on it. */
export async function signOutPage(page: Page): Promise<void> {
  await page.getByRole('button', { name: 'Sign out' }).click();
  await page.waitForURL(`${testUrl()}/`);
}

/** Scripts the page fetched while `visit` ran, with their text. */
export async function scriptsDuring(
  page: Page,
  visit: () => Promise<unknown>
): Promise<{ url: string; text: string }[]> {
  const seen: Promise<{ url: string; text: string }>[] = [];
  const onResponse = (r: import('playwright-core').Response) => {
    const type = r.request().resourceType();
    if (type === 'script' || type === 'worker' || /\.m?js(\?|$)/.test(r.url())) {
      seen.push(
        r
          .text()
          .then((text) => ({ url: r.url(), text }))
          .catch(() => ({ url: r.url(), text: '' }))
      );
    }
  };
  page.on('response', onResponse);
  await visit();
  await page.waitForLoadState('networkidle');
  page.off('response', onResponse);
  return Promise.all(seen);
}

/** Monaco's environment hook and its worker are the editor's fingerprint in a bundle. */
export function loadsMonaco(scripts: { url: string; text: string }[]): boolean {
  return scripts.some((s) => /editor\.worker/.test(s.url) || s.text.includes('MonacoEnvironment'));
}

/** Whether the document is wider than the window (sideways scrolling of the whole page). */
export function scrollsSideways(page: Page): Promise<boolean> {
  return page.evaluate(() => document.documentElement.scrollWidth > document.documentElement.clientWidth);
}

/**
 * The innermost elements that reach past the window's right edge, to say what makes a page scroll
 * sideways (content inside a frame that scrolls on its own is listed too; the culprit is among them).
 */
export function overflowing(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const width = document.documentElement.clientWidth;
    const exceeds = (el: Element) => el.getBoundingClientRect().right > width + 0.5;
    const describe = (el: Element) =>
      `${el.tagName.toLowerCase()}${el.id ? '#' + el.id : ''}${[...el.classList].map((c) => '.' + c).join('')} (${Math.round(el.getBoundingClientRect().right)} px)`;
    return [...document.body.querySelectorAll('*')]
      .filter((el) => exceeds(el) && ![...el.children].some(exceeds))
      .slice(0, 8)
      .map(describe);
  });
}
