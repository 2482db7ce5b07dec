// Journey 2 in Debian's Chromium: a second version of a released element waits in review; the
// reviewer opens it from the queue, reads it beside the previous release (changed definition paths,
// every check's metric before and after, the source diff), is told a rejection needs a comment, and
// approves it. The release is then what the API serves.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, testUrl, type Client } from '../support/http';
import {
  catalogueSource,
  createFormulation,
  demoClients,
  released,
  signInPage,
  submitted,
  tag,
  versionState,
  type RunOutcome
} from '../support/registry-fixtures';

const name = `rev-${tag()}`;
const REVISED = 'Revised: two Gauss points, one more than the first version needs for a straight bar.';

let browser: Browser;
let people: Record<'author' | 'reviewer', Client>;
const runs: Record<'first' | 'second', RunOutcome | null> = { first: null, second: null };

beforeAll(async () => {
  people = await demoClients('author', 'reviewer');
  await createFormulation(people.author, name, 'Review probe, two-node bar');
  runs.first = await released(people, name, '1.0.0', catalogueSource('bar2-linear', name));
  runs.second = await submitted(
    people.author,
    name,
    '1.1.0',
    catalogueSource('bar2-linear', name, { quadraturePoints: 2, summary: REVISED })
  );
  browser = await launchBrowser({ width: 1360, height: 960 });
  await signInPage(browser.page, DEMO.reviewer);
});

afterAll(async () => {
  await browser?.close();
});

describe('journey 2: the reviewer compares the submitted version with the previous release and approves it', () => {
  it('finds the version in the queue with its author and submission time', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/review`);
    const row = page.locator(`[data-testid=review-queue] tr[data-name="${name}"]`);
    expect(await row.count()).toBe(1);
    expect(await row.getAttribute('data-version')).toBe('1.1.0');
    expect(await row.locator('[data-label=Author]').innerText()).toBe('Idris Kettleby');
    expect(await row.locator('[data-label=Submitted] time').getAttribute('datetime')).toMatch(
      /^\d{4}-\d\d-\d\dT/
    );
    expect(await page.getByTestId('evidence-note').innerText()).toContain(
      'evidence that the listed checks were met, not approval for use'
    );
    await page.screenshot({ path: artifactPath('review-1-queue.png'), fullPage: true });
    await row.getByRole('link', { name: `Open the review of ${name} 1.1.0` }).click();
    await page.waitForURL(`${testUrl()}/review/${name}/1.1.0`);
  });

  it('sets it beside 1.0.0: changed definition paths, metrics before and after, and the source diff', async () => {
    const { page } = browser;
    expect(
      await page.getByRole('heading', { name: /Beside 1\.0\.0, the previous released version/ }).count()
    ).toBe(1);
    const paths = await page.getByTestId('definition-paths').innerText();
    expect(paths).toContain('quadrature.points');
    expect(paths).toContain('summary');
    expect(paths).not.toContain('shape');

    // one row per check of either record, each with both sides
    const [before, after] = await Promise.all([
      people.reviewer.getJson<{ checks: { id: string; status: string }[] }>(
        `/api/v1/records/${runs.first!.recordId}`
      ),
      people.reviewer.getJson<{ checks: { id: string; status: string }[] }>(
        `/api/v1/records/${runs.second!.recordId}`
      )
    ]);
    const ids = [...new Set([...before.checks, ...after.checks].map((c) => c.id))];
    const table = page.getByTestId('check-changes');
    expect(await table.locator('tbody tr').count()).toBe(ids.length);
    for (const c of after.checks) {
      const row = table.locator(`tr[data-check-id="${c.id}"]`);
      expect(await row.locator('[data-side=after]').innerText()).toContain(c.status);
      expect(await row.locator('[data-side=before]').innerText()).toContain(
        before.checks.find((b) => b.id === c.id)!.status
      );
    }

    // the source diff strikes the one-point rule and enters the two-point one
    const diff = page.getByTestId('source-diff');
    const struck = await diff.locator('tr[data-kind=struck]').allInnerTexts();
    const entered = await diff.locator('tr[data-kind=entered]').allInnerTexts();
    expect(struck.some((l) => /points: 1/.test(l))).toBe(true);
    expect(entered.some((l) => /points: 2/.test(l))).toBe(true);
    expect(entered.some((l) => l.includes('Revised: two Gauss points'))).toBe(true);
    expect(await page.getByTestId('diff-summary').innerText()).toMatch(
      /\d+ lines? struck, \d+ lines? entered/
    );
    expect(await page.getByTestId('evidence-note').innerText()).toContain('not approval for use');
    await page.screenshot({ path: artifactPath('review-2-beside-release.png'), fullPage: true });
  });

  it('refuses a rejection without a comment and says so at the comment field', async () => {
    const { page } = browser;
    await page.getByRole('button', { name: 'Reject, back to draft' }).click();
    const message = page.locator('#review-comment-error');
    await message.waitFor();
    expect(await message.innerText()).toContain(
      'a rejection needs a comment that tells the author what to change'
    );
    expect(await page.getByLabel('Comment').getAttribute('aria-invalid')).toBe('true');
    expect((await versionState(people.reviewer, name, '1.1.0')).status).toBe('in-review');
  });

  it('approves with a comment: the version is released and leaves the queue', async () => {
    const { page } = browser;
    await page
      .getByLabel('Comment')
      .fill('Two points change nothing for a straight bar; the record still passes.');
    await page.getByRole('button', { name: 'Approve and release' }).click();
    await expect
      .poll(() => page.getByTestId('version-status').locator('[data-status]').getAttribute('data-status'))
      .toBe('released');
    expect(await page.getByRole('status').first().innerText()).toContain(
      `Approved: ${name} 1.1.0 is released`
    );
    expect(await page.getByTestId('decision-closed').innerText()).toContain('This version is released');
    await page.screenshot({ path: artifactPath('review-3-approved.png'), fullPage: true });

    const stored = await versionState(people.reviewer, name, '1.1.0');
    expect(stored.status).toBe('released');
    expect(stored.verification?.recordId).toBe(runs.second!.recordId);
    expect(stored.reviews.at(-1)).toMatchObject({
      decision: 'approve',
      comment: 'Two points change nothing for a straight bar; the record still passes.'
    });

    await page.goto(`${testUrl()}/review`);
    expect(await page.locator(`[data-testid=review-queue] tr[data-name="${name}"]`).count()).toBe(0);
  });
});
