import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, screenshot } from './support/browser.js';

/*
 * Each demo account signs in through the real form and must see exactly its role's
 * navigation: the top bar and, inside a study, the section tabs. Expected sets follow the
 * role table of the product brief (issue 2, items 6 and 9).
 */

const baseUrl = (process.env.E2E_BASE_URL ?? 'http://127.0.0.1:5490').replace(/\/$/, '');
const password = process.env.DEMO_PASSWORD ?? 'balance-demo-2026';

const topNavLabels = ['Studies', 'Audit trail', 'Users', 'Outbox'] as const;
const studyTabLabels = [
  'Overview',
  'Participants',
  'Outcomes',
  'Balance',
  'Alerts',
  'Analysis',
  'Design',
  'Audit',
] as const;

type RoleCase = {
  role: 'admin' | 'coordinator' | 'statistician' | 'sponsor' | 'auditor';
  topNav: (typeof topNavLabels)[number][];
  studyTabs: (typeof studyTabLabels)[number][];
  mayManageUsers: boolean;
};

const cases: RoleCase[] = [
  {
    role: 'admin',
    topNav: ['Studies', 'Audit trail', 'Users', 'Outbox'],
    studyTabs: ['Overview', 'Design'],
    mayManageUsers: true,
  },
  {
    role: 'coordinator',
    topNav: ['Studies'],
    studyTabs: ['Overview', 'Participants', 'Outcomes'],
    mayManageUsers: false,
  },
  {
    role: 'statistician',
    topNav: ['Studies', 'Audit trail'],
    studyTabs: ['Overview', 'Participants', 'Outcomes', 'Balance', 'Alerts', 'Analysis', 'Design', 'Audit'],
    mayManageUsers: false,
  },
  { role: 'sponsor', topNav: ['Studies'], studyTabs: ['Overview'], mayManageUsers: false },
  {
    role: 'auditor',
    topNav: ['Studies', 'Audit trail'],
    studyTabs: ['Overview', 'Participants', 'Audit'],
    mayManageUsers: false,
  },
];

async function signIn(page: Page, role: RoleCase['role']): Promise<void> {
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail').fill(`${role}@counterpoise.example`);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('navigation', { name: 'Main' }).waitFor();
}

/** Labels of the links inside a named navigation landmark, in order. */
async function linkLabels(page: Page, navName: string): Promise<string[]> {
  const links = page.getByRole('navigation', { name: navName }).getByRole('link');
  return (await links.allInnerTexts()).map((t) => t.trim());
}

describe('role-aware navigation', () => {
  let browser: Browser;

  beforeAll(async () => {
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('when nobody is signed in, then a protected page sends the visitor to sign-in', async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    await page.goto(`${baseUrl}/admin/users`);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    expect(new URL(page.url()).searchParams.get('next')).toBe('/admin/users');
    await screenshot(page, 'roles-signed-out-redirect');
    await context.close();
  });

  for (const c of cases) {
    describe(`as ${c.role}@counterpoise.example`, () => {
      let page: Page;

      beforeAll(async () => {
        // One context per account: its own cookie jar, so sessions never mix.
        const context = await browser.newContext({ viewport: { width: 1280, height: 860 } });
        page = await context.newPage();
        await signIn(page, c.role);
      });

      afterAll(async () => {
        await page?.context().close();
      });

      it(`when the ${c.role} signs in, then the top navigation shows exactly ${c.topNav.join(', ')}`, async () => {
        await page.getByRole('table').or(page.getByText('No studies yet')).first().waitFor();
        expect(await linkLabels(page, 'Main')).toEqual(c.topNav);
        for (const label of topNavLabels.filter((l) => !c.topNav.includes(l))) {
          const link = page
            .getByRole('navigation', { name: 'Main' })
            .getByRole('link', { name: label, exact: true });
          expect(await link.count(), `"${label}" must be absent for ${c.role}`).toBe(0);
        }
        await screenshot(page, `roles-${c.role}-studies`);
      });

      it(`when the ${c.role} opens a study, then the study tabs are exactly ${c.studyTabs.join(', ')}`, async () => {
        await page.goto(`${baseUrl}/studies`);
        const firstStudy = page.getByRole('table').getByRole('link').first();
        await firstStudy.waitFor();
        await firstStudy.click();
        await page.getByRole('navigation', { name: 'Study sections' }).waitFor();
        expect(await linkLabels(page, 'Study sections')).toEqual(c.studyTabs);
        for (const label of studyTabLabels.filter((l) => !c.studyTabs.includes(l))) {
          const tab = page
            .getByRole('navigation', { name: 'Study sections' })
            .getByRole('link', { name: label, exact: true });
          expect(await tab.count(), `tab "${label}" must be absent for ${c.role}`).toBe(0);
        }
        await screenshot(page, `roles-${c.role}-study`);
      });

      it(`when the ${c.role} opens the users page by its address, then it is ${c.mayManageUsers ? 'shown' : 'refused'}`, async () => {
        await page.goto(`${baseUrl}/admin/users`);
        if (c.mayManageUsers) {
          await page.getByRole('heading', { name: 'Accounts' }).waitFor();
          // The heading renders at once; the account rows arrive with the users query.
          await page
            .getByRole('button', { name: /^Edit access for / })
            .first()
            .waitFor();
          expect(await page.getByRole('button', { name: /^Edit access for / }).count()).toBeGreaterThan(0);
        } else {
          await page.getByText('Not available for your role').waitFor();
          expect(await page.getByRole('heading', { name: 'Accounts' }).count()).toBe(0);
        }
        await screenshot(page, `roles-${c.role}-users-page`);
      });

      it(`when the ${c.role} signs out, then the sign-in page returns and the session is gone`, async () => {
        await page.getByRole('button', { name: 'Sign out' }).click();
        await page.getByRole('heading', { name: 'Sign in' }).waitFor();
        await page.goto(`${baseUrl}/studies`);
        await page.getByRole('heading', { name: 'Sign in' }).waitFor();
        expect(new URL(page.url()).pathname).toBe('/sign-in');
      });
    });
  }
});
