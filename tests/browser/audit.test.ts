// Journey 4 in Debian's Chromium: the auditor compares two released versions of an element (changed
// definition paths, check metrics before and after, source diff), filters the audit trail by
// subject, action, actor and time, and has the server re-hash the whole chain.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, testUrl, type Client } from '../support/http';
import {
  catalogueSource,
  createFormulation,
  demoClients,
  released,
  signInPage,
  tag,
  type RunOutcome
} from '../support/registry-fixtures';

const name = `aud-${tag()}`;

let browser: Browser;
let people: Record<'author' | 'reviewer' | 'auditor', Client>;
const runs: RunOutcome[] = [];

/** Today and yesterday as the date inputs write them (UTC, as the filter reads them). */
const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);

const trailRows = () => browser.page.locator('[data-testid=audit-trail] tbody tr');

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'auditor');
  await createFormulation(people.author, name, 'Audit probe, two-node bar');
  runs.push(await released(people, name, '1.0.0', catalogueSource('bar2-linear', name)));
  runs.push(await released(people, name, '1.1.0', catalogueSource('bar2-linear', name, { nu: 0.25 })));
  browser = await launchBrowser({ width: 1360, height: 960 });
  await signInPage(browser.page, DEMO.auditor);
});

afterAll(async () => {
  await browser?.close();
});

describe('journey 4: the auditor compares two versions', () => {
  it('opens the comparison of the two newest versions from the timeline', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations/${name}`);
    await page.getByRole('link', { name: 'Compare versions' }).click();
    await page.waitForURL(`${testUrl()}/formulations/${name}/compare?from=1.0.0&to=1.1.0`);
    expect(await page.locator('[data-side=from]').innerText()).toContain('1.0.0');
    expect(await page.locator('[data-side=to]').innerText()).toContain('1.1.0');
    expect(await page.getByTestId('definition-paths').innerText()).toBe('material.nu');
    const diff = page.getByTestId('source-diff');
    expect((await diff.locator('tr[data-kind=struck]').allInnerTexts()).join('\n')).toMatch(/nu: 0\.3/);
    expect((await diff.locator('tr[data-kind=entered]').allInnerTexts()).join('\n')).toMatch(/nu: 0\.25/);

    // every check of the two records, each side with the status its record gives
    const records = await Promise.all(
      runs.map((r) =>
        people.auditor.getJson<{ checks: { id: string; status: string }[] }>(`/api/v1/records/${r.recordId}`)
      )
    );
    const table = page.getByTestId('check-changes');
    expect(await table.locator('tbody tr').count()).toBe(records[1].checks.length);
    for (const c of records[1].checks) {
      expect(await table.locator(`tr[data-check-id="${c.id}"] [data-side=after]`).innerText()).toContain(
        c.status
      );
    }
    await page.screenshot({ path: artifactPath('audit-1-compare.png'), fullPage: true });
  });

  it('says so when both sides are one version', async () => {
    const { page } = browser;
    const picker = page.getByTestId('compare-picker');
    await picker.getByLabel('Older side').selectOption('1.1.0');
    await picker.getByRole('button', { name: 'Compare' }).click();
    await page.waitForURL(/from=1\.1\.0&to=1\.1\.0/);
    expect(await page.getByTestId('diff-summary').innerText()).toBe(
      'The sources of 1.1.0 and 1.1.0 are identical.'
    );
    expect(await page.getByTestId('definition-paths').innerText()).toContain('the same definition hash');
    for (const change of await page
      .locator('[data-testid=check-changes] tbody tr')
      .evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-change')))) {
      expect(change).toBe('unchanged');
    }
  });
});

describe('journey 4: the auditor reads the trail and verifies the chain', () => {
  it('filters the trail by subject, then by action, actor and time', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/audit`);
    const filters = page.getByTestId('audit-filters');
    await filters.getByLabel('Subject').fill(name);
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/subject=/);
    await expect.poll(() => trailRows().count()).toBeGreaterThan(0);
    const actions = await trailRows().evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-action')));
    // newest first; the formulation's own events and both versions' events
    expect(actions.at(-1)).toBe('formulation.create');
    expect(actions[0]).toBe('version.approve');
    for (const a of ['version.create', 'version.run', 'version.submit', 'version.approve'])
      expect(actions.filter((x) => x === a)).toHaveLength(2);
    await page.screenshot({ path: artifactPath('audit-2-trail.png'), fullPage: true });

    await filters.getByLabel('Action').selectOption('version.approve');
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/action=version\.approve/);
    await expect
      .poll(() => trailRows().evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-subject'))))
      .toEqual([`${name}@1.1.0`, `${name}@1.0.0`]);
    expect(await trailRows().first().locator('td').first().innerText()).toBe(DEMO.reviewer);

    // the family of an action: every version.* event
    await filters.getByLabel('Action').selectOption('version');
    await filters.getByLabel('Actor').fill(DEMO.author);
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/actor=/);
    await expect.poll(() => trailRows().count()).toBe(6);
    const byAuthor = await trailRows().evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-action')));
    expect(
      byAuthor.every((a) => a === 'version.create' || a === 'version.run' || a === 'version.submit')
    ).toBe(true);

    // nothing of it happened before today (UTC); all of it happened by the end of today
    await filters.getByLabel('Until (UTC, inclusive)').fill(day(-1));
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/until=/);
    await expect.poll(() => page.getByTestId('audit-count').innerText()).toBe('0 events match');
    await filters.getByLabel('From (UTC)').fill(day(0));
    await filters.getByLabel('Until (UTC, inclusive)').fill(day(0));
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(new RegExp(`from=${day(0)}&until=${day(0)}`));
    await expect.poll(() => trailRows().count()).toBe(6);
    // a time range that runs backwards is refused with the API's words
    await filters.getByLabel('From (UTC)').fill(day(1));
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(new RegExp(`from=${day(1)}`));
    await expect.poll(() => page.getByRole('alert').textContent()).toContain('is later than until');
  });

  it('re-hashes the chain on the server and reports it intact', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/audit`);
    const before = await people.auditor.getJson<{ ok: boolean; events: number }>('/api/v1/audit/verify');
    expect(await page.getByTestId('chain-result').innerText()).toContain('Not checked');
    await page.getByTestId('verify-chain').click();
    const result = page.locator('[data-testid=chain-result] [data-chain]');
    await result.waitFor();
    expect(await result.getAttribute('data-chain')).toBe('intact');
    const events = Number((await result.locator('.num').first().innerText()).trim());
    // other suites may append events meanwhile: never fewer than the chain held just before
    expect(events).toBeGreaterThanOrEqual(before.events);
    expect(before.ok).toBe(true);
    await page.screenshot({ path: artifactPath('audit-3-chain.png'), fullPage: true });
  });
});
