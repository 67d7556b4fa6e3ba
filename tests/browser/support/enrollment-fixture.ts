import type { APIRequestContext } from 'playwright-core';
import type { DesignBodyInput, StudyDetail } from '@counterpoise/contracts/design';
import { evaluateEligibility } from '@counterpoise/contracts/participants';

/*
 * Helpers for the enrollment browser test. The test works with whatever design the study has;
 * only when the seeded study has no design yet does it save this invented one (demo data,
 * not clinical guidance) as the statistician.
 */
export const fallbackKestrelDesign = (
  sites: StudyDetail['sites'],
  targetSampleSize: number,
): DesignBodyInput => ({
  targetSampleSize,
  arms: [
    { code: 'HBW', name: 'Home breathing-and-walking programme', ratio: 1 },
    { code: 'UC', name: 'Usual care', ratio: 1 },
  ],
  sites: sites.map((s) => ({
    code: s.code,
    name: s.name,
    enrollmentTarget: s.enrollmentTarget,
    status: s.status,
  })),
  covariates: [
    {
      key: 'age',
      label: 'Age',
      kind: 'continuous',
      unit: 'years',
      min: 18,
      max: 100,
      decimals: 0,
      isAdjustment: true,
    },
    { key: 'sex', label: 'Sex', kind: 'categorical', levels: ['female', 'male'], isStratification: true },
    {
      key: 'fev1_pct',
      label: 'FEV1 % predicted',
      kind: 'continuous',
      unit: '%',
      min: 10,
      max: 120,
      decimals: 0,
      isAdjustment: true,
    },
    {
      key: 'walk_m',
      label: 'Six-minute walk distance',
      kind: 'continuous',
      unit: 'm',
      min: 20,
      max: 900,
      decimals: 0,
      isOutcomeBaseline: true,
      isAdjustment: true,
    },
    { key: 'smoker', label: 'Current smoker', kind: 'binary' },
  ],
  screeningQuestions: [{ key: 'walks_unaided', label: 'Can walk unaided for six minutes', kind: 'binary' }],
  eligibility: [
    { id: 'INC-AGE', kind: 'inclusion', label: 'Aged 40 or over', field: 'age', op: '>=', value: 40 },
    {
      id: 'INC-FEV1',
      kind: 'inclusion',
      label: 'FEV1 at most 80% predicted',
      field: 'fev1_pct',
      op: '<=',
      value: 80,
    },
    {
      id: 'INC-WALK',
      kind: 'inclusion',
      label: 'Walks unaided for six minutes',
      field: 'walks_unaided',
      op: '==',
      value: true,
    },
  ],
  allocation: { method: 'permuted_blocks', blockSizes: [4, 6], stratifyBySite: true },
});

export type Answer = number | string | boolean;
type Field = {
  key: string;
  kind: 'number' | 'yesno' | 'choice';
  levels: string[];
  min: number;
  max: number;
  decimals: number;
};

/** Every field the screening form asks, as the web builds it (criteria fields and screening questions). */
export function screeningFields(study: StudyDetail): Field[] {
  const needed = new Set(study.eligibility.map((c) => c.field));
  const fields: Field[] = [];
  for (const c of study.covariates) {
    if (!needed.has(c.key)) continue;
    fields.push({
      key: c.key,
      kind: c.kind === 'continuous' ? 'number' : c.kind === 'binary' ? 'yesno' : 'choice',
      levels: c.levels ?? [],
      min: c.min ?? 0,
      max: c.max ?? 100,
      decimals: c.decimals ?? 0,
    });
  }
  for (const q of study.screeningQuestions) {
    fields.push({
      key: q.key,
      kind: q.kind === 'number' ? 'number' : q.kind === 'binary' ? 'yesno' : 'choice',
      levels: q.levels ?? [],
      min: 0,
      max: 200,
      decimals: 0,
    });
  }
  return fields;
}

function candidates(f: Field): Answer[] {
  if (f.kind === 'yesno') return [true, false];
  if (f.kind === 'choice') return f.levels;
  // Values from the middle of the range outwards, so a passing value is a plausible one.
  const mid = Math.round((f.min + f.max) / 2);
  const out: number[] = [];
  for (let d = 0; d <= f.max - f.min; d++) {
    if (mid - d >= f.min) out.push(mid - d);
    if (d > 0 && mid + d <= f.max) out.push(mid + d);
  }
  return out;
}

/**
 * Screening answers that meet every criterion, or, with `failId`, meet all but that one.
 * Found by trying values against the contracts' own `evaluateEligibility`.
 */
export function screeningAnswers(study: StudyDetail, failId?: string): Record<string, Answer> {
  const answers: Record<string, Answer> = {};
  for (const f of screeningFields(study)) {
    const rules = study.eligibility.filter((c) => c.field === f.key);
    const want = (value: Answer) => {
      const failed = evaluateEligibility(rules, { [f.key]: value }).failed.map((x) => x.id);
      return failId && rules.some((r) => r.id === failId)
        ? failed.length === 1 && failed[0] === failId
        : failed.length === 0;
    };
    const found = candidates(f).find(want);
    if (found === undefined) throw new Error(`No value of '${f.key}' gives the wanted eligibility outcome`);
    answers[f.key] = found;
  }
  return answers;
}

/** A valid baseline value for each covariate (answers given at screening win). */
export function baselineValue(c: StudyDetail['covariates'][number], answers: Record<string, Answer>): string {
  const a = answers[c.key];
  if (a !== undefined) return typeof a === 'boolean' ? (a ? 'yes' : 'no') : String(a);
  if (c.kind === 'binary') return 'no';
  if (c.kind === 'categorical') return (c.levels ?? [])[0] ?? '';
  return String(Math.round(((c.min ?? 0) + (c.max ?? 100)) / 2));
}

/** Signs in through the API on a request context that shares the page's cookie jar. */
export async function apiSignIn(
  request: APIRequestContext,
  base: string,
  email: string,
  password: string,
): Promise<string> {
  const res = await request.post(`${base}/api/auth/sign-in`, { data: { email, password } });
  if (!res.ok()) throw new Error(`sign-in of ${email} failed: ${res.status()} ${await res.text()}`);
  const body = (await res.json()) as { me: { csrfToken: string } };
  return body.me.csrfToken;
}

/** A minimal one-page PDF (header, catalog, pages, page, xref, trailer), valid enough for type sniffing. */
export function tinyPdf(): Buffer {
  const objects = [
    '<< /Type /Catalog /Pages 2 0 R >>',
    '<< /Type /Pages /Kids [3 0 R] /Count 1 >>',
    '<< /Type /Page /Parent 2 0 R /MediaBox [0 0 200 200] >>',
  ];
  let body = '%PDF-1.4\n';
  const offsets: number[] = [];
  objects.forEach((o, i) => {
    offsets.push(Buffer.byteLength(body));
    body += `${i + 1} 0 obj\n${o}\nendobj\n`;
  });
  const xref = Buffer.byteLength(body);
  body += `xref\n0 ${objects.length + 1}\n0000000000 65535 f \n`;
  for (const off of offsets) body += `${String(off).padStart(10, '0')} 00000 n \n`;
  body += `trailer\n<< /Size ${objects.length + 1} /Root 1 0 R >>\nstartxref\n${xref}\n%%EOF\n`;
  return Buffer.from(body, 'latin1');
}
