// Debian's Chromium driven by playwright-core: never a downloaded browser. Each launch gets a fresh
// profile folder, removed again on close.
import { mkdtempSync, rmSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM_FLAGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run'
];

export interface Browser {
  context: BrowserContext;
  page: Page;
  close(): Promise<void>;
}

export async function launchBrowser(opts: { width?: number; height?: number } = {}): Promise<Browser> {
  const executablePath = process.env.CHROMIUM_PATH;
  if (!executablePath)
    throw new Error('CHROMIUM_PATH is not set: run the browser tests through `npm test -- tests/browser`');
  const profile = mkdtempSync(join(tmpdir(), 'isoledger-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath,
    headless: true,
    args: CHROMIUM_FLAGS,
    viewport: { width: opts.width ?? 1280, height: opts.height ?? 900 }
  });
  const page = context.pages()[0] ?? (await context.newPage());
  return {
    context,
    page,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    }
  };
}

/** Where screenshots go (ISOLEDGER_ARTIFACTS, created when missing). */
export function artifactPath(name: string): string {
  const dir = process.env.ISOLEDGER_ARTIFACTS ?? join(process.cwd(), 'test-artifacts');
  mkdirSync(dir, { recursive: true });
  return join(dir, name);
}
