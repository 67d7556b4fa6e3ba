import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';

/** Debian's chromium, never a downloaded browser. */
export const CHROMIUM_PATH = '/usr/bin/chromium';

export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

const repoRoot = fileURLToPath(new URL('../../../', import.meta.url));
export const SCREENSHOT_DIR = path.join(repoRoot, 'test-artifacts', 'screenshots');

/** The app under test, as started by scripts/test.sh (E2E_BASE_URL). */
export function baseUrl(): string {
  const url = process.env.E2E_BASE_URL;
  if (!url) throw new Error('E2E_BASE_URL is not set: run the browser tests through scripts/test.sh');
  return url.replace(/\/$/, '');
}

/** An absolute URL of the app under test, e.g. appUrl('/sign-in'). */
export function appUrl(pathname = '/'): string {
  return `${baseUrl()}${pathname.startsWith('/') ? pathname : `/${pathname}`}`;
}

/** Password of every demo account (DEMO_PASSWORD, as seeded). */
export function demoPassword(): string {
  const password = process.env.DEMO_PASSWORD;
  if (!password) throw new Error('DEMO_PASSWORD is not set: run the browser tests through scripts/test.sh');
  return password;
}

/**
 * Launches chromium. Playwright gives every launch a fresh temporary user-data-dir and
 * deletes it on close (it refuses a --user-data-dir in args), so no profile state leaks
 * between runs; use one browser.newContext() per signed-in user for separate cookie jars.
 */
export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM_PATH, headless: true, args: CHROMIUM_ARGS });
}

/** Saves a full-page PNG as test-artifacts/screenshots/<name>.png and returns its path. */
export async function screenshot(page: Page, name: string): Promise<string> {
  const safe = name.replace(/[^a-zA-Z0-9._-]+/g, '-');
  await mkdir(SCREENSHOT_DIR, { recursive: true });
  const file = path.join(SCREENSHOT_DIR, `${safe}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** A new page in `context`, signed in through the real form as `email` (demo password by default). */
export async function signInPage(
  context: BrowserContext,
  email: string,
  password = demoPassword(),
): Promise<Page> {
  const page = await context.newPage();
  await page.goto(appUrl('/sign-in'));
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL(/\/studies/);
  return page;
}
