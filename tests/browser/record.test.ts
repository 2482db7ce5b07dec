// The record screen in Chromium: records produced by the verification engine (fixtures under
// tests/support/fixtures) are stored as finished runs, then read as an engineer would — verdict,
// checks, spectrum, spurious modes, patch variants, convergence plot, hashes — on a wide screen, at
// 375 px, by keyboard and in print.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import canonicalize from 'canonicalize';
import { ulid } from 'ulid';
import { recordHash, type CheckResult, type VerificationRecord } from '@isoledger/verify';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { closeTestDb, execute } from '../support/db';
import { DEMO, DEMO_PASSWORD, testUrl } from '../support/http';

interface Fixture {
  source: string;
  record: VerificationRecord;
}

function fixture(name: string): Fixture {
  return JSON.parse(
    readFileSync(join(import.meta.dirname, '..', 'support', 'fixtures', `record-${name}.json`), 'utf8')
  );
}

/** Stores the record as the queue would on completion: a done run and its record row (0004-verification-runs). */
async function storeRecord(f: Fixture): Promise<string> {
  const runId = ulid();
  const recordId = ulid();
  const r = f.record;
  await execute(
    `INSERT INTO verification_runs (id, version_id, definition_hash, source, status, progress, stage, attempts, record_id, created_at, started_at, finished_at)
     VALUES (?, NULL, ?, ?, 'done', 1, NULL, 1, ?, NOW(3), NOW(3), NOW(3))`,
    [runId, r.definitionHash, f.source, recordId]
  );
  await execute(
    `INSERT INTO verification_records (id, run_id, definition_hash, engine_version, verdict, record, record_hash, created_at)
     VALUES (?, ?, ?, ?, ?, ?, ?, NOW(3))`,
    [recordId, runId, r.definitionHash, r.engine, r.verdict, canonicalize(r) as string, recordHash(r)]
  );
  return recordId;
}

const check = (r: VerificationRecord, id: string): CheckResult => {
  const c = r.checks.find((x) => x.id === id);
  if (!c) throw new Error(`fixture has no ${id} check`);
  return c;
};

const sound = fixture('quad4');
const onePoint = fixture('quad4-one-point');
const flawed = fixture('flawed');
const ids: Record<'sound' | 'onePoint' | 'flawed', string> = { sound: '', onePoint: '', flawed: '' };
let browser: Browser;

beforeAll(async () => {
  ids.sound = await storeRecord(sound);
  ids.onePoint = await storeRecord(onePoint);
  ids.flawed = await storeRecord(flawed);
  browser = await launchBrowser({ width: 1280, height: 900 });
  const { page } = browser;
  await page.goto(`${testUrl()}/records/${ids.sound}`);
  // not signed in: the page sends the reader to the sign-in form and back
  expect(new URL(page.url()).pathname).toBe('/sign-in');
  await page.fill('input[name=email]', DEMO.author);
  await page.fill('input[name=password]', DEMO_PASSWORD);
  await Promise.all([page.waitForURL(`**/records/${ids.sound}`), page.click('button[type=submit]')]);
});

afterAll(async () => {
  await browser?.close();
  await closeTestDb();
});

describe('the record of a sound element (four-node quadrilateral, full integration)', () => {
  it('states the verdict in words, the engine, both hashes and the safety notice', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/records/${ids.sound}`);
    expect(sound.record.verdict).toBe('pass');
    const verdict = page.getByTestId('record-verdict');
    expect(await verdict.getAttribute('data-verdict')).toBe('pass');
    expect(await verdict.innerText()).toContain('Every required check passed.');
    expect(await page.locator('[data-value="definition hash"]').innerText()).toBe(
      sound.record.definitionHash
    );
    expect(await page.locator('[data-value="record hash"]').innerText()).toBe(recordHash(sound.record));
    const notice = await page.getByTestId('record-safety-notice').innerText();
    expect(notice).toContain('evidence, not approval for use');
    expect(notice).toContain('qualified engineer');
    expect(notice).toContain('Local codes and licensed practice govern');
    await page.screenshot({ path: artifactPath('record-sound-screen.png'), fullPage: true });
  });

  it('lists every check of the record once, with its status', async () => {
    const { page } = browser;
    const rows = page.locator('[data-testid=checks-table] tbody tr');
    expect(await rows.count()).toBe(sound.record.checks.length);
    for (const c of sound.record.checks) {
      const row = page.locator(`[data-testid=checks-table] tr[data-check-id="${c.id}"]`);
      expect(await row.count()).toBe(1);
      expect(await row.getAttribute('data-status')).toBe(c.status);
    }
    // tolerances are written as the contract's comparison (verification.md §1)
    const kron = page.locator('tr[data-check-id="kronecker-delta"] td[data-label=Tolerance]');
    expect(await kron.innerText()).toBe('≤ 1e-12');
  });

  it('keeps fields it has no layout for in a key/value list', async () => {
    const { page } = browser;
    const rigid = check(sound.record, 'rigid-body-modes');
    expect(rigid.modes).toBe(3);
    const extras = page.locator('tr[data-check-id="rigid-body-modes"] [data-testid=check-extras]');
    expect(await extras.innerText()).toMatch(/modes\s+3/);
  });

  it('draws every eigenvalue in the spectrum and counts the zero modes against the expected ones', async () => {
    const { page } = browser;
    const zero = check(sound.record, 'zero-energy-modes');
    const eigenvalues = zero.eigenvalues as number[];
    expect(await page.locator('svg[data-chart=spectrum] .spectrum-point').count()).toBe(eigenvalues.length);
    expect(await page.locator('svg[data-chart=spectrum] [data-kind=zero]').count()).toBe(zero.zeroModes);
    expect(await page.locator('[data-count=expected]').innerText()).toBe(String(zero.expected));
    expect(await page.locator('[data-count=found]').innerText()).toBe(String(zero.zeroModes));
    expect(await page.getByTestId('spurious-modes').count()).toBe(0);
  });

  it('shows each patch-test variant with its status', async () => {
    const { page } = browser;
    for (const c of sound.record.checks.filter((x) => x.id.startsWith('patch-'))) {
      const variants = c.variants as { variant: string; status: string }[];
      const table = page.locator(`[data-testid=patch-variants][data-check-id="${c.id}"]`);
      for (const v of variants) {
        expect(await table.locator(`tr[data-variant="${v.variant}"]`).getAttribute('data-status')).toBe(
          v.status
        );
      }
      expect(variants.map((v) => v.variant).sort()).toEqual(['A', 'B', 'C']);
    }
  });

  it('plots the convergence series on log–log axes with the observed orders beside the theoretical ones', async () => {
    const { page } = browser;
    const conv = check(sound.record, 'convergence');
    const series = conv.series as { h: number; l2: number; energy: number }[];
    const observed = conv.observed as { l2: number; energy: number };
    const plot = page.locator('svg[data-chart=log-log]');
    expect(await plot.locator('[data-series=l2] .plot-point').count()).toBe(series.length);
    expect(await plot.locator('[data-series=energy] .plot-point').count()).toBe(series.length);
    expect(await plot.locator('.slope-triangle').count()).toBe(2);
    const orders = page.getByTestId('convergence-orders');
    expect(await orders.locator('[data-order=l2] .observed').innerText()).toBe(observed.l2.toFixed(2));
    expect(await orders.locator('[data-order=energy] .observed').innerText()).toBe(
      observed.energy.toFixed(2)
    );
  });

  it('shows the informative benchmark tables', async () => {
    const { page } = browser;
    for (const c of sound.record.checks.filter((x) => !x.required && x.id !== 'completeness-degree')) {
      expect(
        await page.locator(`[data-testid=benchmark][data-check-id="${c.id}"] table`).count()
      ).toBeGreaterThan(0);
    }
  });

  it('lays out in print with no navigation, the charts kept and a page break before each section', async () => {
    const { page } = browser;
    await page.emulateMedia({ media: 'print' });
    try {
      expect(await page.locator('nav[aria-label="Sections of this record"]').isVisible()).toBe(false);
      expect(await page.locator('header.site-header').isVisible()).toBe(false);
      expect(await page.locator('svg[data-chart=spectrum]').isVisible()).toBe(true);
      expect(await page.locator('svg[data-chart=log-log]').isVisible()).toBe(true);
      const breaks = await page
        .locator('section.record-section')
        .evaluateAll((els) => els.map((e) => getComputedStyle(e).breakBefore));
      expect(breaks.length).toBeGreaterThan(3);
      expect(breaks.every((b) => b === 'page')).toBe(true);
      await page.screenshot({ path: artifactPath('record-sound-print.png'), fullPage: true });
    } finally {
      await page.emulateMedia({ media: 'screen' });
    }
  });

  it('reaches a section from the index by keyboard', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/records/${ids.sound}`);
    const link = page.locator('nav[aria-label="Sections of this record"] a[href="#section-convergence"]');
    await link.focus();
    await page.keyboard.press('Enter');
    await page.waitForURL('**#section-convergence');
    expect(new URL(page.url()).hash).toBe('#section-convergence');
  });
});

describe('the record of the one-point quadrilateral (spurious modes)', () => {
  it('fails on zero-energy modes and draws each spurious mode as the deformed element', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/records/${ids.onePoint}`);
    const zero = check(onePoint.record, 'zero-energy-modes');
    const modes = zero.spuriousModes as unknown[];
    expect(onePoint.record.verdict).toBe('fail');
    expect(zero.status).toBe('fail');
    expect(modes.length).toBeGreaterThan(0);
    expect(await page.getByTestId('record-verdict').getAttribute('data-verdict')).toBe('fail');
    expect(await page.locator('tr[data-check-id="zero-energy-modes"]').getAttribute('data-status')).toBe(
      'fail'
    );
    const drawings = page.locator('[data-testid=spurious-modes] svg[data-chart=deformed-mesh]');
    expect(await drawings.count()).toBe(modes.length);
    const nodes = (zero.nodes as number[][]).length;
    expect(await drawings.first().locator('.mode-node').count()).toBe(nodes);
    expect(await drawings.first().locator('polyline.deformed').count()).toBe(4);
    expect(await page.locator('svg[data-chart=spectrum] .is-spurious').count()).toBe(zero.spurious);
    await page.screenshot({ path: artifactPath('record-one-point-screen.png'), fullPage: true });
  });
});

describe('the record of a flawed element', () => {
  it('fails, and each failed check shows its message', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/records/${ids.flawed}`);
    expect(flawed.record.verdict).toBe('fail');
    expect(await page.getByTestId('record-verdict').innerText()).toContain(
      'At least one required check failed or could not run.'
    );
    const failed = flawed.record.checks.filter((c) => c.status === 'fail' || c.status === 'error');
    expect(failed.length).toBeGreaterThan(0);
    for (const c of failed) {
      const row = page.locator(`tr[data-check-id="${c.id}"]`);
      expect(await row.getAttribute('data-status')).toBe(c.status);
      expect(await row.locator('td[data-label=Message]').innerText()).toContain(c.message);
    }
    await page.screenshot({ path: artifactPath('record-flawed-screen.png'), fullPage: true });
  });
});

describe('at 375 px', () => {
  it('fits the width without sideways scrolling', async () => {
    const narrow = await launchBrowser({ width: 375, height: 800 });
    try {
      await narrow.context.addCookies(await browser.context.cookies());
      await narrow.page.goto(`${testUrl()}/records/${ids.onePoint}`);
      await narrow.page.waitForSelector('svg[data-chart=spectrum]');
      const overflow = await narrow.page.evaluate(
        () => document.documentElement.scrollWidth - window.innerWidth
      );
      expect(overflow).toBeLessThanOrEqual(0);
      await narrow.page.screenshot({ path: artifactPath('record-one-point-375.png'), fullPage: true });
    } finally {
      await narrow.close();
    }
  });
});

describe('a record that does not exist', () => {
  it('says so instead of drawing an empty record', async () => {
    const { page } = browser;
    const response = await page.goto(`${testUrl()}/records/01J0000000000000000000000Z`);
    expect(response?.status()).toBe(404);
    expect(await page.getByTestId('error-message').innerText()).toContain('no verification record');
  });
});
