import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { utcToday } from '@counterpoise/contracts/participants';
import { appUrl, launchBrowser, screenshot, signInPage } from './support/browser.js';

/*
 * The Outcomes tab on the seeded demo trial (KESTREL, whose draft analysis specification names
 * the week-12 six-minute walk distance). The demo coordinator (sites ALB and SRH) records one
 * outcome by hand, then uploads a small CSV; the sponsor is not offered the page. The page must
 * never show an arm. Runs against a freshly seeded stack (scripts/test.sh).
 */

const COORDINATOR = 'coordinator@counterpoise.example';
const SPONSOR = 'sponsor@counterpoise.example';
const OUTCOME = 'Six-minute walk distance at week 12';
// KESTREL's arms, by code and name: none may appear on the outcomes page of a blinded coordinator
// (the study's title above the tabs names both arms, as the protocol does; that is not a participant's arm).
const ARM_TEXT = [/\bHBW\b/, /\bUC\b/, /breathing-and-walking programme/i, /usual care/i];

type Listed = { items: { code: string; siteCode: string; enrolledAt: string | null }[] };

async function openKestrel(page: Page): Promise<string> {
  await page.goto(appUrl('/studies'));
  await page
    .getByRole('link', { name: /KESTREL/ })
    .filter({ visible: true })
    .first()
    .click();
  await page.waitForURL(/\/studies\/[0-9a-f-]{36}$/);
  return new URL(page.url()).pathname.split('/')[2]!;
}

async function completenessRecorded(page: Page): Promise<number> {
  const text = (await page.getByTestId('outcome-completeness').textContent()) ?? '';
  const m = /recorded for (\d+) of (\d+) participants/.exec(text);
  if (!m) throw new Error(`No completeness figure in: ${text}`);
  return Number(m[1]);
}

async function expectNoArm(page: Page) {
  const text = await page.getByTestId('outcomes-page').innerText();
  for (const arm of ARM_TEXT) expect(text, `arm text ${arm} on the outcomes page`).not.toMatch(arm);
}

describe('outcomes tab of the demo trial', () => {
  let browser: Browser;
  let context: BrowserContext;
  let page: Page;
  let studyId: string;
  /** The three most recently enrolled ALB participants: their week-12 visit has not come, so no outcome is seeded. */
  let codes: [string, string, string];
  const today = utcToday();

  beforeAll(async () => {
    browser = await launchBrowser();
    context = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    page = await signInPage(context, COORDINATOR);
    studyId = await openKestrel(page);
    const res = await context.request.get(
      appUrl(`/api/studies/${studyId}/participants?status=enrolled&sort=-enrolledAt&pageSize=50`),
    );
    expect(res.ok(), await res.text()).toBe(true);
    const alb = ((await res.json()) as Listed).items.filter((p) => p.siteCode === 'ALB');
    expect(alb.length).toBeGreaterThanOrEqual(3);
    codes = [alb[0]!.code, alb[1]!.code, alb[2]!.code];
  });

  afterAll(async () => {
    await context?.close();
    await browser?.close();
  });

  it('when the coordinator opens Outcomes, then it names the outcome and its unit, says no arm is shown, and shows completeness for their sites', async () => {
    await page
      .getByRole('navigation', { name: 'Study sections' })
      .getByRole('link', { name: 'Outcomes', exact: true })
      .click();
    await page.waitForURL(/\/outcomes$/);
    const intro = page.getByTestId('outcomes-intro');
    await expect.poll(() => intro.textContent()).toContain(OUTCOME);
    expect(await intro.locator('dt').allTextContents()).toEqual([
      'Outcome',
      'Unit',
      'Named by',
      'Your sites',
    ]);
    const facts = await intro.locator('dd').allTextContents();
    expect(facts[0]).toBe(OUTCOME);
    expect(facts[1]).toBe('m');
    // The analysis browser test may have locked version 1 already.
    expect(facts[2]).toMatch(/^Analysis specification, version 1 \((draft|locked)\)$/);
    expect(facts[3]).toBe('ALB, SRH');
    expect(await intro.textContent()).toContain('Entered without arms');
    const sites = await page.getByTestId('outcome-completeness').locator('tbody tr').allInnerTexts();
    expect(sites.map((s) => s.trim().slice(0, 3))).toEqual(['ALB', 'SRH']);
    await expectNoArm(page);
    await screenshot(page, 'outcomes-1-coordinator-page');
  });

  it('when the coordinator records one outcome, then an unknown code is refused at its field, and a real one is recorded and counted', async () => {
    const before = await completenessRecorded(page);
    const form = page.getByRole('form', { name: 'Record one outcome' });
    await form.getByLabel('Participant code').fill('KESTREL-ALB-NOBODY');
    await form.getByLabel('Value (m)').fill('401');
    await form.getByLabel('Measured on').fill(today);
    await form.getByRole('button', { name: 'Record outcome' }).click();
    const code = form.getByLabel('Participant code');
    await expect.poll(() => code.getAttribute('aria-invalid')).toBe('true');
    expect(await form.textContent()).toContain('No participant KESTREL-ALB-NOBODY in this study');
    await screenshot(page, 'outcomes-2-unknown-participant');

    await code.fill(codes[0]);
    await form.getByRole('button', { name: 'Record outcome' }).click();
    await expect.poll(() => form.getByRole('status').filter({ hasText: 'Outcome recorded' }).count()).toBe(1);
    expect(await form.textContent()).toContain(`401 m for ${codes[0]}, measured on ${today}`);
    await expect.poll(() => completenessRecorded(page)).toBe(before + 1);

    // Entering it again with another value is a correction: a reason is asked for first.
    await form.getByLabel('Participant code').fill(codes[0]);
    await form.getByLabel('Value (m)').fill('404,5');
    await form.getByRole('button', { name: 'Record outcome' }).click();
    const reason = form.getByLabel('Reason for the correction');
    await reason.waitFor();
    await screenshot(page, 'outcomes-3-correction-reason');
    await reason.fill('Stopwatch read wrongly at the visit');
    await form.getByRole('button', { name: 'Correct the outcome' }).click();
    await expect
      .poll(() => form.getByRole('status').filter({ hasText: 'Outcome corrected' }).count())
      .toBe(1);
    expect(await completenessRecorded(page)).toBe(before + 1);
    await expectNoArm(page);
  });

  it('when the coordinator uploads a CSV, then problems are shown by line first, and a good file is checked, asks a reason for its correction and is recorded', async () => {
    const before = await completenessRecorded(page);
    const dir = await mkdtemp(path.join(tmpdir(), 'cp-outcomes-'));
    const bad = path.join(dir, 'week12-bad.csv');
    await writeFile(
      bad,
      `participant_code;value;measured_on\n${codes[1]};abc;${today}\n${codes[2]};390;2999-01-01\n`,
    );
    const input = page.getByLabel('CSV file');
    await input.setInputFiles(bad);
    const problems = page.getByTestId('outcome-problems');
    await problems.waitFor();
    const text = await problems.textContent();
    expect(text).toContain('“abc” is not a number');
    expect(text).toContain('The measurement date is in the future');
    expect(await page.getByRole('button', { name: /with the server/ }).count()).toBe(0);
    await screenshot(page, 'outcomes-4-file-problems');

    // Semicolons with a decimal comma; the third row corrects the value recorded above.
    const good = path.join(dir, 'week12.csv');
    await writeFile(
      good,
      `participant_code;value;measured_on\n${codes[1]};388,5;${today}\n${codes[2]};402;${today}\n${codes[0]};405;${today}\n`,
    );
    await input.setInputFiles(good);
    await page.getByRole('button', { name: 'Check 3 rows with the server' }).click();
    const counts = page.getByTestId('outcome-check-counts');
    await counts.waitFor();
    expect(await counts.locator('dt').allTextContents()).toEqual(['New', 'Corrections', 'Unchanged']);
    expect(await counts.locator('dd').allTextContents()).toEqual(['2', '1', '0']);
    expect(await completenessRecorded(page)).toBe(before);
    await page.getByRole('button', { name: 'Record 3 outcomes' }).click();
    // Without a reason nothing is sent, and the field says why.
    const reason = page.getByLabel('Reason for the corrections');
    await expect.poll(() => reason.getAttribute('aria-invalid')).toBe('true');
    expect(await completenessRecorded(page)).toBe(before);
    await reason.fill('Week-12 sheet re-checked against the source');
    await screenshot(page, 'outcomes-5-file-checked');
    await page.getByRole('button', { name: 'Record 3 outcomes' }).click();
    const done = page.getByTestId('outcome-write-counts');
    await done.waitFor();
    expect(await done.locator('dt').allTextContents()).toEqual(['Recorded', 'Corrected', 'Unchanged']);
    expect(await done.locator('dd').allTextContents()).toEqual(['2', '1', '0']);
    expect(await page.getByRole('status').filter({ hasText: '3 outcomes recorded' }).count()).toBe(1);
    await expect.poll(() => completenessRecorded(page)).toBe(before + 2);
    await expectNoArm(page);
    await screenshot(page, 'outcomes-6-file-recorded');
  });

  it('when the sponsor opens KESTREL, then there is no Outcomes tab and its address is refused', async () => {
    const sponsorContext = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    const sponsor = await signInPage(sponsorContext, SPONSOR);
    const id = await openKestrel(sponsor);
    const tabs = sponsor.getByRole('navigation', { name: 'Study sections' });
    await tabs.waitFor();
    expect(await tabs.getByRole('link', { name: 'Outcomes', exact: true }).count()).toBe(0);
    await sponsor.goto(appUrl(`/studies/${id}/outcomes`));
    await sponsor.getByText('Not available for your role').waitFor();
    expect(await sponsor.getByTestId('outcomes-page').count()).toBe(0);
    expect(await sponsor.getByLabel('Participant code').count()).toBe(0);
    await screenshot(sponsor, 'outcomes-7-sponsor-refused');
    await sponsorContext.close();
  });
});
