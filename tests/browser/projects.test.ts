// Journey 3 in Debian's Chromium: the lead opens a project (a malformed key is refused at its field
// with the API's words), pins a released version, downloads the manifest and finds in it exactly the
// definition hash and record the registry holds for that version, then unpins it.
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, testUrl, type Client } from '../support/http';
import {
  catalogueSource,
  createFormulation,
  demoClients,
  released,
  signInPage,
  tag
} from '../support/registry-fixtures';

const t = tag();
const name = `prj-${t}`;
const key = `PRJ-${t.toUpperCase()}`;

let browser: Browser;
let people: Record<'author' | 'reviewer' | 'lead', Client>;

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'lead');
  await createFormulation(people.author, name, 'Project probe, linear triangle');
  await released(people, name, '1.0.0', catalogueSource('tri3-membrane', name));
  browser = await launchBrowser({ width: 1280, height: 900 });
  await signInPage(browser.page, DEMO.lead);
});

afterAll(async () => {
  await browser?.close();
});

describe('journey 3: the lead pins a released version in a project and downloads the manifest', () => {
  it('opens a project from the form, after the key’s rule is named at the field', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/projects`);
    expect(await page.getByTestId('evidence-note').innerText()).toContain('not approval for use');
    await page.getByLabel('Key').fill('harbour deck');
    await page.getByLabel('Title').fill('Harbour deck re-analysis (journey)');
    await page.getByRole('button', { name: 'Open the project' }).click();
    const error = page.locator('#field-key-error');
    await error.waitFor();
    expect(await error.innerText()).toContain("project key 'harbour deck' must be 2 to 32 characters");
    // what was typed is kept
    expect(await page.getByLabel('Title').inputValue()).toBe('Harbour deck re-analysis (journey)');

    await page.getByLabel('Key').fill(key);
    await page.getByRole('button', { name: 'Open the project' }).click();
    await page.waitForURL(`${testUrl()}/projects/${key}`);
    expect(await page.getByTestId('no-pins').innerText()).toBe('This project pins nothing yet.');
    const listed = await people.lead.getJson<{ key: string; lead: { email: string } }[]>('/api/v1/projects');
    expect(listed.find((p) => p.key === key)?.lead.email).toBe(DEMO.lead);
  });

  it('pins the released version and shows it with its state, hash and record', async () => {
    const { page } = browser;
    await page.getByLabel('Version', { exact: true }).selectOption(`${name}@1.0.0`);
    await page.getByRole('button', { name: 'Pin', exact: true }).click();
    const row = page.locator(`[data-testid=pins] tr[data-name="${name}"]`);
    await row.waitFor();
    expect(await page.getByRole('status').first().innerText()).toContain(`Pinned ${name} 1.0.0`);
    expect(await row.getAttribute('data-status')).toBe('released');
    const version = await people.lead.getJson<{ definitionHash: string; verification: { recordId: string } }>(
      `/api/v1/formulations/${name}/versions/1.0.0`
    );
    expect(await row.locator('[data-label=Definition]').getAttribute('title')).toBe(version.definitionHash);
    expect(await row.getByRole('link', { name: 'record' }).getAttribute('href')).toBe(
      `/records/${version.verification.recordId}`
    );
    expect(await row.locator('[data-label=Pinned]').innerText()).toContain('Benedikt Aarholm');
    await page.screenshot({ path: artifactPath('projects-1-pinned.png'), fullPage: true });
  });

  it('downloads the manifest as a file holding the pin’s definition hash and record', async () => {
    const { page } = browser;
    const [download] = await Promise.all([
      page.waitForEvent('download'),
      page.getByTestId('manifest-download').click()
    ]);
    expect(download.suggestedFilename()).toBe(`${key}-manifest.json`);
    const manifest = JSON.parse(readFileSync((await download.path())!, 'utf8'));
    const version = await people.lead.getJson<{
      definitionHash: string;
      sourceHash: string;
      verification: { recordId: string };
    }>(`/api/v1/formulations/${name}/versions/1.0.0`);
    expect(manifest.project).toEqual({ key, title: 'Harbour deck re-analysis (journey)' });
    expect(manifest.pins).toEqual([
      {
        name,
        version: '1.0.0',
        definitionHash: version.definitionHash,
        sourceHash: version.sourceHash,
        recordId: version.verification.recordId,
        status: 'released'
      }
    ]);
    expect(Number.isNaN(Date.parse(manifest.generatedAt))).toBe(false);
  });

  it('shows the pin on the formulation’s timeline, and unpins it from the project', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations/${name}`);
    expect(await page.locator('li[data-version="1.0.0"]').getByTestId('pinned-by').innerText()).toContain(
      key
    );

    await page.goto(`${testUrl()}/projects/${key}`);
    await page.getByRole('button', { name: `Unpin ${name} 1.0.0` }).click();
    await page.getByTestId('no-pins').waitFor();
    const project = await people.lead.getJson<{ pins: unknown[] }>(`/api/v1/projects/${key}`);
    expect(project.pins).toEqual([]);
  });

  it('pins a release again from the version’s own page', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations/${name}/versions/1.0.0`);
    await page.getByLabel('Project', { exact: true }).selectOption(key);
    await page.getByRole('button', { name: 'Pin 1.0.0' }).click();
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain(`Pinned in ${key}`);
    const project = await people.lead.getJson<{ pins: { name: string; version: string }[] }>(
      `/api/v1/projects/${key}`
    );
    expect(project.pins.map((p) => `${p.name}@${p.version}`)).toEqual([`${name}@1.0.0`]);
  });
});
