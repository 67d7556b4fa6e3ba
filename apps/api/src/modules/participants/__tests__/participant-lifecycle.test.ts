import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { castStudy, counts, daysAgo, enrollBody, type Cast } from './fixtures.js';

let t: TestContext;
let c: Cast;
let pid: string;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
  const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
  pid = res.body.participant.id;
});
afterAll(async () => t.close());

// The smallest valid files of each kind (magic numbers: PDF "%PDF-", PNG 89 50 4E 47, JPEG FF D8 FF).
const PDF = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n');
const PNG = Buffer.from('89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d4944415478da63f8cfc0f01f0005000201a5f6b3d90000000049454e44ae426082', 'hex');

describe('POST /studies/:studyId/participants/:participantId/consent', () => {
  it('when a coordinator uploads a PDF, then it is stored under a random name with its SHA-256 in the audit entry, and served to authorised roles only', async () => {
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', PDF, 'signed consent.pdf');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const { sha256 } = await import('node:crypto').then((m) => ({ sha256: m.createHash('sha256').update(PDF).digest('hex') }));
    expect(res.body.document).toMatchObject({ mediaType: 'application/pdf', sizeBytes: PDF.length, sha256, originalName: 'signed consent.pdf' });
    const row = await t.ownerQuery<{ storage_name: string }>(`SELECT storage_name FROM consent_document WHERE id = $1`, [res.body.document.id]);
    expect(row[0]!.storage_name).toMatch(/^[0-9a-f]{48}\.pdf$/);
    const audit = await t.ownerQuery<{ after: { sha256: string } }>(`SELECT after FROM audit_event WHERE action = 'consent.uploaded' AND entity_id = $1`, [pid]);
    expect(audit[0]!.after.sha256).toBe(sha256);
    const url = `/api/studies/${c.studyId}/participants/${pid}/consent/${res.body.document.id}`;
    const got = await c.statistician.get(url).buffer(true).parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (d: Buffer) => chunks.push(d));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    expect(got.status).toBe(200);
    expect(Buffer.compare(got.body as Buffer, PDF)).toBe(0);
    expect((await c.sponsor.get(url)).status).toBe(403);
    expect((await c.otherCoordinator.get(url)).status).toBe(404);
  });

  it('when a PNG is uploaded, then it is accepted as an image', async () => {
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', PNG, 'scan.png');
    expect(res.status).toBe(201);
    expect(res.body.document.mediaType).toBe('image/png');
  });

  it.each([
    { name: 'a text file named .pdf', file: Buffer.from('just some text pretending to be a PDF'), filename: 'consent.pdf', status: 415 },
    { name: 'an HTML file named .png', file: Buffer.from('<!doctype html><script>alert(1)</script>'), filename: 'consent.png', status: 415 },
    { name: 'a ZIP archive named .pdf', file: Buffer.from('504b0304140000000800', 'hex'), filename: 'consent.pdf', status: 415 },
    { name: 'an oversized PDF (10 MB + 1 byte)', file: Buffer.concat([PDF, Buffer.alloc(10 * 1024 * 1024 + 1 - PDF.length)]), filename: 'big.pdf', status: 413 },
  ])('when the upload is $name, then $status with a clear message and nothing is written', async ({ file, filename, status }) => {
    const before = await counts(t);
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', file, filename);
    expect(res.status).toBe(status);
    expect(res.body.error.message.length).toBeGreaterThan(10);
    expect(await counts(t)).toEqual(before);
    const fs = await import('node:fs');
    const stored = fs.readdirSync(`${t.env.uploadDir}/consent`);
    expect(stored).toHaveLength(before.docs);
  });
});

describe('PATCH /studies/:studyId/participants/:participantId', () => {
  it('when a value is corrected with a reason, then old and new values are audited', async () => {
    const res = await c.coordinator.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({
      action: 'correct',
      reason: 'Transcription error in the source document',
      baseline: { fev1_pct: { value: 48.5, measuredOn: daysAgo(3) } },
    });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.participant.baseline.fev1_pct).toEqual({ value: 48.5, measuredOn: daysAgo(3) });
    const audit = await t.ownerQuery<{ before: unknown; after: unknown; reason: string }>(
      `SELECT before, after, reason FROM audit_event WHERE action = 'participant.corrected' AND entity_id = $1`,
      [pid],
    );
    expect(audit[0]).toEqual({
      before: { fev1_pct: { value: 55.5, measuredOn: daysAgo(3) } },
      after: { fev1_pct: { value: 48.5, measuredOn: daysAgo(3) } },
      reason: 'Transcription error in the source document',
    });
    expect(res.body.participant.history.map((h: { action: string }) => h.action)).toEqual(['participant.enrolled', 'consent.uploaded', 'consent.uploaded', 'participant.corrected']);
  });

  it('when a correction is out of range or has no reason, then 400 and nothing is written', async () => {
    const before = await counts(t);
    const a = await c.coordinator.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({ action: 'correct', reason: 'typo fix', baseline: { age: { value: 120, measuredOn: daysAgo(3) } } });
    expect(a.status).toBe(400);
    expect(a.body.error.details.issues[0].path).toEqual(['baseline', 'age', 'value']);
    const b = await c.coordinator.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({ action: 'correct', baseline: { age: { value: 60, measuredOn: daysAgo(3) } } });
    expect(b.status).toBe(400);
    expect(await counts(t)).toEqual(before);
  });

  it('when a participant withdraws, then the data is kept and further data entry is refused', async () => {
    const res = await c.coordinator.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({ action: 'withdraw', reason: 'Moved away from the area' });
    expect(res.status).toBe(200);
    expect(res.body.participant).toMatchObject({ status: 'withdrawn', withdrawalReason: 'Moved away from the area' });
    expect(Object.keys(res.body.participant.baseline).sort()).toEqual(['age', 'fev1_pct', 'sex', 'smoker']);
    const before = await counts(t);
    const again = await c.coordinator.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({ action: 'correct', reason: 'late fix', baseline: { age: { value: 61, measuredOn: daysAgo(3) } } });
    expect(again.status).toBe(409);
    const upload = await c.coordinator.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', PDF, 'late.pdf');
    expect(upload.status).toBe(409);
    expect(await counts(t)).toEqual(before);
  });
});

describe('POST /studies/:studyId/participants/:participantId/unblind', () => {
  it('when a coordinator unblinds in an emergency, then the arm is returned to them, both audit entries are written and the statisticians are e-mailed', async () => {
    const enrolled = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
    const id = enrolled.body.participant.id;
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants/${id}/unblind`).send({ reason: 'Severe allergic reaction; treating physician needs the arm' });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(['A', 'B']).toContain(res.body.arm.code);
    expect(res.body.notified).toBe(1);
    const stored = await t.ownerQuery<{ code: string }>(`SELECT arm.code FROM allocation a JOIN arm ON arm.id = a.arm_id WHERE a.participant_id = $1`, [id]);
    expect(res.body.arm.code).toBe(stored[0]!.code);
    const audit = await t.ownerQuery<{ action: string; reveals_allocation: boolean; reason: string }>(
      `SELECT action, reveals_allocation, reason FROM audit_event WHERE entity_id = $1 AND action LIKE '%unblinded' ORDER BY seq`,
      [id],
    );
    expect(audit.map((a) => [a.action, a.reveals_allocation])).toEqual([['participant.unblinded', false], ['allocation.unblinded', true]]);
    await new Promise((r) => setTimeout(r, 300));
    const mail = await t.smtp.list();
    const msg = mail.find((m: { subject?: string }) => m.subject?.includes('Emergency unblinding'));
    expect(msg).toBeDefined();
    expect(JSON.stringify(msg)).toContain(c.emails.statistician!);
  });

  it('when a sponsor or a coordinator of another site tries to unblind, then it is refused and nothing is written', async () => {
    const enrolled = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
    const id = enrolled.body.participant.id;
    const before = await counts(t);
    expect((await c.sponsor.post(`/api/studies/${c.studyId}/participants/${id}/unblind`).send({ reason: 'curious about it' })).status).toBe(403);
    expect((await c.otherCoordinator.post(`/api/studies/${c.studyId}/participants/${id}/unblind`).send({ reason: 'curious about it' })).status).toBe(403);
    expect(await counts(t)).toEqual(before);
  });
});
