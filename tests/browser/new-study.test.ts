import type { Browser, Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { appUrl, launchBrowser, screenshot, signInPage as signIn } from './support/browser.js';

/*
 * Creating a study from the studies page: the demo statistician fills the form (meeting the
 * client-side checks and a taken code on the way), lands on the new study's Design tab, and
 * finds the study in the list; the sponsor is not offered the action.
 */
const STATISTICIAN = 'statistician@counterpoise.example';
const SPONSOR = 'sponsor@counterpoise.example';

/** The name attribute of the focused element, to check where focus went after a failed submit. */
const focusedName = (page: Page) => page.locator(':focus').getAttribute('name');

/** The accessible description of a control: the text of the elements its aria-describedby names. */
async function descriptionOf(page: Page, control: Locator): Promise<string> {
  const ids = ((await control.getAttribute('aria-describedby')) ?? '').split(' ').filter(Boolean);
  const texts = await Promise.all(ids.map((id) => page.locator(`[id="${id}"]`).textContent()));
  return texts.join(' ');
}

describe('creating a study', () => {
  let browser: Browser;
  // Unique per run, so the test also passes against a database that was not reseeded.
  const code = `OSPREY_${Math.random().toString(36).slice(2, 7).toUpperCase()}`;
  const title = 'Osprey: a pilot of supervised cycling after knee replacement';

  beforeAll(async () => {
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('when the statistician creates a study, then mistakes are shown at their fields and the new study opens on its Design tab', async () => {
    const context = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    const page = await signIn(context, STATISTICIAN);

    await page.getByRole('link', { name: 'New study' }).click();
    await page.waitForURL(/\/studies\/new$/);
    await page.getByRole('heading', { level: 1, name: 'New study' }).waitFor();
    await screenshot(page, 'new-study-1-form');

    // Nothing filled in: every field says what is missing, and focus goes to the first one.
    await page.getByRole('button', { name: 'Create study' }).click();
    await page.getByText('The study was not created: 5 answers to fix.').waitFor();
    await expect.poll(() => focusedName(page)).toBe('code');
    expect(await page.getByLabel('Study code').getAttribute('aria-invalid')).toBe('true');
    await page.getByText('Choose a randomized trial or an observational cohort').waitFor();
    await page.getByText('Choose blinded or open label').waitFor();
    await page.getByText('Enter the number of participants to enroll, e.g. 240').waitFor();
    await screenshot(page, 'new-study-2-missing-answers');

    // A code already in use (the seeded trial), typed in lower case: the server refuses it at the field.
    await page.getByLabel('Study code').fill('kestrel');
    await page.getByLabel('Title').fill(title);
    await page.getByRole('radio', { name: 'Randomized trial' }).check();
    await page.getByRole('radio', { name: 'Blinded' }).check();
    await page.getByLabel('Target sample size').fill('96');
    // Each option explains who sees the arms, as the radio's description.
    const blindedHelp = await descriptionOf(page, page.getByRole('radio', { name: 'Blinded' }));
    expect(blindedHelp).toContain('Only the study’s statistician sees which arm a participant is in');
    await page.getByRole('button', { name: 'Create study' }).click();
    await page.getByText('Another study already uses the code KESTREL. Choose a different code.').waitFor();
    await expect.poll(() => focusedName(page)).toBe('code');
    expect(page.url()).toMatch(/\/studies\/new$/);
    await screenshot(page, 'new-study-3-code-taken');

    await page.getByLabel('Study code').fill(code);
    await page.getByRole('button', { name: 'Create study' }).click();
    await page.waitForURL(/\/studies\/[0-9a-f-]{36}\/design$/);
    await page.getByRole('heading', { level: 1, name: title }).waitFor();
    await page.getByRole('form', { name: 'Study design' }).waitFor();
    expect(await page.getByText('Not available for your role').count()).toBe(0);
    const designTab = page
      .getByRole('navigation', { name: 'Study sections' })
      .getByRole('link', { name: 'Design' });
    expect(await designTab.getAttribute('aria-current')).toBe('page');
    await screenshot(page, 'new-study-4-design-tab');

    // Its overview says what is left to do, and links back to the Design tab.
    await page.getByRole('link', { name: 'Overview' }).click();
    await page.getByText('This study is being set up').waitFor();
    await page.getByRole('main').getByRole('link', { name: 'Design tab' }).click();
    await page.waitForURL(/\/studies\/[0-9a-f-]{36}\/design$/);

    // The list shows it too, in set-up, with the creator as its statistician.
    await page.getByRole('link', { name: '← All studies' }).click();
    await page.waitForURL(/\/studies$/);
    const row = page.getByRole('row').filter({ hasText: code });
    await row.waitFor();
    expect(await row.innerText()).toMatch(/In set-up[\s\S]*Statistician/);
    expect(await page.getByRole('link', { name: 'New study' }).count()).toBe(1);
    await screenshot(page, 'new-study-5-list-statistician');
    await context.close();
  });

  it('when the sponsor opens the studies page, then no "New study" action is offered and the form address refuses them', async () => {
    const context = await browser.newContext({ viewport: { width: 1360, height: 900 } });
    const page = await signIn(context, SPONSOR);
    await page
      .getByRole('link', { name: /KESTREL/ })
      .filter({ visible: true })
      .first()
      .waitFor();
    expect(await page.getByRole('link', { name: 'New study' }).count()).toBe(0);
    expect(await page.getByRole('button', { name: 'New study' }).count()).toBe(0);
    await screenshot(page, 'new-study-6-sponsor-studies');

    await page.goto(appUrl('/studies/new'));
    await page.getByText('Not available for your role').waitFor();
    expect(await page.getByRole('button', { name: 'Create study' }).count()).toBe(0);
    await context.close();
  });
});
