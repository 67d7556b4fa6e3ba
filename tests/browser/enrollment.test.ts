import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { StudyDetail } from '@counterpoise/contracts/design';
import { utcToday } from '@counterpoise/contracts/participants';
import {
  apiSignIn,
  baselineValue,
  fallbackKestrelDesign,
  screeningAnswers,
  screeningFields,
  tinyPdf,
  type Answer,
} from './support/enrollment-fixture.js';
import { launchBrowser, screenshot } from './support/browser.js';

const base = (process.env.E2E_BASE_URL ?? 'http://127.0.0.1:5490').replace(/\/$/, '');
const password = process.env.DEMO_PASSWORD ?? 'balance-demo-2026';
const coordinator = 'coordinator@counterpoise.example';

/** The study as the coordinator's session sees it (sites limited to ALB and SRH). */
async function studyAs(context: BrowserContext, studyId: string): Promise<StudyDetail> {
  const res = await context.request.get(`${base}/api/studies/${studyId}`);
  expect(res.ok(), await res.text()).toBe(true);
  return ((await res.json()) as { study: StudyDetail }).study;
}

async function fillAnswers(page: Page, study: StudyDetail, answers: Record<string, Answer>) {
  for (const f of screeningFields(study)) {
    const value = answers[f.key]!;
    const input = page.locator(`[name="answers.${f.key}"]`);
    if (f.kind === 'number') await input.fill(String(value));
    else await input.selectOption(typeof value === 'boolean' ? (value ? 'yes' : 'no') : String(value));
  }
}

function csvFor(study: StudyDetail, refs: string[], site: string, today: string): string {
  const header = ['participant_ref', 'site', 'status', 'enrollment_date', 'consent_date', 'consent_version'];
  const answers = screeningAnswers(study);
  for (const c of study.covariates) header.push(c.key, `${c.key}_date`);
  for (const q of study.screeningQuestions) header.push(q.key);
  const rows = refs.map((ref) => {
    const cells = [ref, site, 'enrolled', today, today, 'v1.0'];
    for (const c of study.covariates) cells.push(baselineValue(c, answers), today);
    for (const q of study.screeningQuestions) {
      const a = answers[q.key];
      cells.push(a === undefined ? '' : typeof a === 'boolean' ? (a ? 'yes' : 'no') : String(a));
    }
    return cells.join(',');
  });
  return `${header.join(',')}\n${rows.join('\n')}\n`;
}

describe('screening and enrollment by a site coordinator', () => {
  let browser: Browser;
  let context: BrowserContext;
  let page: Page;
  let studyId: string;
  let study: StudyDetail;
  const today = utcToday();
  const siteId = (code: string) => study.sites.find((s) => s.code === code)!.id;
  const enrolledAt = async (code: string) =>
    (
      (await (
        await context.request.get(
          `${base}/api/studies/${studyId}/participants?siteId=${siteId(code)}&status=enrolled&pageSize=1`,
        )
      ).json()) as { total: number }
    ).total;

  beforeAll(async () => {
    browser = await launchBrowser();

    // The design is the statistician's job; save one only when the seeded study has none yet.
    const setup = await browser.newContext();
    const csrf = await apiSignIn(setup.request, base, 'statistician@counterpoise.example', password);
    const list = (await (await setup.request.get(`${base}/api/studies`)).json()) as {
      studies: { id: string; code: string }[];
    };
    studyId = list.studies.find((s) => s.code === 'KESTREL')!.id;
    const current = (
      (await (await setup.request.get(`${base}/api/studies/${studyId}`)).json()) as { study: StudyDetail }
    ).study;
    if (!current.allocation || current.eligibility.length === 0) {
      const res = await setup.request.put(`${base}/api/studies/${studyId}/design`, {
        headers: { 'X-CSRF-Token': csrf },
        data: fallbackKestrelDesign(current.sites, current.targetSampleSize),
      });
      expect(res.ok(), await res.text()).toBe(true);
    }
    await setup.close();

    context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    page = await context.newPage();
    await page.goto(`${base}/sign-in`);
    await page.getByLabel('E-mail').fill(coordinator);
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('navigation', { name: 'Main' }).waitFor();
    study = await studyAs(context, studyId);
  });

  afterAll(async () => {
    await context?.close();
    await browser?.close();
  });

  it('when the coordinator opens the participants tab, then only their own sites are offered', async () => {
    await page.goto(`${base}/studies/${studyId}/participants`);
    await page.getByRole('heading', { name: 'Participants' }).waitFor();
    const siteOptions = await page.getByLabel('Site').locator('option').allInnerTexts();
    expect(siteOptions.slice(1).map((t) => t.split(' ')[0])).toEqual(['ALB', 'SRH']);
    await screenshot(page, 'enrollment-01-participants-coordinator');
  });

  it('when a candidate fails a criterion, then the failed criterion is named and nothing can be enrolled', async () => {
    // The first criterion that an answer inside the field's valid range can fail.
    const failing = study.eligibility.find((c) => {
      try {
        screeningAnswers(study, c.id);
        return true;
      } catch {
        return false;
      }
    })!;
    await page.goto(`${base}/studies/${studyId}/participants/enroll`);
    await page.getByRole('heading', { name: 'Screen a candidate' }).waitFor();
    await page.locator('[name="siteId"]').selectOption(siteId('ALB'));
    await fillAnswers(page, study, screeningAnswers(study, failing.id));
    await screenshot(page, 'enrollment-02-screening-answers');
    await page.getByRole('button', { name: 'Check eligibility' }).click();

    await page.getByRole('heading', { name: 'Not eligible: screen failure recorded' }).waitFor();
    const failed = page.getByRole('list', { name: 'Criteria not met' });
    await expect.poll(() => failed.innerText()).toContain(failing.label);
    expect(await failed.getByRole('listitem').count()).toBe(1);
    expect(await page.getByRole('button', { name: 'Enroll' }).count()).toBe(0);
    await screenshot(page, 'enrollment-03-screen-failure');

    // The failure is in the screening log the API keeps.
    const log = (await (
      await context.request.get(`${base}/api/studies/${studyId}/screenings?eligible=false`)
    ).json()) as {
      items: { failedCriteria: { id: string }[] }[];
    };
    expect(log.items[0]!.failedCriteria.map((c) => c.id)).toEqual([failing.id]);
  });

  it('when an eligible candidate is consented and enrolled, then only then the kit code is shown, never the arm', async () => {
    await page.getByRole('button', { name: 'Screen another candidate' }).click();
    await page.locator('[name="siteId"]').selectOption(siteId('ALB'));
    const answers = screeningAnswers(study);
    await fillAnswers(page, study, answers);
    await page.getByRole('button', { name: 'Check eligibility' }).click();

    await page.getByRole('heading', { name: 'Record consent' }).waitFor();
    await page.locator('[name="version"]').fill('v1.0');
    await page.getByLabel('Signed consent document').setInputFiles({
      name: 'signed-consent.pdf',
      mimeType: 'application/pdf',
      buffer: tinyPdf(),
    });
    await screenshot(page, 'enrollment-04-consent');
    await page.getByRole('button', { name: 'Continue to baseline' }).click();

    await page.getByRole('heading', { name: 'Baseline values' }).waitFor();
    for (const c of study.covariates) {
      const value = page.locator(`[name="${c.key}.value"]`);
      if ((await value.inputValue()) === '') {
        const v = baselineValue(c, answers);
        if (c.kind === 'continuous') await value.fill(v);
        else await value.selectOption(v);
      }
      await page.locator(`[name="${c.key}.measuredOn"]`).fill(today);
    }
    // Nothing is allocated before the confirmation: no kit code on the page yet.
    expect(await page.getByTestId('allocation').count()).toBe(0);
    await screenshot(page, 'enrollment-05-baseline');
    await page.getByRole('button', { name: 'Review and enroll' }).click();

    await page.getByRole('heading', { name: 'Enroll: check and confirm' }).waitFor();
    const enroll = page.getByRole('button', { name: 'Enroll', exact: true });
    expect(await enroll.isDisabled()).toBe(true);
    await page.getByText('Enrollment is irrevocable').waitFor();
    await page.getByLabel(/registration cannot be undone/).check();
    await screenshot(page, 'enrollment-06-confirm');
    await enroll.click();

    const allocation = page.getByTestId('allocation');
    await allocation.waitFor();
    const text = await allocation.innerText();
    expect(text).toMatch(/Kit code/i);
    // KESTREL is blinded: a coordinator gets a kit code and never an arm name or code.
    for (const arm of ['Home breathing-and-walking programme', 'Usual care']) expect(text).not.toContain(arm);
    expect(text).toContain('The arm is not shown');
    await page.getByText('The signed consent document is stored with the participant.').waitFor();
    await screenshot(page, 'enrollment-07-allocated');

    await page.getByRole('link', { name: 'Open the participant' }).click();
    await page.getByRole('heading', { name: 'Baseline values' }).waitFor();
    await page.getByRole('link', { name: 'signed-consent.pdf' }).waitFor();
    await page.getByText('Consent document stored').first().waitFor();
    expect(await page.locator('main').innerText()).not.toContain('Usual care');
    await screenshot(page, 'enrollment-08-participant-detail');
  });

  it('when a CSV is previewed, committed and uploaded again, then bad rows are named, good rows go in once, and the repeat adds nothing', async () => {
    const stamp = Date.now().toString(36).toUpperCase();
    await page.goto(`${base}/studies/${studyId}/participants/import`);
    await page.getByRole('heading', { name: 'Import participants from a CSV file' }).waitFor();
    const input = page.getByLabel('CSV file');
    const before = await enrolledAt('ALB');

    // One row at a site the coordinator does not work at: the whole file is refused, row named.
    const bad = csvFor(study, [`E2E-${stamp}-1`, `E2E-${stamp}-X`], 'ALB', today).replace(
      `E2E-${stamp}-X,ALB`,
      `E2E-${stamp}-X,KHM`,
    );
    await input.setInputFiles({ name: 'kestrel-bad.csv', mimeType: 'text/csv', buffer: Buffer.from(bad) });
    await page.getByRole('button', { name: 'Check the file' }).click();
    await page.getByText('Nothing will be imported from this file').waitFor();
    const problems = page.getByRole('table', { name: 'Problems by row and field' });
    await expect.poll(() => problems.innerText()).toContain('own sites');
    expect(await problems.innerText()).toMatch(/\b3\b/);
    await screenshot(page, 'enrollment-09-import-preview-errors');

    const good = csvFor(study, [`E2E-${stamp}-1`, `E2E-${stamp}-2`], 'ALB', today);
    await input.setInputFiles({ name: 'kestrel-good.csv', mimeType: 'text/csv', buffer: Buffer.from(good) });
    await page.getByRole('button', { name: 'Check the file' }).click();
    await page.getByText('Every row is valid').waitFor();
    await page.getByRole('button', { name: 'Import 2 participants' }).click();
    await page.getByText('2 participants imported').waitFor();
    expect(await enrolledAt('ALB')).toBe(before + 2);
    await screenshot(page, 'enrollment-10-import-committed');

    await input.setInputFiles({ name: 'kestrel-good.csv', mimeType: 'text/csv', buffer: Buffer.from(good) });
    await page.getByRole('button', { name: 'Check the file' }).click();
    await page.getByText('Nothing new to add').waitFor();
    expect(await page.getByRole('button', { name: /^Import \d+ participant/ }).count()).toBe(0);
    await screenshot(page, 'enrollment-11-import-repeat');

    expect(await enrolledAt('ALB')).toBe(before + 2);
  });
});
