import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, screenshot, signInPage as signIn } from './support/browser.js';

/*
 * The statistician's Analysis tab on the seeded demo trial (KESTREL): a draft specification and
 * week-12 outcomes are seeded; the statistician signs and locks the specification, runs it and
 * reads the results, assumption checks and cautions. Runs against the app started by
 * scripts/test.sh (a freshly seeded database), or any fresh stack at E2E_BASE_URL.
 */
const BASE_URL = (process.env.E2E_BASE_URL ?? 'http://127.0.0.1:5490').replace(/\/$/, '');
const PASSWORD = process.env.DEMO_PASSWORD ?? 'balance-demo-2026';
const STATISTICIAN = 'statistician@counterpoise.example';
const CAUTION = "Results support, and do not replace, the judgement of the study's statistician";

describe('analysis tab of the demo trial', () => {
  let browser: Browser;

  beforeAll(async () => {
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('when the statistician locks the seeded specification with a signature and runs it, then the results, checks and cautions are shown', async () => {
    const context = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    const page = await signIn(context, STATISTICIAN);
    await page.goto(`${BASE_URL}/studies`);
    await page
      .getByRole('link', { name: /KESTREL/ })
      .filter({ visible: true })
      .first()
      .click();
    await page.waitForURL(/\/studies\/[0-9a-f-]{36}$/);
    await page.getByRole('link', { name: 'Analysis', exact: true }).click();
    await page.waitForURL(/\/analysis$/);

    const workspace = page.getByTestId('analysis-workspace');
    await expect
      .poll(() => workspace.getByTestId('statistician-caution').first().textContent())
      .toContain(CAUTION);
    await expect.poll(() => page.getByTestId('spec-editor').textContent()).toContain('Version 1 · draft');
    expect(await page.getByTestId('outcome-completeness').textContent()).toMatch(
      /recorded for \d+ of \d+ participants/,
    );
    await screenshot(page, 'analysis-1-draft-specification');

    // Sign: a wrong password is refused and shown next to the field; nothing is locked.
    await page.getByRole('button', { name: 'Sign and lock version 1' }).click();
    const dialog = page.getByRole('dialog', { name: 'Sign and lock version 1' });
    await dialog.getByLabel('I approve this pre-specified analysis').check();
    await dialog.getByLabel('Your password').fill('not-my-password');
    await dialog.getByRole('button', { name: 'Sign and lock' }).click();
    await expect.poll(() => dialog.textContent()).toContain('The password is not correct');
    await screenshot(page, 'analysis-2-wrong-password');
    await dialog.getByLabel('Your password').fill(PASSWORD);
    await dialog.getByRole('button', { name: 'Sign and lock' }).click();
    const signature = page.getByTestId('signature');
    await expect.poll(() => signature.textContent()).toContain('I approve this pre-specified analysis');
    expect(await signature.textContent()).toMatch(
      /Signed by Priya Halvorsen .* at \d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} UTC/,
    );
    await expect.poll(() => page.getByTestId('spec-editor').textContent()).toContain('Version 1 · locked');

    // Run the primary analysis.
    await page.getByRole('button', { name: 'Run the pre-specified analysis' }).click();
    const results = page.getByTestId('run-results');
    await expect.poll(() => results.textContent(), { timeout: 20_000 }).toContain('Primary (pre-specified)');
    expect(await page.getByTestId('ancova-table').textContent()).toContain('Arm (adjusted)');
    expect(await page.getByTestId('anova-table').textContent()).toContain('Error (within arms)');
    expect(await page.getByTestId('adjusted-means-table').textContent()).toMatch(/HBW.*UC/s);
    expect(await page.getByTestId('adjusted-difference').first().textContent()).toMatch(/HBW minus UC/);
    const alt = await page
      .getByTestId('adjusted-means-chart')
      .locator('svg[role="img"]')
      .getAttribute('aria-label');
    expect(alt).toMatch(/Adjusted means of .* HBW .* UC/);
    expect(await page.getByTestId('assumption-checks').locator('[data-check]').count()).toBe(6);
    expect(await page.getByTestId('assumption-checks').textContent()).toContain('common practice');
    for (const chart of ['qq-plot', 'residual-histogram', 'linearity-chart', 'variance-partition']) {
      expect(await page.getByTestId(chart).count(), chart).toBe(1);
    }
    // KESTREL enrolls by FEV1 thresholds and FEV1 is in the model: the regression-to-the-mean caution (10).
    const cautions = results.getByTestId('analysis-cautions');
    expect(await cautions.locator('[data-caution="threshold_enrollment"]').count()).toBe(1);
    expect(await results.getByTestId('statistician-caution').textContent()).toContain(CAUTION);
    await screenshot(page, 'analysis-3-results');
    await context.close();
  });
});
