import { stat } from 'node:fs/promises';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, screenshot, signInPage as signIn } from './support/browser.js';

/*
 * The statistician's balance dashboard on the seeded demo trial (KESTREL): balanced overall,
 * one site drifting on one covariate, one open alert. Runs against the app started by
 * scripts/test.sh (or any running stack at E2E_BASE_URL).
 */
const BASE_URL = (process.env.E2E_BASE_URL ?? 'http://127.0.0.1:5490').replace(/\/$/, '');
const STATISTICIAN = 'statistician@counterpoise.example';
const SPONSOR = 'sponsor@counterpoise.example';
const CAUTION = "Results support, and do not replace, the judgement of the study's statistician";

async function openKestrel(page: Page): Promise<void> {
  await page.goto(`${BASE_URL}/studies`);
  // The list renders a table on wide screens and cards on narrow ones: take the visible link.
  await page
    .getByRole('link', { name: /KESTREL/ })
    .filter({ visible: true })
    .first()
    .click();
  await page.waitForURL(/\/studies\/[0-9a-f-]{36}$/);
}

describe('balance dashboard of the demo trial', () => {
  let browser: Browser;

  beforeAll(async () => {
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('when the statistician opens KESTREL, then the baseline table, the charts and an open alert are shown, and acknowledging it records the comment', async () => {
    const context = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    const page = await signIn(context, STATISTICIAN);
    await openKestrel(page);

    await page.getByRole('link', { name: 'Balance', exact: true }).click();
    await page.waitForURL(/\/balance$/);
    const dashboard = page.getByTestId('balance-dashboard');
    await expect.poll(() => dashboard.getByTestId('statistician-caution').textContent()).toContain(CAUTION);

    // Baseline table: one column per arm plus overall, rows for every covariate, no p-values by default.
    const table = page.getByTestId('baseline-table');
    await table.waitFor();
    expect(await table.locator('thead th').count()).toBeGreaterThanOrEqual(4);
    expect(await table.locator('tbody tr').count()).toBeGreaterThan(5);
    expect(await page.getByTestId('baseline-pvalues').count()).toBe(0);
    expect(await page.getByTestId('baseline-csv').getAttribute('href')).toMatch(/\/baseline-table\.csv$/);

    // The SMD chart carries a text summary and one focusable point per covariate.
    const chart = page.getByTestId('smd-dot-chart');
    await chart.waitFor();
    expect(await chart.getAttribute('aria-label')).toMatch(/Standardized mean differences for \d+ covariate/);
    expect(await chart.locator('g[tabindex="0"]').count()).toBeGreaterThan(2);
    await page.getByTestId('balance-history-chart').waitFor();

    // The site grid: the drifting site shows a value beyond its chance band.
    const grid = page.getByTestId('site-grid');
    await grid.waitFor();
    expect(await grid.locator('tbody tr').count()).toBeGreaterThanOrEqual(2);
    expect(await grid.getByText('beyond the chance band:').count()).toBeGreaterThanOrEqual(1);
    expect(await page.getByTestId('balance-freshness').textContent()).toMatch(/Computed at/);
    const dashboardShot = await screenshot(page, 'balance-dashboard-statistician');
    expect((await stat(dashboardShot)).size).toBeGreaterThan(0);

    // Asking for p-values shows them only with the CONSORT caution.
    await page.getByLabel('Show baseline p-values, labelled').check();
    await page.getByTestId('baseline-pvalues').waitFor();
    expect(await page.getByTestId('consort-caution').textContent()).toContain('CONSORT 2010 item 15');
    await screenshot(page, 'balance-baseline-pvalues');

    // Alerts: the seeded drift is open, with the randomized-trial caution beside it.
    await page.getByRole('link', { name: 'Alerts', exact: true }).click();
    await page.waitForURL(/\/alerts$/);
    expect(await page.getByTestId('alert-caution').textContent()).toContain('pre-specified analysis stands');
    const open = page.locator('[data-testid="alert-row"][data-state="open"]').first();
    await open.waitFor();
    const alertId = await open.getAttribute('data-alert-id');
    expect(alertId).toMatch(/^[0-9a-f-]{36}$/);
    // Every open alert shows its chance band (a ± figure) next to its SMD.
    expect(await open.textContent()).toMatch(/±\d\.\d{3}/);
    await screenshot(page, 'balance-alerts-open');

    const comment =
      'Checked: within what chance gives across all covariates at this size; pre-specified model unchanged.';
    await open.getByRole('button', { name: /^Acknowledge/ }).click();
    const form = page.locator(`#ack-${alertId}`);
    await form.getByLabel(/Comment/).fill(comment);
    await form.getByRole('button', { name: 'Acknowledge', exact: true }).click();
    await page.getByRole('status').filter({ hasText: 'Acknowledged:' }).waitFor();

    // It has left the open list and shows, with its comment and who wrote it, under Acknowledged.
    expect(await page.locator(`[data-testid="alert-row"][data-alert-id="${alertId}"]`).count()).toBe(0);
    await page.getByRole('button', { name: /^Acknowledged/ }).click();
    const row = page.locator(`[data-testid="alert-row"][data-alert-id="${alertId}"]`);
    await row.waitFor();
    expect(await row.getAttribute('data-state')).toBe('acknowledged');
    const commentRow = page.locator(`[data-testid="alert-comment-row"][data-alert-id="${alertId}"]`);
    expect(await commentRow.getByTestId('alert-comment').textContent()).toBe(comment);
    expect(await commentRow.textContent()).toContain(STATISTICIAN);
    await screenshot(page, 'balance-alert-acknowledged');
    await context.close();
  });

  it('when the sponsor opens KESTREL, then only pooled figures are shown and there is no balance tab', async () => {
    const context = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    const page = await signIn(context, SPONSOR);
    await openKestrel(page);

    const pooled = page.getByTestId('pooled-overview');
    await pooled.waitFor();
    expect(await pooled.getByTestId('statistician-caution').textContent()).toContain(CAUTION);
    expect(await page.getByTestId('enrollment-by-site').getAttribute('aria-label')).toMatch(
      /Enrollment against target by site/,
    );
    expect(await page.getByTestId('pooled-distributions').locator('tbody tr').count()).toBeGreaterThan(2);
    expect(await page.getByRole('link', { name: 'Balance', exact: true }).count()).toBe(0);
    expect(await page.getByTestId('smd-dot-chart').count()).toBe(0);
    await screenshot(page, 'balance-sponsor-pooled');
    await context.close();
  });
});
