// The registry screens at 375 px, by keyboard, and without the editor: every screen fits the width
// (tables become one card per row, or the audit trail scrolls inside its frame with the event column
// held in place), the keyboard reaches and follows the catalogue's links with a visible focus ring,
// and none of these pages fetches Monaco — the workbench, which does, is the check's control.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, testUrl, type Client } from '../support/http';
import {
  catalogueSource,
  createFormulation,
  createProject,
  demoClients,
  loadsMonaco,
  overflowing,
  pin,
  released,
  scriptsDuring,
  scrollsSideways,
  signInPage,
  submitted,
  tag
} from '../support/registry-fixtures';

const t = tag();
const name = `nar-${t}`;
const key = `NAR-${t.toUpperCase()}`;

/** Every screen of the registry except the workbench and the record, each with a name for its screenshot. */
const screens = (): [string, string][] => [
  ['catalogue', `/formulations?q=${name}`],
  ['timeline', `/formulations/${name}`],
  ['version', `/formulations/${name}/versions/1.0.0`],
  ['compare', `/formulations/${name}/compare?from=1.0.0&to=1.1.0`],
  ['review-queue', '/review'],
  ['review', `/review/${name}/1.1.0`],
  ['projects', '/projects'],
  ['project', `/projects/${key}`],
  ['audit', `/audit?subject=${name}`]
];

let browser: Browser;
let people: Record<'author' | 'reviewer' | 'lead', Client>;

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'lead');
  await createFormulation(
    people.author,
    name,
    'Narrow-screen probe with a rather long title, linear triangle'
  );
  await released(people, name, '1.0.0', catalogueSource('tri3-membrane', name));
  await submitted(people.author, name, '1.1.0', catalogueSource('tri3-membrane', name, { nu: 0.25 }));
  await createProject(people.lead, key, 'Narrow-screen probe project');
  await pin(people.lead, key, name, '1.0.0');
  browser = await launchBrowser({ width: 375, height: 812 });
  await signInPage(browser.page, DEMO.auditor);
});

afterAll(async () => {
  await browser?.close();
});

describe('the registry screens at 375 px', () => {
  it('fit the width on every screen, without sideways scrolling of the page', async () => {
    const { page } = browser;
    for (const [label, path] of screens()) {
      const r = await page.goto(`${testUrl()}${path}`);
      expect(r?.status(), path).toBe(200);
      expect(
        await scrollsSideways(page),
        `${path} scrolls sideways: ${(await overflowing(page)).join(', ')}`
      ).toBe(false);
      await page.screenshot({ path: artifactPath(`narrow-${label}-375px.png`), fullPage: true });
    }
  });

  it('turns the catalogue, the queue and the pins into one card per row', async () => {
    const { page } = browser;
    for (const [path, table] of [
      [`/formulations?q=${name}`, 'catalogue'],
      ['/review', 'review-queue'],
      [`/projects/${key}`, 'pins']
    ]) {
      await page.goto(`${testUrl()}${path}`);
      const row = page.locator(`[data-testid=${table}] tbody tr[data-name="${name}"]`);
      const layout = await row.evaluate((tr) => {
        const cell = tr.querySelector('td[data-label]')!;
        const head = tr.closest('table')!.querySelector('thead')!.getBoundingClientRect();
        return {
          row: getComputedStyle(tr).display,
          cell: getComputedStyle(cell).display,
          label: getComputedStyle(cell, '::before').content,
          headWidth: head.width
        };
      });
      expect(layout.row, path).toBe('block');
      expect(layout.cell, path).toBe('block');
      // each value carries its column's name, since the header row is out of sight
      expect(layout.label, path).not.toBe('none');
      expect(layout.headWidth, path).toBeLessThanOrEqual(1);
    }
  });

  it('scrolls the audit trail inside its frame, holding the event column in place', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/audit?subject=${name}`);
    const frame = page.getByRole('region', { name: 'Audit events' });
    const before = await frame.evaluate((el) => {
      const pinned = el.querySelector('tbody th')!;
      return {
        wider: el.scrollWidth > el.clientWidth,
        position: getComputedStyle(pinned).position,
        left: pinned.getBoundingClientRect().left
      };
    });
    expect(before.wider).toBe(true);
    expect(before.position).toBe('sticky');
    // by keyboard: the frame takes focus and the arrow keys scroll it
    await frame.focus();
    for (let i = 0; i < 8; i++) await page.keyboard.press('ArrowRight');
    // the browser scrolls smoothly: wait until the frame has moved and come to rest
    let last = -1;
    await expect
      .poll(
        async () => {
          const now = await frame.evaluate((el) => el.scrollLeft);
          const resting = now > 0 && now === last;
          last = now;
          return resting;
        },
        { timeout: 5000, interval: 100 }
      )
      .toBe(true);
    const after = await frame.evaluate((el) => ({
      scrolled: el.scrollLeft,
      left: el.querySelector('tbody th')!.getBoundingClientRect().left
    }));
    expect(after.scrolled).toBeGreaterThan(0);
    expect(after.left).toBeCloseTo(before.left, 0);
    await page.screenshot({ path: artifactPath('narrow-audit-scrolled-375px.png'), fullPage: true });
  });
});

describe('the registry screens by keyboard', () => {
  it('reaches a catalogue row by Tab, shows the focus ring, and opens the timeline with Enter', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/formulations?q=${name}`);
    let focused = '';
    for (let i = 0; i < 40 && focused !== name; i++) {
      await page.keyboard.press('Tab');
      focused = await page.evaluate(() => document.activeElement?.textContent?.trim() ?? '');
    }
    expect(focused).toBe(name);
    const ring = await page.evaluate(() => {
      const s = getComputedStyle(document.activeElement!);
      return { style: s.outlineStyle, width: parseFloat(s.outlineWidth) };
    });
    expect(ring.style).toBe('solid');
    expect(ring.width).toBeGreaterThanOrEqual(2);
    await page.keyboard.press('Enter');
    await page.waitForURL(`${testUrl()}/formulations/${name}`);
  });
});

describe('no editor outside the workbench', () => {
  it('fetches Monaco on none of the registry screens, and on the workbench as the control', async () => {
    const { page } = browser;
    for (const [, path] of screens()) {
      const scripts = await scriptsDuring(page, () => page.goto(`${testUrl()}${path}`));
      expect(scripts.length, path).toBeGreaterThan(0);
      expect(loadsMonaco(scripts), `${path} loaded Monaco: ${scripts.map((s) => s.url).join(', ')}`).toBe(
        false
      );
    }
    const scripts = await scriptsDuring(page, async () => {
      await page.goto(`${testUrl()}/formulations/${name}/versions/1.1.0/edit`);
      await page.locator('[data-editor-state="ready"]').waitFor();
    });
    expect(loadsMonaco(scripts)).toBe(true);
  });
});
