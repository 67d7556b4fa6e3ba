import { baselineTableSchema, type BaselineTable } from '@counterpoise/contracts/balance';
import { chiSquareIndependence, fisherExact2x2, oneWayAnova } from '@counterpoise/stats';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createUser, signIn, type SignedInAgent, type TestContext } from '../../../test/harness.js';
import { createBalanceStudy, enroll, normal, readCounted, rng, runJob, type BalanceStudy, type Enrollee, type StoredRow } from './balance-fixtures.js';

const COVS = [
  { key: 'age', kind: 'continuous' as const },
  { key: 'smoker', kind: 'binary' as const },
  { key: 'region', kind: 'categorical' as const, levels: ['north', 'south', 'east', 'west'] },
  { key: 'rare_event', kind: 'binary' as const },
  { key: 'clinic', kind: 'categorical' as const, levels: ['city', 'town', 'remote'] },
  { key: 'uniform', kind: 'binary' as const },
];

/**
 * The people: arms A, B, C in turn (A is the reference), two sites. Chosen so that every
 * branch is exercised: smoker partly stored as text ('yes'/'no') and partly missing; region's
 * 'west' only in arm C (dropped when B is compared with A); rare_event with 2 events per arm
 * (2 x 2 with expected counts 2: Fisher); clinic with a rare level (3 x 2 with small expected
 * counts: chi-square, marked doubtful); uniform always 'yes' in A and B (one level: no p-value).
 */
function people(): Enrollee[] {
  const r = rng(31);
  const regions = ['north', 'south', 'east'];
  return Array.from({ length: 150 }, (_, i) => {
    const arm = i % 3;
    const smoker = r() < 0.3 ? 1 : 0;
    return {
      site: Math.floor(i / 3) % 2,
      arm,
      values: {
        age: normal(r, 58, 9),
        smoker: i % 19 === 0 ? null : i % 10 === 3 ? (smoker ? 'yes' : 'no') : smoker,
        region: i % 23 === 5 ? null : arm === 2 && r() < 0.3 ? 'west' : regions[Math.floor(r() * 3)]!,
        rare_event: i % 25 === 0 ? 1 : 0,
        clinic: i % 20 === 7 ? 'remote' : r() < 0.5 ? 'city' : 'town',
        uniform: arm === 2 ? (r() < 0.5 ? 1 : 0) : 1,
      },
    };
  });
}

/** Decodes a stored row the plain way, independently of the API's decoder. */
function level(kind: 'binary' | 'categorical', v: { n: number | null; t: string | null } | undefined): string | null {
  if (!v) return null;
  if (kind === 'binary') {
    if (v.n === 1 || v.t === 'yes') return '1';
    if (v.n === 0 || v.t === 'no') return '0';
    return null;
  }
  return v.t;
}

/** The direct computation: the stats package on the contingency table built from the stored rows. */
function directContingency(stored: StoredRow[], key: string, kind: 'binary' | 'categorical', armId: string, referenceArmId: string) {
  const count = (arm: string) => {
    const m = new Map<string, number>();
    for (const s of stored) {
      if (s.armId !== arm) continue;
      const l = level(kind, s.values.get(key));
      if (l !== null) m.set(l, (m.get(l) ?? 0) + 1);
    }
    return m;
  };
  const a = count(armId);
  const ref = count(referenceArmId);
  const levels = [...new Set([...a.keys(), ...ref.keys()])];
  if (levels.length < 2) return null;
  const table = levels.map((l) => [a.get(l) ?? 0, ref.get(l) ?? 0]);
  const chi = chiSquareIndependence(table);
  const fisher = table.length === 2 && chi.minExpected < 5;
  return { p: fisher ? fisherExact2x2(table).p : chi.p, fisher, chi, levels: levels.length };
}

function expectSameP(label: string, actual: number | null, expected: number): void {
  expect(actual, label).not.toBeNull();
  expect(Math.abs(actual! - expected), `${label}: API ${actual}, direct ${expected}`).toBeLessThanOrEqual(1e-12 * expected);
}

describe('GET /studies/:studyId/baseline-table?pvalues=true (binary and categorical covariates)', () => {
  let t: TestContext;
  let study: BalanceStudy;
  let statistician: SignedInAgent;
  let coordinator: SignedInAgent;
  let A: string;
  let B: string;
  let C: string;

  beforeAll(async () => {
    t = await createTestContext();
    study = await createBalanceStudy(t, { sites: ['S1', 'S2'], arms: ['A', 'B', 'C'], covariates: COVS });
    [A, B, C] = study.armIds as [string, string, string];
    await enroll(t, study, people());
    await runJob(t, { studyId: study.id, reason: 'import' });
    const mk = async (role: 'statistician' | 'coordinator') =>
      signIn(t, (await createUser(t, { memberships: [{ studyId: study.id, role, siteIds: role === 'coordinator' ? [study.siteIds[0]!] : [] }] })).email);
    statistician = await mk('statistician');
    coordinator = await mk('coordinator');
  });
  afterAll(async () => {
    await t.close();
  });

  const get = async (query: string): Promise<BaselineTable> => {
    const res = await statistician.get(`/api/studies/${study.id}/baseline-table${query}`);
    expect(res.status).toBe(200);
    return baselineTableSchema.parse(res.body);
  };
  const find = (table: BaselineTable, key: string, armId: string) => {
    const v = table.pValues!.values.find((x) => x.covariateKey === key && x.armId === armId);
    if (!v) throw new Error(`no p-value entry for ${key} / ${armId}`);
    return v;
  };

  it('when p-values are not asked for, then there are none, and the table rows are the same as with them', async () => {
    const plain = await get('');
    expect(plain.pValues).toBeNull();
    expect(JSON.stringify(plain)).not.toMatch(/chi-square|Fisher|ANOVA/);
    const withP = await get('?pvalues=true');
    expect(withP.rows).toEqual(plain.rows);
    expect((await get('?pvalues=false')).pValues).toBeNull();
  });

  it('when asked, then each binary and categorical p-value equals the stats package on a table built from the stored rows', async () => {
    const table = await get('?pvalues=true');
    const stored = await readCounted(t, study);
    expect(table.pValues!.caution).toMatch(/CONSORT/);
    expect(table.pValues!.method).toMatch(/chi-square/);
    expect(table.pValues!.method).toMatch(/Fisher's exact test/);
    expect(table.pValues!.method).toMatch(/ANOVA/);
    expect(table.pValues!.method).toMatch(/common-practice rule/);
    // Every comparison of the snapshot has an entry: 6 covariates x 2 arms against A.
    expect(table.pValues!.values).toHaveLength(12);
    for (const v of table.pValues!.values) expect(v.referenceArmId).toBe(A);

    for (const arm of [B, C]) {
      for (const key of ['smoker', 'region', 'rare_event', 'clinic']) {
        const kind = COVS.find((c) => c.key === key)!.kind as 'binary' | 'categorical';
        const direct = directContingency(stored, key, kind, arm, A)!;
        const v = find(table, key, arm);
        expectSameP(`${key}, arm ${arm === B ? 'B' : 'C'} vs A`, v.pValue, direct.p);
        expect(v.test, key).toBe(direct.fisher ? "Fisher's exact test (two-sided)" : `Pearson chi-square test (${direct.chi.df} df)`);
      }
    }
    // The continuous covariate is still the one-way ANOVA of the stored values.
    const ages = (arm: string) => stored.filter((s) => s.armId === arm).map((s) => s.values.get('age')!.n!);
    expectSameP('age, B vs A', find(table, 'age', B).pValue, oneWayAnova([ages(B), ages(A)]).between.p);
    expect(find(table, 'age', B).test).toBe('one-way ANOVA F test');
  });

  it('then the test follows the table: Fisher for a 2 x 2 with small expected counts, chi-square otherwise, doubtful ones marked, empty levels dropped', async () => {
    const table = await get('?pvalues=true');
    // rare_event: 2 events in each arm of 50, expected counts 2 -> exact test, and it says why.
    const rare = find(table, 'rare_event', B);
    expect(rare.test).toBe("Fisher's exact test (two-sided)");
    expect(rare.note).toMatch(/expected count is below 5 \(smallest 2\.0\)/);
    expect(rare.pValue).toBe(1);
    // smoker: 2 x 2 with large expected counts -> chi-square on 1 df, no note.
    expect(find(table, 'smoker', B).test).toBe('Pearson chi-square test (1 df)');
    expect(find(table, 'smoker', B).note).toBeNull();
    // region: 'west' occurs only in C, so B vs A has 3 levels (2 df) and C vs A has 4 (3 df).
    expect(find(table, 'region', B).test).toBe('Pearson chi-square test (2 df)');
    expect(find(table, 'region', C).test).toBe('Pearson chi-square test (3 df)');
    // clinic: 3 x 2 with a rare level -> chi-square, marked as doubtful (no exact test beyond 2 x 2).
    const clinic = find(table, 'clinic', B);
    expect(clinic.test).toBe('Pearson chi-square test (2 df)');
    expect(clinic.pValue).not.toBeNull();
    expect(clinic.note).toMatch(/2 of 6 expected counts are below 5 .*doubtful.*common-practice rule/);
  });

  it('when only one level is recorded in the two arms, then the p-value is null and the note says why', async () => {
    const table = await get('?pvalues=true');
    const same = find(table, 'uniform', B);
    expect(same.pValue).toBeNull();
    expect(same.test).toBe('none');
    expect(same.note).toBe('Not computed: everyone with a recorded value in these two arms has the same level (yes), so there is nothing to compare.');
    // Arm C has both levels, so C vs A is computed.
    const stored = await readCounted(t, study);
    expectSameP('uniform, C vs A', find(table, 'uniform', C).pValue, directContingency(stored, 'uniform', 'binary', C, A)!.p);
  });

  it('when one site is asked for, then the p-values come from that site’s rows only', async () => {
    const site = study.siteIds[1]!;
    const overall = await get('?pvalues=true');
    const table = await get(`?pvalues=true&site=${site}`);
    expect(table.scope.siteId).toBe(site);
    const stored = (await readCounted(t, study)).filter((s) => s.siteId === site);
    for (const key of ['smoker', 'region', 'clinic']) {
      const kind = COVS.find((c) => c.key === key)!.kind as 'binary' | 'categorical';
      const direct = directContingency(stored, key, kind, C, A)!;
      expectSameP(`${key} at site S2, C vs A`, find(table, key, C).pValue, direct.p);
      expect(find(table, key, C).pValue).not.toBe(find(overall, key, C).pValue);
    }
  });

  it('when the CSV is downloaded with p-values, then binary and categorical p-values are printed with the test, arms and note', async () => {
    const json = await get('?pvalues=true');
    const csv = await statistician.get(`/api/studies/${study.id}/baseline-table.csv?pvalues=true`);
    expect(csv.status).toBe(200);
    const lines = csv.text.split(/\r?\n/);
    expect(lines).toContain('p-value,covariate,arm,reference arm,p,test,note');
    const rare = lines.find((l) => l.startsWith('p-value,rare_event,B (Arm B),A (Arm A),'));
    expect(rare).toBeDefined();
    expect(rare).toContain(`,${find(json, 'rare_event', B).pValue},Fisher's exact test (two-sided),`);
    const smoker = lines.find((l) => l.startsWith('p-value,smoker,C (Arm C),A (Arm A),'))!;
    expect(Number(smoker.split(',')[4])).toBe(find(json, 'smoker', C).pValue);
    expect(lines.find((l) => l.startsWith('p-value,uniform,B (Arm B),'))).toMatch(/,,none,.*same level \(yes\)/);
    const plain = await statistician.get(`/api/studies/${study.id}/baseline-table.csv`);
    expect(plain.text).not.toMatch(/p-value/);
  });

  it('when a coordinator asks for the p-values, then 403 and no arm appears', async () => {
    const res = await coordinator.get(`/api/studies/${study.id}/baseline-table?pvalues=true`);
    expect(res.status).toBe(403);
    for (const arm of study.armIds) expect(JSON.stringify(res.body)).not.toContain(arm);
  });
});
