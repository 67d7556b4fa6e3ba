import { stat } from 'node:fs/promises';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { appUrl, launchBrowser, screenshot } from './support/browser.js';

describe('the app root', () => {
  let browser: Browser;

  beforeAll(async () => {
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('when a visitor opens the root URL, then the built app loads under the Counterpoise title', async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    const response = await page.goto(appUrl('/'), { waitUntil: 'load' });
    expect(response?.status()).toBe(200);
    expect(await page.title()).toContain('Counterpoise');

    const file = await screenshot(page, 'smoke-root');
    expect((await stat(file)).size).toBeGreaterThan(0);
    await context.close();
  });
});
