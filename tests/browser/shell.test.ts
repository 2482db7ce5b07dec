// The shell in Debian's Chromium: the demo author signs in through the form and sees the header,
// the navigation for their role, and the safety notice; the keyboard reaches the skip link first;
// the page fits a 375 px wide screen.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { artifactPath, launchBrowser, type Browser } from '../support/browser';
import { DEMO, DEMO_PASSWORD, testUrl } from '../support/http';

let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
});

describe('the application shell', () => {
  it('signs in the demo author through the form and shows the shell for the author role', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/account`);
    // not signed in: the account page sends the visitor to the form and back
    await page.waitForURL(/\/sign-in\?next=%2Faccount$/);
    await page.getByLabel('E-mail address').fill(DEMO.author);
    await page.getByLabel('Password').fill(DEMO_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/account$/);

    await expect.poll(() => page.getByTestId('signed-in-name').textContent()).toBe('Idris Kettleby');
    const nav = page.getByRole('navigation', { name: 'Main' });
    const links = await nav.getByRole('link').allTextContents();
    // the author sees the areas for anyone signed in; Review, Audit and Admin are for other roles
    expect(links).toEqual(['Catalogue', 'Projects', 'Account']);
    expect(await nav.getByRole('link', { name: 'Account' }).getAttribute('aria-current')).toBe('page');
    expect(await page.getByTestId('my-roles').textContent()).toBe('author');

    const notice = (await page.getByRole('region', { name: 'Safety notice' }).textContent())!.replace(
      /\s+/g,
      ' '
    );
    expect(notice).toContain('A passing verification record is evidence, not approval for use');
    expect(notice).toContain("Analyses need a qualified engineer's judgement");
    expect(notice).toContain('local codes and licensed practice govern');

    // the shipped faces are the ones in use
    const fonts = await page.evaluate(() => ({
      body: getComputedStyle(document.body).fontFamily,
      code: getComputedStyle(document.querySelector('code')!).fontFamily
    }));
    expect(fonts.body).toContain('Atkinson Hyperlegible');
    expect(fonts.code).toContain('JetBrains Mono');
    await page.evaluate(() => document.fonts.ready);
    expect(await page.evaluate(() => document.fonts.check('16px "Atkinson Hyperlegible"'))).toBe(true);

    await page.screenshot({ path: artifactPath('shell-author-account.png'), fullPage: true });
  });

  it('puts the skip link first in the keyboard order and moves focus to the content', async () => {
    const { page } = browser;
    await page.goto(`${testUrl()}/`);
    await page.keyboard.press('Tab');
    expect(await page.evaluate(() => document.activeElement?.textContent?.trim())).toBe(
      'Skip to the content'
    );
    const outline = await page.evaluate(() => getComputedStyle(document.activeElement!).outlineStyle);
    expect(outline).toBe('solid');
    await page.keyboard.press('Enter');
    await expect.poll(() => page.evaluate(() => document.activeElement?.id)).toBe('main');
  });

  it('fits a 375 px wide screen without sideways scrolling, navigation included', async () => {
    const { page } = browser;
    await page.setViewportSize({ width: 375, height: 800 });
    await page.goto(`${testUrl()}/account`);
    const widths = await page.evaluate(() => ({
      scroll: document.documentElement.scrollWidth,
      client: document.documentElement.clientWidth
    }));
    expect(widths.scroll).toBeLessThanOrEqual(widths.client);
    expect(await page.getByRole('navigation', { name: 'Main' }).isVisible()).toBe(true);
    expect(await page.getByRole('button', { name: 'Sign out' }).isVisible()).toBe(true);
    await page.screenshot({ path: artifactPath('shell-author-375px.png'), fullPage: true });
  });

  it('signs out with the header button and returns to the start page signed out', async () => {
    const { page } = browser;
    await page.setViewportSize({ width: 1280, height: 900 });
    await page.goto(`${testUrl()}/`);
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(`${testUrl()}/`);
    expect(await page.getByRole('link', { name: 'Sign in' }).first().isVisible()).toBe(true);
    expect(await page.getByTestId('signed-in-name').count()).toBe(0);
  });
});
