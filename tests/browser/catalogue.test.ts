// The catalogue and a formulation's timeline in Debian's Chromium: three formulations drafted from
// the example catalogue (one released through the real queue and review), found by the filters,
// ordered by the column headers, paged, and one opened to its timeline, where the author drafts the
// next version. The catalogue shows readers without draft access only what they may read.
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, testUrl, type Client } from '../support/http';
import {
  catalogueSource,
  createDraft,
  createFormulation,
  demoClients,
  released,
  signInPage,
  tag,
  unusedStiffness
} from '../support/registry-fixtures';

const t = tag();
const prefix = `cat-${t}`;
const bar = `${prefix}-bar`;
const tri = `${prefix}-tri`;
const quad = `${prefix}-quad`;

let browser: Browser;
let people: Record<'author' | 'reviewer' | 'lead', Client>;

const rows = () => browser.page.locator('[data-testid=catalogue] tbody tr');
const rowNames = () => rows().evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-name')));
const open = (query = '') => browser.page.goto(`${testUrl()}/formulations?q=${prefix}${query}`);

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'lead');
  await createFormulation(people.author, bar, 'Catalogue probe, two-node bar');
  await released(
    people,
    bar,
    '1.0.0',
    catalogueSource('bar2-linear', bar, { title: 'Catalogue probe, two-node bar' })
  );
  await createFormulation(people.author, tri, 'Catalogue probe, linear triangle');
  // drafts of meanings never verified, so they cite no record
  await createDraft(
    people.author,
    tri,
    '0.1.0',
    catalogueSource('tri3-membrane', tri, { E: unusedStiffness() })
  );
  await createFormulation(people.author, quad, 'Catalogue probe, bilinear quadrilateral');
  await createDraft(
    people.author,
    quad,
    '0.1.0',
    catalogueSource('quad4-membrane', quad, { E: unusedStiffness() })
  );
  browser = await launchBrowser({ width: 1280, height: 900 });
  await signInPage(browser.page, DEMO.author);
});

afterAll(async () => {
  await browser?.close();
});

describe('the catalogue', () => {
  it('lists each formulation with its latest version, its state and its verdict', async () => {
    const { page } = browser;
    await open();
    expect(await rowNames()).toEqual([bar, quad, tri]);
    const release = page.locator(`tr[data-name="${bar}"]`);
    expect(await release.locator('[data-label="Latest version"]').innerText()).toContain('1.0.0');
    expect(await release.locator('[data-status]').getAttribute('data-status')).toBe('released');
    expect(await release.locator('[data-label=Verdict]').innerText()).toContain('pass');
    expect(await release.locator('[data-verdict]').getAttribute('data-verdict')).toBe('pass');
    expect(await release.getByRole('link', { name: /verification record/ }).count()).toBe(1);
    const draft = page.locator(`tr[data-name="${tri}"]`);
    expect(await draft.locator('[data-status]').getAttribute('data-status')).toBe('draft');
    expect(await draft.locator('[data-label=Verdict]').innerText()).toContain('not verified');
    expect(await draft.locator('[data-label="Cell · strain"]').innerText()).toMatch(
      /triangle\s+plane-stress/
    );
    expect(await draft.locator('[data-label=Author]').innerText()).toBe('Idris Kettleby');
    expect(await page.getByTestId('catalogue-count').innerText()).toContain('3 formulations match');
    await page.screenshot({ path: artifactPath('catalogue-1-list.png'), fullPage: true });
  });

  it('narrows the list by cell, strain kind, state and author through the filter form', async () => {
    const { page } = browser;
    await open();
    const filters = page.getByTestId('catalogue-filters');
    await filters.getByLabel('Reference cell').selectOption('triangle');
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/cell=triangle/);
    await expect.poll(rowNames).toEqual([tri]);

    await filters.getByLabel('Reference cell').selectOption('');
    await filters.getByLabel('Strain kind').selectOption('bar');
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/strain=bar/);
    await expect.poll(rowNames).toEqual([bar]);

    await filters.getByLabel('Strain kind').selectOption('');
    await filters.getByLabel('State of the latest version').selectOption('draft');
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/status=draft/);
    await expect.poll(rowNames).toEqual([quad, tri]);

    await filters.getByLabel('State of the latest version').selectOption('');
    await filters.getByLabel('Author or owner').fill('kettleby');
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.waitForURL(/author=kettleby/);
    await expect.poll(rowNames).toEqual([bar, quad, tri]);

    await filters.getByLabel('Author or owner').fill('nobody-of-that-name');
    await filters.getByRole('button', { name: 'Show' }).click();
    await page.getByTestId('catalogue-empty').waitFor();
    expect(await page.getByTestId('catalogue-empty').innerText()).toBe('Nothing matches these filters.');
    await page.screenshot({ path: artifactPath('catalogue-2-filtered.png'), fullPage: true });
  });

  it('orders by a column header and reverses on the second press', async () => {
    const { page } = browser;
    await open();
    const header = page.locator('th[aria-sort]').first();
    expect(await header.getAttribute('aria-sort')).toBe('ascending');
    await header.getByRole('link').click();
    await page.waitForURL(/sort=-name/);
    await expect.poll(rowNames).toEqual([tri, quad, bar]);
    expect(await page.locator('th[aria-sort]').first().getAttribute('aria-sort')).toBe('descending');
    // the newest change first: the quadrilateral was drafted last
    await page.goto(`${testUrl()}/formulations?q=${prefix}&sort=-updated`);
    expect((await rowNames())[0]).toBe(quad);
  });

  it('pages through the list, keeping the filters', async () => {
    const { page } = browser;
    await open('&per_page=1');
    const pager = page.getByRole('navigation', { name: 'Pages of the catalogue' });
    expect(await page.getByTestId('catalogue-count').innerText()).toContain('page 1 of 3');
    expect(await rowNames()).toEqual([bar]);
    await pager.getByRole('link', { name: 'Next page' }).click();
    await page.waitForURL(/page=2/);
    expect(new URL(page.url()).searchParams.get('q')).toBe(prefix);
    expect(new URL(page.url()).searchParams.get('per_page')).toBe('1');
    await expect.poll(rowNames).toEqual([quad]);
    await pager.getByRole('link', { name: 'page 3' }).click();
    await page.waitForURL(/page=3/);
    await expect.poll(rowNames).toEqual([tri]);
    expect(await pager.getByRole('link', { name: 'Next page' }).count()).toBe(0);
  });

  it('shows the API refusal of a filter value that does not exist', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations?cell=pentagon`);
    expect(await page.getByRole('alert').innerText()).toContain(
      "cell must be one of interval, triangle, quadrilateral, tetrahedron, hexahedron, got 'pentagon'"
    );
  });

  it('shows a reader without draft access the drafts’ names but none of their versions', async () => {
    const r = await people.lead.get(`/formulations?q=${prefix}`);
    expect(r.status).toBe(200);
    const html = await r.text();
    const row = (n: string) =>
      html.slice(html.indexOf(`data-name="${n}"`), html.indexOf('</tr>', html.indexOf(`data-name="${n}"`)));
    expect(row(bar)).toContain('data-status="released"');
    for (const n of [tri, quad]) {
      expect(row(n)).toContain('no version you may read yet');
      expect(row(n)).not.toContain('data-status=');
      expect(row(n)).not.toContain('0.1.0');
    }
    // and the state filter offers the lead no drafts
    expect(html).not.toContain('<option value="draft"');
  });
});

describe('a formulation’s timeline', () => {
  it('opens from the catalogue and tells who did what and when', async () => {
    const { page } = browser;
    await open();
    await page.locator(`tr[data-name="${bar}"]`).getByRole('link', { name: bar }).click();
    await page.waitForURL(`${testUrl()}/formulations/${bar}`);
    const entry = page.locator('[data-testid=timeline] li[data-version="1.0.0"]');
    expect(await entry.getAttribute('data-status')).toBe('released');
    const history = await entry.getByTestId('version-history').innerText();
    expect(history).toMatch(/drafted\s+by Idris Kettleby/);
    expect(history).toMatch(/approved and released\s+by Saoirse Vantongeren/);
    expect(history).toContain('Checked the record and the summary');
    expect(await entry.locator('[data-verdict]').getAttribute('data-verdict')).toBe('pass');
    expect(await page.getByTestId('no-pins').innerText()).toContain('No project pins');
    await page.screenshot({ path: artifactPath('catalogue-3-timeline.png'), fullPage: true });
  });

  it('lets the author draft the next version from the newest source and opens it in the workbench', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations/${bar}`);
    const field = page.getByLabel('New draft');
    expect(await field.inputValue()).toBe('1.1.0');
    // a version that is not greater is refused with the API's own words
    await field.fill('0.9.0');
    await page.getByRole('button', { name: 'Draft and open the workbench' }).click();
    await expect
      .poll(() => page.locator('#next-version-error').textContent())
      .toContain('must be greater than every earlier version');
    await field.fill('1.1.0');
    await page.getByRole('button', { name: 'Draft and open the workbench' }).click();
    await page.waitForURL(`${testUrl()}/formulations/${bar}/versions/1.1.0/edit`);
    const stored = await people.author.getJson<{ status: string; source: string }>(
      `/api/v1/formulations/${bar}/versions/1.1.0`
    );
    const first = await people.author.getJson<{ source: string }>(
      `/api/v1/formulations/${bar}/versions/1.0.0`
    );
    expect(stored.status).toBe('draft');
    expect(stored.source).toBe(first.source);

    await page.goto(`${testUrl()}/formulations/${bar}`);
    expect(await page.getByTestId('version-count').innerText()).toBe('2 versions');
    const versions = await page
      .locator('[data-testid=timeline] > li')
      .evaluateAll((lis) => lis.map((li) => li.getAttribute('data-version')));
    expect(versions).toEqual(['1.1.0', '1.0.0']);
    expect(await page.getByRole('link', { name: 'Compare versions' }).getAttribute('href')).toBe(
      `/formulations/${bar}/compare?from=1.0.0&to=1.1.0`
    );
  });

  it('attaches a file to the new draft from its page, and lists it on the timeline with its SHA-256', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations/${bar}/versions/1.1.0`);
    const csv = 'h,dofs,l2\n0.5,3,1.2e-2\n0.25,5,3.1e-3\n';
    await page.getByLabel('Attach a file').setInputFiles({
      name: 'hand-check.csv',
      mimeType: 'text/csv',
      buffer: Buffer.from(csv)
    });
    await page.getByRole('button', { name: 'Attach', exact: true }).click();
    await expect.poll(() => page.getByTestId('attachments').innerText()).toContain('hand-check.csv');
    const sha = createHash('sha256').update(csv).digest('hex');
    expect(await page.getByTestId('attachments').innerText()).toContain(`sha256:${sha}`);

    await page.goto(`${testUrl()}/formulations/${bar}`);
    const entry = page.locator('[data-testid=timeline] li[data-version="1.1.0"]');
    await entry.getByText('Attachments (1)').click();
    const link = entry.getByRole('link', { name: 'hand-check.csv' });
    const [download] = await Promise.all([page.waitForEvent('download'), link.click()]);
    expect(readFileSync((await download.path())!, 'utf8')).toBe(csv);
  });
});
