// The two refusals, in Debian's Chromium and as a browser without JavaScript would post the forms:
// the author of a version cannot approve it (not even when they also hold the reviewer role), and an
// auditor reads every screen but changes nothing — no form is offered, and a form posted anyway is
// refused by the API with the role it needs, leaving the registry and its audit trail as they were.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, freshAccount, testUrl, type Client, type FreshAccount } from '../support/http';
import {
  catalogueSource,
  createFormulation,
  createProject,
  demoClients,
  pin,
  released,
  signInPage,
  signOutPage,
  submitted,
  tag,
  versionState
} from '../support/registry-fixtures';

const t = tag();
const own = `ref-${t}-own`;
const pinned = `ref-${t}-pinned`;
const key = `REF-${t.toUpperCase()}`;

let browser: Browser;
let people: Record<'author' | 'reviewer' | 'lead' | 'auditor', Client>;
let both: FreshAccount;

async function auditTotal(subject: string): Promise<number> {
  return (await people.auditor.getJson<{ total: number }>(`/api/v1/audit?subject=${subject}&per_page=1`))
    .total;
}

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'lead', 'auditor');
  // someone who writes and also reviews: the rule is about the version's authors, not about roles
  both = await freshAccount('author-reviewer', ['author', 'reviewer']);
  await createFormulation(both.client, own, 'Refusal probe, written by a reviewer');
  await submitted(both.client, own, '1.0.0', catalogueSource('bar2-linear', own));
  await createFormulation(people.author, pinned, 'Refusal probe, released and pinned');
  await released(people, pinned, '1.0.0', catalogueSource('bar2-linear', pinned));
  await createProject(people.lead, key, 'Refusal probe project');
  await pin(people.lead, key, pinned, '1.0.0');
  browser = await launchBrowser({ width: 1280, height: 900 });
});

afterAll(async () => {
  await browser?.close();
});

describe('the author cannot approve their own version', () => {
  it('offers the author no decision, and says a second person must decide', async () => {
    const { page } = browser;
    await signInPage(page, both.email, both.password);
    await page.goto(`${testUrl()}/review/${own}/1.0.0`);
    expect(await page.getByTestId('decision-closed').innerText()).toContain(
      'You wrote this version. Approval needs a second person'
    );
    expect(await page.getByTestId('decision-form').count()).toBe(0);
    // a first version has no release to set it beside: its own checks alone
    expect(await page.locator('[data-testid=check-changes] tbody tr').count()).toBeGreaterThan(0);
    expect(await page.locator('[data-testid=check-changes] [data-side=before]').count()).toBe(0);
    await page.screenshot({ path: artifactPath('refusals-1-own-version.png'), fullPage: true });
    await signOutPage(page);
  });

  it('refuses the approval posted without the page, with the reason, and leaves the version in review', async () => {
    const before = await auditTotal(own);
    const r = await both.client.postForm(`/review/${own}/1.0.0?/decide`, {
      decision: 'approve',
      comment: 'looks right'
    });
    expect(r.status).toBe(403);
    const html = await r.text();
    expect(html).toContain('approval needs a second person: you wrote or submitted');
    expect(html).toContain('role="alert"');
    expect((await versionState(people.auditor, own, '1.0.0')).status).toBe('in-review');

    // the demo author holds no reviewer role at all: the API names the role
    const asAuthor = await people.author.postForm(`/review/${own}/1.0.0?/decide`, {
      decision: 'approve',
      comment: ''
    });
    expect(asAuthor.status).toBe(403);
    expect(await asAuthor.text()).toContain('this needs the reviewer role');
    expect((await versionState(people.auditor, own, '1.0.0')).status).toBe('in-review');
    expect(await auditTotal(own)).toBe(before);
  });
});

describe('an auditor cannot change anything', () => {
  it('reads every screen and is offered no form that changes something', async () => {
    const { page } = browser;
    await signInPage(page, DEMO.auditor);
    const screens: [string, string[]][] = [
      [`/formulations/${pinned}`, ['Draft and open the workbench']],
      [`/formulations/${pinned}/versions/1.0.0`, ['Withdraw 1.0.0', 'Pin 1.0.0', 'Attach']],
      [`/review/${own}/1.0.0`, ['Approve and release', 'Reject, back to draft']],
      ['/projects', ['Open the project']],
      [`/projects/${key}`, ['Pin', `Unpin ${pinned} 1.0.0`]]
    ];
    for (const [path, buttons] of screens) {
      const r = await page.goto(`${testUrl()}${path}`);
      expect(r?.status(), path).toBe(200);
      for (const b of buttons)
        expect(await page.getByRole('button', { name: b, exact: true }).count(), `${path}: ${b}`).toBe(0);
      // the only forms are the header's sign-out and read-only finders
      const posts = await page.locator('main form[method=POST], main form[method=post]').count();
      expect(posts, path).toBe(0);
    }
    // what the auditor is there for works: the chain check (a read) is offered on the audit page
    await page.goto(`${testUrl()}/audit`);
    expect(await page.getByTestId('verify-chain').count()).toBe(1);
    await page.goto(`${testUrl()}/review/${own}/1.0.0`);
    expect(await page.getByTestId('decision-closed').innerText()).toContain('need the reviewer role');
    await page.screenshot({ path: artifactPath('refusals-2-auditor-review.png'), fullPage: true });
  });

  it('is refused every change posted without the page, and nothing changes', async () => {
    const subjects = [own, pinned, key];
    const trail = await Promise.all(subjects.map(auditTotal));
    const attempts: [string, Record<string, string>, string][] = [
      [
        `/review/${own}/1.0.0?/decide`,
        { decision: 'approve', comment: 'fine' },
        'this needs the reviewer role'
      ],
      [
        `/formulations/${pinned}/versions/1.0.0?/withdraw`,
        { reason: 'no reason' },
        'this needs the reviewer role'
      ],
      [`/formulations/${pinned}/versions/1.0.0?/pin`, { project: key }, 'this needs the lead role'],
      [`/projects/${key}?/unpin`, { name: pinned }, 'this needs the lead role'],
      [`/projects/${key}?/pin`, { pick: `${own}@1.0.0` }, 'this needs the lead role'],
      [
        '/projects?/create',
        { key: `AUD-${t.toUpperCase()}`, title: 'Not allowed' },
        'this needs the lead role'
      ],
      [`/formulations/${pinned}?/draft`, { version: '2.0.0', from: '1.0.0' }, 'this needs the author role']
    ];
    for (const [path, form, message] of attempts) {
      const r = await people.auditor.postForm(path, form);
      expect(r.status, path).toBe(403);
      const html = await r.text();
      expect(html, path).toContain(message);
      expect(html, path).toContain('you hold auditor');
    }
    expect((await versionState(people.auditor, own, '1.0.0')).status).toBe('in-review');
    expect((await versionState(people.auditor, pinned, '1.0.0')).status).toBe('released');
    const project = await people.auditor.getJson<{ pins: { name: string; version: string }[] }>(
      `/api/v1/projects/${key}`
    );
    expect(project.pins).toEqual([expect.objectContaining({ name: pinned, version: '1.0.0' })]);
    const formulation = await people.auditor.getJson<{ versions: unknown[] }>(
      `/api/v1/formulations/${pinned}`
    );
    expect(formulation.versions).toHaveLength(1);
    expect((await people.auditor.get(`/api/v1/projects/AUD-${t.toUpperCase()}`)).status).toBe(404);
    expect(await Promise.all(subjects.map(auditTotal))).toEqual(trail);
  });
});
