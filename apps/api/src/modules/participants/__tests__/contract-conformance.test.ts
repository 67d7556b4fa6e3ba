import { designSaveResponseSchema } from '@counterpoise/contracts/design';
import {
  consentDocumentDtoSchema,
  enrollResponseSchema,
  importReportSchema,
  participantDetailSchema,
  participantListSchema,
  screeningDtoSchema,
  screeningListSchema,
  unblindResponseSchema,
} from '@counterpoise/contracts/participants';
import { z } from 'zod';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { castStudy, daysAgo, enrollBody, type Cast } from './fixtures.js';

let t: TestContext;
let c: Cast;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
});
afterAll(async () => t.close());

/** The web parses responses with the shared schemas: every response must satisfy them. */
const conforms = (schema: z.ZodType, body: unknown) => {
  const r = schema.safeParse(body);
  expect(r.success, r.success ? '' : JSON.stringify(r.error.issues).slice(0, 600)).toBe(true);
};

describe('responses satisfy the shared contracts', () => {
  it('for the statistician and for site staff', async () => {
    for (const who of [c.statistician, c.coordinator, c.sponsor, c.admin]) conforms(designSaveResponseSchema, (await who.get(`/api/studies/${c.studyId}`)).body);
    const s = await c.coordinator.post(`/api/studies/${c.studyId}/screenings`).send({ siteId: c.siteIds[0], answers: { age: 50, pregnant: false } });
    conforms(z.object({ screening: screeningDtoSchema }), s.body);
    conforms(screeningListSchema, (await c.coordinator.get(`/api/studies/${c.studyId}/screenings`)).body);
    const e = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
    conforms(enrollResponseSchema, e.body);
    const pid = e.body.participant.id;
    const doc = await c.coordinator.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', Buffer.from('%PDF-1.4\n%%EOF\n'), 'c.pdf');
    conforms(z.object({ document: consentDocumentDtoSchema }), doc.body);
    for (const who of [c.statistician, c.coordinator, c.auditor]) {
      conforms(participantListSchema, (await who.get(`/api/studies/${c.studyId}/participants`)).body);
      conforms(z.object({ participant: participantDetailSchema }), (await who.get(`/api/studies/${c.studyId}/participants/${pid}`)).body);
    }
    const patch = await c.coordinator.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({ action: 'correct', reason: 'source check', baseline: { age: { value: 61, measuredOn: daysAgo(3) } } });
    conforms(z.object({ participant: participantDetailSchema }), patch.body);
    conforms(unblindResponseSchema, (await c.statistician.post(`/api/studies/${c.studyId}/participants/${pid}/unblind`).send({ reason: 'safety review' })).body);
    const imp = await c.coordinator.post(`/api/studies/${c.studyId}/participants/import?mode=preview`).attach('file', Buffer.from('participant_ref,site\nX,S1\n'), 'x.csv');
    conforms(z.object({ report: importReportSchema }), imp.body);
  });
});
