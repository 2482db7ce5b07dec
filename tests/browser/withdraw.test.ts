// Journey 5 in Debian's Chromium: a released version is pinned by a project; the reviewer withdraws
// it from its page (a reason is required), the lead's project then warns of the withdrawn pin with
// the reviewer's reason, and the e-mail to the lead appears in the admin's outbox of the local sink.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, testUrl, type Client } from '../support/http';
import {
  catalogueSource,
  createFormulation,
  createProject,
  demoClients,
  outbox,
  pin,
  released,
  signInPage,
  signOutPage,
  tag,
  versionState
} from '../support/registry-fixtures';

const t = tag();
const name = `wd-${t}`;
const key = `WD-${t.toUpperCase()}`;
const REASON = 'The summary overstates its accuracy for tapered bars; re-check results that relied on it.';
/** The mail sink stores a message a moment after the SMTP exchange ends. */
const MAIL_WAIT_MS = 15_000;

let browser: Browser;
let people: Record<'author' | 'reviewer' | 'lead' | 'admin', Client>;

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'lead', 'admin');
  await createFormulation(people.author, name, 'Withdrawal probe, two-node bar');
  await released(people, name, '1.0.0', catalogueSource('bar2-linear', name));
  await createProject(people.lead, key, 'Tidal weir gate check (journey)');
  await pin(people.lead, key, name, '1.0.0');
  browser = await launchBrowser({ width: 1280, height: 900 });
});

afterAll(async () => {
  await browser?.close();
});

describe('journey 5: the reviewer withdraws a pinned version and the lead is told', () => {
  it('withdraws from the version’s page, once a reason is given', async () => {
    const { page } = browser;
    await signInPage(page, DEMO.reviewer);
    await page.goto(`${testUrl()}/formulations/${name}/versions/1.0.0`);
    expect(
      await page.getByTestId('version-status').locator('[data-status]').getAttribute('data-status')
    ).toBe('released');
    await page.getByRole('button', { name: 'Withdraw 1.0.0' }).click();
    const error = page.locator('#withdraw-reason-error');
    await error.waitFor();
    expect(await error.innerText()).toContain('a withdrawal needs a reason');
    expect((await versionState(people.reviewer, name, '1.0.0')).status).toBe('released');

    await page.getByLabel('Reason').fill(REASON);
    await page.getByRole('button', { name: 'Withdraw 1.0.0' }).click();
    await expect
      .poll(() => page.getByTestId('version-status').locator('[data-status]').getAttribute('data-status'))
      .toBe('withdrawn');
    const notice = await page.getByTestId('withdrawn-notice').innerText();
    expect(notice).toContain('by Saoirse Vantongeren');
    expect(notice).toContain(REASON);
    await page.screenshot({ path: artifactPath('withdraw-1-withdrawn.png'), fullPage: true });
    const stored = await versionState(people.reviewer, name, '1.0.0');
    expect(stored.status).toBe('withdrawn');
    expect(stored.withdrawn?.reason).toBe(REASON);
    await signOutPage(page);
  });

  it('shows the lead’s project a warning naming the withdrawn pin and the reason', async () => {
    const { page } = browser;
    await signInPage(page, DEMO.lead);
    await page.goto(`${testUrl()}/projects/${key}`);
    const warning = page.getByTestId('withdrawn-warning');
    expect(await warning.getAttribute('role')).toBe('alert');
    const text = await warning.innerText();
    expect(text).toContain('A pinned version was withdrawn');
    expect(text).toContain(`${name} 1.0.0`);
    expect(text).toContain(REASON);
    expect(await page.locator(`[data-testid=pins] tr[data-name="${name}"]`).getAttribute('data-status')).toBe(
      'withdrawn'
    );
    await page.screenshot({ path: artifactPath('withdraw-2-project-warning.png'), fullPage: true });
    await signOutPage(page);
  });

  it('puts the lead’s e-mail in the outbox, with the reason', async () => {
    const { page } = browser;
    const until = Date.now() + MAIL_WAIT_MS;
    let mail: Awaited<ReturnType<typeof outbox>>[number] | undefined;
    while (!mail && Date.now() < until) {
      mail = (await outbox(people.admin)).find((m) => m.to.includes(DEMO.lead) && m.subject.includes(name));
      if (!mail) await new Promise((r) => setTimeout(r, 250));
    }
    expect(mail, 'no message to the lead about the withdrawal').toBeDefined();
    expect(mail!.subject).toContain(`(pinned by ${key})`);

    await signInPage(page, DEMO.admin);
    await page.goto(`${testUrl()}/admin`);
    const item = page
      .getByTestId('outbox')
      .locator('li')
      .filter({ hasText: `${name}` })
      .filter({ hasText: DEMO.lead });
    expect(await item.count()).toBe(1);
    await item.locator('summary').click();
    const body = await item.locator('pre').innerText();
    expect(body).toContain(REASON);
    expect(body).toContain(key);
    await page.screenshot({ path: artifactPath('withdraw-3-outbox.png'), fullPage: true });
  });
});
