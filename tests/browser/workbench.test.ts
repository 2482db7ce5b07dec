// Journey 1 in Debian's Chromium: the author creates a formulation, writes a six-node triangle in the
// workbench, sees a diagnostic appear on a mistyped symbol and vanish when fixed, runs verification
// while the progress bar moves, and submits. Also: Monaco is loaded by the workbench and by no other
// page, the workbench stacks its panes on a narrow screen, and its forms work without JavaScript.
import { randomBytes, randomInt } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type Page } from 'playwright-core';
import { artifactPath, CHROMIUM_FLAGS, launchBrowser, type Browser } from '../support/browser';
import { DEMO, DEMO_PASSWORD, testUrl } from '../support/http';

/** A verification run of a quadratic triangle, queued behind others on two shared cores, can take a while. */
const RUN_WAIT_MS = 180_000;

const name = `journey-tri6-${randomBytes(3).toString('hex')}`;
const version = '0.1.0';
// a modulus of its own gives the element a definition no earlier run has verified, so the run really runs
const modulus = (1 + randomInt(1, 100_000) / 100_000).toFixed(5);
const workbench = () => `${testUrl()}/formulations/${name}/versions/${version}/edit`;

// The six-node quadratic triangle in area coordinates (corners L(2L − 1), mid-edges 4 L_a L_b; common
// practice, no source), typed with one slip: `etq` for `eta` in the fifth function.
const typed = (symbol: string) => `format: 1
name: ${name}
title: "Six-node triangle, plane stress (journey)"
summary: |
  Quadratic triangle: corners counter-clockwise, then the mid-edge nodes of edges 1-2, 2-3 and 3-1.
  Three-point rule, exact for the quadratic integrand of an undistorted element.
cell: triangle
nodes: [[0, 0], [1, 0], [0, 1], [0.5, 0], [0.5, 0.5], [0, 0.5]]
definitions:
  - L1 = 1 - xi - eta
shape:
  - L1 * (2 * L1 - 1)
  - xi * (2 * xi - 1)
  - eta * (2 * eta - 1)
  - 4 * L1 * xi
  - 4 * xi * ${symbol}
  - 4 * eta * L1
strain: plane-stress
quadrature: { rule: simplex, degree: 2 }
material: { E: ${modulus}, nu: 0.3 }
thickness: 1
`;

let browser: Browser;

async function signIn(page: Page): Promise<void> {
  await page.goto(`${testUrl()}/sign-in`);
  await page.getByLabel('E-mail address').fill(DEMO.author);
  await page.getByLabel('Password').fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

/** Scripts the page fetched, with their text, while `visit` ran. */
async function scriptsDuring(
  page: Page,
  visit: () => Promise<unknown>
): Promise<{ url: string; text: string }[]> {
  const seen: Promise<{ url: string; text: string } | null>[] = [];
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
  return (await Promise.all(seen)).filter((s): s is { url: string; text: string } => s !== null);
}

/** Monaco's environment hook and its worker are the editor's fingerprint in a bundle. */
const loadsMonaco = (scripts: { url: string; text: string }[]) =>
  scripts.some((s) => /editor\.worker/.test(s.url) || s.text.includes('MonacoEnvironment'));

beforeAll(async () => {
  browser = await launchBrowser({ width: 1360, height: 960 });
  await signIn(browser.page);
});

afterAll(async () => {
  await browser?.close();
});

describe('journey 1: the author writes, checks, verifies and submits a new element', () => {
  it('creates the formulation from the new-formulation form and lands in the workbench', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations/new`);
    await page.getByLabel('Name').fill(name);
    await page.getByLabel('Title').fill('Six-node triangle, plane stress (journey)');
    expect(await page.getByLabel('First version').inputValue()).toBe(version);
    await page.getByLabel('Triangle, three nodes, plane stress').check();
    await page.getByRole('button', { name: 'Create and open the workbench' }).click();
    await page.waitForURL(workbench());
    await page.locator('[data-editor-state="ready"]').waitFor();
    expect(await page.getByTestId('version-status').textContent()).toContain('draft');
    // the starting document is valid and its three nodes are drawn
    await expect.poll(() => page.getByTestId('diagnostics-summary').textContent()).toContain('none');
    expect(await page.getByTestId('reference-cell').getByRole('button').count()).toBe(3);
  });

  it('shows a diagnostic on a mistyped symbol, as a marker and in the list, and clears it when fixed', async () => {
    const { page } = browser;
    // the author pastes the document they wrote elsewhere over the starting one
    await browser.context.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: testUrl() });
    await page.evaluate((text) => navigator.clipboard.writeText(text), typed('etq'));
    await page.getByTestId('source-editor').locator('.view-lines').click();
    await page.keyboard.press('ControlOrMeta+A');
    await page.keyboard.press('ControlOrMeta+V');

    const list = page.getByTestId('diagnostics');
    await list.getByText(/etq/).first().waitFor();
    const source = typed('etq').split('\n');
    const line = source.findIndex((l) => l.includes('etq')) + 1;
    expect(await list.textContent()).toContain(`${line}:${source[line - 1].indexOf('etq') + 1}`);
    // the editor draws the same problem as a marker on that line
    await page.locator('.monaco-editor .squiggly-error').first().waitFor();
    await page.screenshot({ path: artifactPath('workbench-1-diagnostic.png'), fullPage: true });

    // choosing the diagnostic puts the cursor on the symbol; select the word and type the right one
    await list.getByRole('button').filter({ hasText: 'etq' }).first().click();
    await page.keyboard.press('ControlOrMeta+Shift+ArrowRight');
    await page.keyboard.type('eta');
    await expect
      .poll(() => page.getByTestId('diagnostics-summary').textContent(), { timeout: 15_000 })
      .toContain('none');
    // and the marker goes with it
    await expect.poll(() => page.locator('.monaco-editor .squiggly-error').count()).toBe(0);
    expect(await page.getByTestId('save-state').textContent()).toBe('unsaved changes');

    // completion: field names on an empty top-level line, the field's symbols and functions inside shape
    const suggestions = page.locator('.monaco-editor .suggest-widget');
    await page.keyboard.press('ControlOrMeta+End');
    await page.keyboard.type('ma');
    await page.keyboard.press('Control+Space');
    await expect.poll(() => suggestions.textContent()).toContain('material');
    await page.keyboard.press('Escape');
    await page.keyboard.press('Backspace');
    await page.keyboard.press('Backspace');
    const shapeLine = typed('eta').split('\n').indexOf('  - 4 * xi * eta') + 1;
    await page.keyboard.press('ControlOrMeta+Home');
    for (let i = 1; i < shapeLine; i++) await page.keyboard.press('ArrowDown');
    await page.keyboard.press('End');
    await page.keyboard.type(' * e');
    await page.keyboard.press('Control+Space');
    await expect.poll(() => suggestions.textContent()).toContain('eta');
    expect(await suggestions.textContent()).toContain('exp');
    expect(await suggestions.textContent()).not.toContain('dNdx');
    await page.keyboard.press('Escape');
    for (let i = 0; i < 4; i++) await page.keyboard.press('Backspace');
    await expect.poll(() => page.getByTestId('diagnostics-summary').textContent()).toContain('none');

    // the preview follows: six nodes; pick the mid-edge node 5 and read its derivatives
    await expect.poll(() => page.getByTestId('reference-cell').getByRole('button').count()).toBe(6);
    await page.getByLabel('Plot').selectOption('5');
    const derivatives = await page.getByTestId('derivatives').textContent();
    expect(derivatives).toContain('∂N5/∂ξ');
    expect(derivatives).toContain('∂N5/∂η');
    // by keyboard: a node on the cell is a button; Enter picks it
    await page
      .getByTestId('reference-cell')
      .getByRole('button', { name: /^node 2 / })
      .focus();
    await page.keyboard.press('Enter');
    expect(await page.getByLabel('Plot').inputValue()).toBe('2');
    await page.screenshot({ path: artifactPath('workbench-2-fixed.png'), fullPage: true });
  });

  it('runs verification with a progress bar that shows the stage, then the verdict and the record link', async () => {
    const { page } = browser;
    // note every state the progress bar shows while the run goes on
    await page.evaluate(() => {
      const seen: { value: number; stage: string }[] = [];
      (window as unknown as { progressSeen: typeof seen }).progressSeen = seen;
      const note = () => {
        const bar = document.querySelector('[data-testid="run-progress"]');
        if (!bar) return;
        const value = Number(bar.getAttribute('aria-valuenow'));
        const stage = document.querySelector('[data-testid="run-stage"]')?.textContent ?? '';
        const last = seen[seen.length - 1];
        if (!last || last.value !== value || last.stage !== stage) seen.push({ value, stage });
      };
      new MutationObserver(note).observe(document.body, {
        subtree: true,
        childList: true,
        attributes: true,
        characterData: true
      });
    });
    await page.getByTestId('run').click();
    await page.getByTestId('run-progress').waitFor({ timeout: 30_000 });
    await page.screenshot({ path: artifactPath('workbench-3-running.png'), fullPage: true });
    await page.getByTestId('run-verdict').waitFor({ timeout: RUN_WAIT_MS });

    const seen = await page.evaluate(
      () => (window as unknown as { progressSeen: { value: number; stage: string }[] }).progressSeen
    );
    console.log(
      `[workbench] progress bar states seen: ${seen.map((x) => `${x.value} % ${x.stage}`).join(' → ')}`
    );
    expect(seen.length).toBeGreaterThan(0);
    for (const s of seen) {
      expect(s.value).toBeGreaterThanOrEqual(0);
      expect(s.value).toBeLessThanOrEqual(100);
      expect(s.stage.length).toBeGreaterThan(0);
    }
    // progress only moves forward
    for (let i = 1; i < seen.length; i++) expect(seen[i].value).toBeGreaterThanOrEqual(seen[i - 1].value);

    const verdict = await page.getByTestId('run-verdict').textContent();
    expect(verdict).toContain('pass');
    expect(await page.getByTestId('run-panel').textContent()).toContain(
      'evidence that these checks were met, not approval for use'
    );
    await expect
      .poll(() => page.getByTestId('run-verdict').getByRole('link', { name: 'open the record' }).count())
      .toBe(1);
    // the run saved the document first
    expect(await page.getByTestId('save-state').textContent()).toBe('saved');
    await page.screenshot({ path: artifactPath('workbench-4-verdict.png'), fullPage: true });
  });

  it('submits the verified draft for review', async () => {
    const { page } = browser;
    const submit = page.getByTestId('submit');
    await expect.poll(() => submit.isEnabled()).toBe(true);
    await submit.click();
    await expect
      .poll(() => page.getByTestId('version-status').textContent(), { timeout: 15_000 })
      .toContain('in-review');
    const stored = await page.request.get(`${testUrl()}/api/v1/formulations/${name}/versions/${version}`);
    expect(stored.status()).toBe(200);
    const body = await stored.json();
    expect(body.status).toBe('in-review');
    expect(body.source).toBe(typed('eta'));
    await page.screenshot({ path: artifactPath('workbench-5-submitted.png'), fullPage: true });
  });
});

describe('Monaco stays on the workbench', () => {
  it('is fetched by the workbench and by none of the other pages', async () => {
    const { page } = browser;
    for (const path of ['/', '/account', '/formulations/new']) {
      const scripts = await scriptsDuring(page, () => page.goto(`${testUrl()}${path}`));
      expect(scripts.length, path).toBeGreaterThan(0);
      expect(loadsMonaco(scripts), `${path} loaded Monaco: ${scripts.map((s) => s.url).join(', ')}`).toBe(
        false
      );
    }
    // the same check sees Monaco where it belongs
    const scripts = await scriptsDuring(page, async () => {
      await page.goto(workbench());
      await page.locator('[data-editor-state="ready"]').waitFor();
    });
    expect(loadsMonaco(scripts)).toBe(true);
  });
});

describe('the workbench on a narrow screen', () => {
  it('stacks the preview under the editor at 375 px without sideways scrolling', async () => {
    const narrow = await launchBrowser({ width: 375, height: 812 });
    try {
      await signIn(narrow.page);
      await narrow.page.goto(workbench());
      await narrow.page.locator('[data-editor-state="ready"]').waitFor();
      const layout = await narrow.page.evaluate(() => {
        const editor = document.querySelector('[data-testid="source-editor"]')!.getBoundingClientRect();
        const cell = document.querySelector('[data-testid="reference-cell"]')!.getBoundingClientRect();
        return {
          scroll: document.documentElement.scrollWidth,
          client: document.documentElement.clientWidth,
          editorBottom: editor.bottom,
          cellTop: cell.top
        };
      });
      expect(layout.scroll).toBeLessThanOrEqual(layout.client);
      expect(layout.cellTop).toBeGreaterThan(layout.editorBottom);
      await narrow.page.screenshot({ path: artifactPath('workbench-375px.png'), fullPage: true });
    } finally {
      await narrow.close();
    }
  });
});

describe('the workbench without JavaScript', () => {
  it('saves (refusing an invalid document with its diagnostics), verifies and submits through plain forms', async () => {
    const plain = await chromium.launch({ executablePath: process.env.CHROMIUM_PATH, args: CHROMIUM_FLAGS });
    try {
      const context = await plain.newContext({
        javaScriptEnabled: false,
        viewport: { width: 1280, height: 900 }
      });
      const page = await context.newPage();
      await signIn(page);
      const plainName = `journey-plain-${randomBytes(3).toString('hex')}`;
      await page.goto(`${testUrl()}/formulations/new`);
      await page.getByLabel('Name').fill(plainName);
      await page.getByLabel('Title').fill('Four-node quadrilateral without script');
      await page.getByRole('button', { name: 'Create and open the workbench' }).click();
      await page.waitForURL(/\/edit$/);
      // the plain text field stands in for the editor; the preview was drawn on the server
      expect(await page.locator('[data-editor-state]').getAttribute('data-editor-state')).toBe('plain');
      expect(await page.getByTestId('reference-cell').getByRole('button').count()).toBe(4);

      const field = page.getByTestId('source-plain');
      const original = await field.inputValue();
      const first = '(1 - xi) * (1 - eta) / 4';
      expect(original).toContain(first);
      await field.fill(original.replace(first, '(1 - xi) * (1 - etq) / 4'));
      await page.getByTestId('save').click();
      await page.waitForLoadState();
      expect(await page.getByRole('alert').first().textContent()).toContain("unknown symbol 'etq'");
      expect(await page.getByTestId('diagnostics').textContent()).toContain('etq');
      expect(await field.inputValue()).toContain('etq');

      // a change of layout only: a comment line
      const edited = original.replace('shape:\n', 'shape:  # bilinear, corners first\n');
      await field.fill(edited);
      await page.getByTestId('save').click();
      await page.waitForLoadState();
      expect(await page.getByTestId('save-state').textContent()).toBe('saved');
      expect(await field.inputValue()).toBe(edited);

      await page.getByTestId('run').click();
      await page.waitForURL(/\?run=/);
      expect(await page.getByTestId('run-panel').textContent()).toContain('Verification run');
      // the page refreshes itself while the run goes on, until the verdict stands
      await page.getByTestId('run-verdict').waitFor({ timeout: RUN_WAIT_MS });
      expect(await page.getByTestId('run-verdict').textContent()).toContain('pass');
      await page.getByTestId('submit').click();
      await page.waitForURL(/\?submitted=1$/);
      expect(await page.getByTestId('version-status').textContent()).toContain('in-review');
      await page.screenshot({ path: artifactPath('workbench-without-script.png'), fullPage: true });
    } finally {
      await plain.close();
    }
  });
});
