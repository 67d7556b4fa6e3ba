import { describe, expect, it } from 'vitest';
import { ancova } from '../ancova.js';
import { expectAbs, expectDigits, expectRel, loadFixture } from '../../referenceTestSupport/referenceTestSupport.js';

type Fixture = {
  data: string[][];
  published: Record<string, Record<string, unknown>>;
  derived_exact_not_published: Record<string, unknown>;
};

function load(name: string): { f: Fixture; r: ReturnType<typeof ancova> } {
  const f = loadFixture<Fixture>(`reference/ancova/${name}.json`);
  const r = ancova({
    outcome: f.data.map((row) => Number(row[1])),
    group: f.data.map((row) => row[0] as string),
    covariates: { [name === 'montgomery-fiber-strength' ? 'diameter' : 'x']: f.data.map((row) => Number(row[2])) },
  });
  return { f, r };
}

/** Tolerance for a value printed with `printed` significant decimals: half a unit in the last place. */
function halfUlpRel(printed: string): number {
  const decimals = (printed.split('.')[1] ?? '').length;
  return (0.5 * 10 ** -decimals) / Math.abs(Number(printed));
}

const term = (r: ReturnType<typeof ancova>, name: string) => {
  const t = r.terms.find((x) => x.term === name);
  if (!t) throw new Error(`term ${name} missing`);
  return t;
};

describe('ancova: Montgomery, Design and Analysis of Experiments 8th ed., Example 15.5 (fibre strength)', () => {
  const { f, r } = load('montgomery-fiber-strength');
  const sas = f.published.sas_proc_glm_course_notes as { model: { sum_of_squares: string; f_value: string }; error: { sum_of_squares: string } };
  const third = f.published.sas_values_quoted_by_third_party as {
    r_squared: string; mse: string; ls_means: Record<string, string>; slope_t: string; slope_homogeneity_F: string;
  };
  const book = f.published.textbook_values as { beta_hat: string; adjusted_treatments: { SS: string; F0: string }; adjusted_means: Record<string, string> };
  const derived = f.derived_exact_not_published as Record<string, Record<string, unknown>>;

  it('SAS PROC GLM model and error SS (NDSU course notes, copied from a stored copy; printed to 8 decimals)', () => {
    expectRel('SAS model SS 318.41411043', r.model.ss, sas.model.sum_of_squares, halfUlpRel(sas.model.sum_of_squares));
    expectRel('SAS error SS 27.98588957', r.error.ss, sas.error.sum_of_squares, halfUlpRel(sas.error.sum_of_squares));
    expectRel('SAS model F 41.72', r.model.f, sas.model.f_value, halfUlpRel(sas.model.f_value));
    expect(r.model.df).toBe(3);
    expect(r.error.df).toBe(11);
  });

  it('SAS values quoted by a third party (confirmed, secondary): R^2, MSE, LS means, slope t', () => {
    expectRel('SAS R^2 0.9192', r.rSquared, third.r_squared, halfUlpRel(third.r_squared));
    expectRel('SAS MSE 2.5442', r.error.ms, third.mse, halfUlpRel(third.mse));
    for (const m of r.adjustedMeans) {
      const printed = third.ls_means[String(m.group)] as string;
      expectRel(`SAS LS mean machine ${m.group}`, m.mean, printed, halfUlpRel(printed));
    }
    expectRel('SAS slope t 8.365', r.slopes[0]?.t as number, third.slope_t, halfUlpRel(third.slope_t));
  });

  it('textbook values (from memory, unconfirmed): beta-hat 0.9540, adjusted treatment SS 13.28, F0 2.61, adjusted means', () => {
    expectRel('textbook beta-hat', r.slopes[0]?.estimate as number, book.beta_hat, halfUlpRel(book.beta_hat));
    expectRel('textbook adjusted SS', term(r, 'group').ss, book.adjusted_treatments.SS, halfUlpRel(book.adjusted_treatments.SS));
    expectRel('textbook F0', term(r, 'group').f, book.adjusted_treatments.F0, halfUlpRel(book.adjusted_treatments.F0));
    for (const m of r.adjustedMeans) {
      const printed = book.adjusted_means[String(m.group)] as string;
      expectRel(`textbook adjusted mean ${m.group}`, m.mean, printed, halfUlpRel(printed));
    }
  });

  it('exact recomputation (derived_exact_not_published: not external evidence) to 12 digits', () => {
    const tr = derived.treatment_adjusted_for_covariate_typeIII as Record<string, string>;
    const cv = derived.covariate_adjusted_for_treatment_typeIII as Record<string, string>;
    expectDigits('derived Type III group SS', term(r, 'group').ss, tr.sum_of_squares as string, 12);
    expectDigits('derived group F', term(r, 'group').f, tr.f_statistic as string, 12);
    expectRel('derived group p', term(r, 'group').p, tr.p_value as string, 1e-7);
    expectDigits('derived Type III covariate SS', term(r, 'diameter').ss, cv.sum_of_squares as string, 12);
    expectDigits('derived slope t', r.slopes[0]?.t as number, cv.t_statistic as string, 12);
    expectDigits('derived slope', r.slopes[0]?.estimate as number, derived.pooled_within_group_slope as unknown as string, 12);
    expectDigits('derived slope SE', r.slopes[0]?.se as number, derived.pooled_within_group_slope_se as unknown as string, 12);
    const pe = derived.partial_eta_squared as Record<string, string>;
    expectDigits('derived partial eta^2 group', term(r, 'group').partialEtaSquared, pe.treatment as string, 12);
    expectDigits('derived partial eta^2 covariate', term(r, 'diameter').partialEtaSquared, pe.covariate as string, 12);
    const t1 = derived.typeI_covariate_first as Record<string, string>;
    expectDigits('derived Type I covariate first', r.typeI[0]?.ss as number, t1.covariate as string, 12);
    expectDigits('derived Type I group after covariate', r.typeI[1]?.ss as number, t1.treatment as string, 12);
    const se = derived.adjusted_means_se as Record<string, string>;
    const am = derived.adjusted_means as Record<string, string>;
    for (const m of r.adjustedMeans) {
      expectDigits(`derived adjusted mean ${m.group}`, m.mean, am[String(m.group)] as string, 12);
      expectDigits(`derived adjusted mean SE ${m.group}`, m.se, se[String(m.group)] as string, 12);
    }
    const ow = derived.one_way_anova_ignoring_covariate as Record<string, string>;
    expectDigits('derived one-way F ignoring covariate', r.unadjusted.between.f, ow.f_statistic as string, 12);
    expectDigits('derived total SS', r.total.ss, (derived.sums_of_squares_and_products as Record<string, string>).Syy as string, 12);
  });

  it('partition of the total SS adds up and the error MS shrinks versus the one-way ANOVA', () => {
    const sum = r.partition.reduce((s, x) => s + x.ss, 0);
    expectDigits('partition sums to total SS', sum, r.total.ss, 12);
    expectAbs('shares sum to 1', r.partition.reduce((s, x) => s + x.share, 0), 1, 1e-12);
    expect(r.errorMeanSquareComparison.adjusted).toBeLessThan(r.errorMeanSquareComparison.unadjusted);
  });

  it('slope homogeneity F 0.49 and p 0.6293 are checked in slopeHomogeneityTest', () => {
    expect(third.slope_homogeneity_F).toBe('0.49');
  });
});

describe('ancova: cracker promotion example (Kutner et al. ALSM 5th ed. §22.3, attribution from memory; SAS output from a course file)', () => {
  const { f, r } = load('kutner-cracker-promotion');
  const sas = f.published.sas_proc_glm_course_file as {
    model: { sum_of_squares: string; mean_square: string; f_value: string };
    error: { sum_of_squares: string; mean_square: string };
    corrected_total: { sum_of_squares: string };
    r_square: string;
    root_mse: string;
    type_I: Record<string, { SS: string; F: string }>;
    type_III: Record<string, { SS: string; F?: string }>;
  };
  const derived = f.derived_exact_not_published as Record<string, Record<string, string>>;

  it('SAS PROC GLM (course file, confirmed): model, error, total, R^2, root MSE, Type I and Type III SS and F', () => {
    const rel = (s: string): number => halfUlpRel(s);
    expectRel('SAS model SS', r.model.ss, sas.model.sum_of_squares, rel(sas.model.sum_of_squares));
    expectRel('SAS model MS', r.model.ms, sas.model.mean_square, rel(sas.model.mean_square));
    expectRel('SAS model F', r.model.f, sas.model.f_value, rel(sas.model.f_value));
    expectRel('SAS error SS', r.error.ss, sas.error.sum_of_squares, rel(sas.error.sum_of_squares));
    expectRel('SAS error MS', r.error.ms, sas.error.mean_square, rel(sas.error.mean_square));
    expectRel('SAS corrected total SS', r.total.ss, sas.corrected_total.sum_of_squares, rel(sas.corrected_total.sum_of_squares));
    expectRel('SAS R-square', r.rSquared, sas.r_square, rel(sas.r_square));
    expectRel('SAS root MSE', r.rootMse, sas.root_mse, rel(sas.root_mse));
    const t1x = sas.type_I.x as { SS: string; F: string };
    const t1a = sas.type_I.A as { SS: string; F: string };
    expectRel('SAS Type I SS x', r.typeI[0]?.ss as number, t1x.SS, rel(t1x.SS));
    expectRel('SAS Type I F x', (r.typeI[0]?.ss as number) / r.error.ms, t1x.F, rel(t1x.F));
    expectRel('SAS Type I SS A', r.typeI[1]?.ss as number, t1a.SS, rel(t1a.SS));
    expectRel('SAS Type I F A', (r.typeI[1]?.ss as number) / 2 / r.error.ms, t1a.F, rel(t1a.F));
    const t3x = sas.type_III.x as { SS: string; F: string };
    const t3a = sas.type_III.A as { SS: string };
    expectRel('SAS Type III SS x', term(r, 'x').ss, t3x.SS, rel(t3x.SS));
    expectRel('SAS Type III F x', term(r, 'x').f, t3x.F, rel(t3x.F));
    expectRel('SAS Type III SS A (group)', term(r, 'group').ss, t3a.SS, rel(t3a.SS));
  });

  it('textbook values (from memory, unconfirmed): F* 59.48, MSE 3.506, common slope 0.8986', () => {
    expectRel('textbook F*', term(r, 'group').f, '59.48', halfUlpRel('59.48'));
    expectRel('textbook MSE', r.error.ms, '3.506', halfUlpRel('3.506'));
    expectRel('textbook gamma-hat', r.slopes[0]?.estimate as number, '0.8986', halfUlpRel('0.8986'));
  });

  it('exact recomputation (derived_exact_not_published: not external evidence): adjusted means, SEs, p-values', () => {
    const am = derived.adjusted_means as Record<string, string>;
    const se = derived.adjusted_means_se as Record<string, string>;
    for (const m of r.adjustedMeans) {
      expectDigits(`derived adjusted mean ${m.group}`, m.mean, am[String(m.group)] as string, 12);
      expectDigits(`derived adjusted mean SE ${m.group}`, m.se, se[String(m.group)] as string, 12);
    }
    const tr = derived.treatment_adjusted_for_covariate_typeIII as Record<string, string>;
    expectDigits('derived group F', term(r, 'group').f, tr.f_statistic as string, 12);
    expectRel('derived group p', term(r, 'group').p, tr.p_value as string, 1e-7);
    expectRel('derived covariate p', term(r, 'x').p, (derived.covariate_adjusted_for_treatment_typeIII as Record<string, string>).p_value as string, 1e-7);
  });
});

describe('ancova cross-check against numpy.linalg.lstsq / explicit formulas (generated fixture)', () => {
  type Expected = {
    levels: Array<string | number>;
    error: { df: number; ss: number; ms: number };
    totalSS: number;
    rSquared: number;
    terms: Record<string, { df: number; ss: number; f: number; p: number }>;
    typeI: Record<string, number>;
    adjustedMeans: Array<{ group: string | number; mean: number; se: number; lower: number; upper: number }>;
    pairwise: Array<{ a: string | number; b: string | number; difference: number; se: number; t: number; p: number; lower: number; upper: number; hc3Se: number }>;
    slopes: Array<{ covariate: string; estimate: number; se: number }>;
    hc3GroupWaldF: number;
  };
  type Case = { label: string; outcome: number[]; group: Array<string | number>; covariates: Record<string, number[]>; weights: number[] | null; expected: Expected };
  const { cases } = loadFixture<{ cases: Case[] }>('generated/ancova-numpy.json');

  it.each(cases.map((c) => [c.label, c] as const))('%s', (_, c) => {
    const r = ancova({ outcome: c.outcome, group: c.group, covariates: c.covariates, weights: c.weights ?? undefined });
    const e = c.expected;
    expect(r.groupLevels).toEqual(e.levels);
    expect(r.error.df).toBe(e.error.df);
    expectDigits('numpy SSE', r.error.ss, e.error.ss, 10);
    expectDigits('numpy total SS', r.total.ss, e.totalSS, 10);
    for (const t of r.terms) {
      const et = e.terms[t.term];
      if (!et) throw new Error(`term ${t.term} missing in fixture`);
      expect(t.df).toBe(et.df);
      expectDigits(`numpy Type III SS ${t.term}`, t.ss, et.ss, 8);
      expectDigits(`numpy F ${t.term}`, t.f, et.f, 8);
      if (et.p > 1e-300) expectRel(`scipy p ${t.term}`, t.p, et.p, 1e-6);
    }
    for (const t of r.typeI) expectDigits(`numpy Type I SS ${t.term}`, t.ss, e.typeI[t.term] as number, 8);
    r.adjustedMeans.forEach((m, i) => {
      const em = e.adjustedMeans[i];
      if (!em) throw new Error('adjusted mean missing');
      expect(m.group).toBe(em.group);
      expectDigits(`numpy adjusted mean ${m.group}`, m.mean, em.mean, 10);
      expectDigits(`numpy adjusted mean SE ${m.group}`, m.se, em.se, 9);
      expectDigits(`numpy/scipy CI lower ${m.group}`, m.lower, em.lower, 7);
      expectDigits(`numpy/scipy CI upper ${m.group}`, m.upper, em.upper, 7);
    });
    r.pairwise.forEach((pw, i) => {
      const ep = e.pairwise[i];
      if (!ep) throw new Error('pairwise missing');
      expectDigits(`numpy difference ${pw.a}-${pw.b}`, pw.difference, ep.difference, 9);
      expectDigits(`numpy difference SE`, pw.se, ep.se, 9);
      expectRel(`scipy pairwise p`, pw.p, ep.p, 1e-6);
      if (!r.robust.available) throw new Error(r.robust.reason);
      expectDigits(`numpy HC3 SE ${pw.a}-${pw.b}`, r.robust.pairwise[i]?.se as number, ep.hc3Se, 9);
    });
    r.slopes.forEach((s, j) => {
      expectDigits(`numpy slope ${s.covariate}`, s.estimate, e.slopes[j]?.estimate as number, 10);
      expectDigits(`numpy slope SE ${s.covariate}`, s.se, e.slopes[j]?.se as number, 9);
    });
    if (!r.robust.available) throw new Error(r.robust.reason);
    expectDigits('numpy HC3 Wald F', r.robust.groupWald.f, e.hc3GroupWaldF, 8);
    expectDigits('numpy R^2', r.rSquared, e.rSquared, 10);
  });
});
