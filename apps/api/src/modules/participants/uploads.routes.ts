import { createHash, randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { importModeSchema } from '@counterpoise/contracts/participants';
import { Router, type RequestHandler } from 'express';
import { fileTypeFromBuffer } from 'file-type';
import multer from 'multer';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { toCsv } from '../../http/csv.js';
import { AppError, notFound } from '../../http/app-error.js';
import { params, query } from '../../http/validate.js';
import { appendAudit } from '../audit/audit.service.js';
import { loadDesign } from '../design/study-design.js';
import { authorize } from '../policy/policy.js';
import { IMPORT_LIMITS, importParticipants } from './csv-import.service.js';
import { getProgress } from './import-progress.js';
import { lockParticipant } from './participant-change.service.js';
import { auditActor, participantParams, studyParams } from './participants.routes.js';
import { canSeeArms } from './visibility.js';
import './uploads.operations.js';

export const CONSENT_MAX_BYTES = 10 * 1024 * 1024;
/** Detected from the bytes (magic numbers), never from the name or the declared type. */
const CONSENT_TYPES: Record<string, string> = { 'application/pdf': 'pdf', 'image/png': 'png', 'image/jpeg': 'jpg' };

/** Runs a multer middleware as a promise, so errors reach the one error handler. */
const run = (mw: RequestHandler, req: Parameters<RequestHandler>[0], res: Parameters<RequestHandler>[1]) =>
  new Promise<void>((resolve, reject) => mw(req, res, (err?: unknown) => (err ? reject(err) : resolve())));

export function uploadsRoutes(ctx: AppContext): Router {
  const r = Router();
  const tmpDir = path.join(ctx.env.uploadDir, 'tmp');
  const consentDir = path.join(ctx.env.uploadDir, 'consent');
  fs.mkdirSync(tmpDir, { recursive: true });
  fs.mkdirSync(consentDir, { recursive: true });

  const csvUpload = multer({
    storage: multer.diskStorage({ destination: tmpDir, filename: (_req, _file, cb) => cb(null, `${randomBytes(16).toString('hex')}.csv`) }),
    limits: { fileSize: IMPORT_LIMITS.maxBytes, files: 1, fields: 5 },
  }).single('file');
  const consentUpload = multer({ storage: multer.memoryStorage(), limits: { fileSize: CONSENT_MAX_BYTES, files: 1, fields: 5 } }).single('file');

  r.post('/studies/:studyId/participants/import', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'participant.write');
    const q = query(req, importModeSchema);
    await run(csvUpload, req, res);
    const file = req.file;
    if (!file) throw new AppError('validation_failed', "Attach the CSV file in the form field 'file'");
    try {
      const report = await importParticipants(ctx, {
        studyId,
        filePath: file.path,
        originalName: file.originalname.slice(0, 200),
        mode: q.mode,
        actor: auditActor(req, studyId),
        allowedSites: access.siteIds,
        ...(q.progressId ? { progressId: q.progressId } : {}),
      });
      if (q.mode === 'commit' && report.errors.length) {
        throw new AppError('validation_failed', `${new Set(report.errors.map((e) => e.row)).size} row(s) have problems; nothing was imported`, { report });
      }
      res.status(q.mode === 'commit' && report.imported > 0 ? 201 : 200).json({ report });
    } finally {
      fs.rm(file.path, { force: true }, () => undefined);
    }
  });

  r.get('/studies/:studyId/participants/import/progress/:progressId', async (req, res) => {
    const { studyId, progressId } = params(req, studyParams.extend({ progressId: z.string().regex(/^[A-Za-z0-9_-]{8,64}$/) }));
    authorize(req, studyId, 'participant.write');
    const p = getProgress(progressId, req.actor!.userId);
    if (!p) throw notFound('Import progress');
    res.json({ progress: p });
  });

  r.get('/studies/:studyId/participants/export.csv', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'participant.read');
    const design = await loadDesign(ctx.ds, studyId);
    const showArms = canSeeArms(access, design);
    const rows: {
      code: string; site: string; status: string; consent_date: string | null; enrolled: string | null; kit: string | null; arm_id: string | null;
      values: Record<string, [number | null, string | null, string]> | null;
    }[] = await ctx.ds.query(
      `SELECT p.code, s.code AS site, p.status, to_char(p.consent_date, 'YYYY-MM-DD') AS consent_date,
              to_char(p.enrolled_at AT TIME ZONE 'UTC', 'YYYY-MM-DD') AS enrolled, a.kit_code AS kit,
              COALESCE(a.arm_id, p.exposure_arm_id) AS arm_id,
              (SELECT json_object_agg(c.key, json_build_array(bv.value_number, bv.value_text, to_char(bv.measured_on, 'YYYY-MM-DD')))
                 FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id WHERE bv.participant_id = p.id) AS values
         FROM participant p JOIN site s ON s.id = p.site_id LEFT JOIN allocation a ON a.participant_id = p.id
        WHERE p.study_id = $1 AND ($2::uuid[] IS NULL OR p.site_id = ANY($2::uuid[])) ORDER BY s.code, p.code`,
      [studyId, access.siteIds],
    );
    const arms = new Map(design.arms.map((a) => [a.id, a]));
    // CDISC SDTM DM-style names where one exists; blinded readers get no arm columns at all.
    const header = ['STUDYID', 'USUBJID', 'SITEID', 'STATUS', 'RFICDTC', 'ENRLDT', 'KITCODE', ...(showArms ? ['ARMCD', 'ARM'] : [])];
    for (const c of design.covariates) header.push(c.key.toUpperCase(), `${c.key.toUpperCase()}_DT`);
    const body = rows.map((p) => {
      const arm = p.arm_id ? arms.get(p.arm_id) : undefined;
      const line: unknown[] = [design.code, p.code, p.site, p.status, p.consent_date, p.enrolled, p.kit, ...(showArms ? [arm?.code ?? '', arm?.name ?? ''] : [])];
      for (const c of design.covariates) {
        const v = p.values?.[c.key];
        line.push(v ? (c.kind === 'categorical' ? v[1] : c.kind === 'binary' ? (v[0] === 1 ? 'yes' : 'no') : v[0]) : '', v ? v[2] : '');
      }
      return line;
    });
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="${design.code}-participants.csv"`);
    res.send(toCsv(header, body));
  });

  r.post('/studies/:studyId/participants/:participantId/consent', async (req, res) => {
    const { studyId, participantId } = params(req, participantParams);
    const access = authorize(req, studyId, 'participant.write');
    await run(consentUpload, req, res);
    const file = req.file;
    if (!file) throw new AppError('validation_failed', "Attach the signed consent document in the form field 'file'");
    const detected = await fileTypeFromBuffer(file.buffer);
    const ext = detected ? CONSENT_TYPES[detected.mime] : undefined;
    if (!detected || !ext) {
      throw new AppError('unsupported_media_type', `Upload a PDF, PNG or JPEG; this file's content is ${detected ? detected.mime : 'not a recognised document'}, whatever its name`);
    }
    const sha256 = createHash('sha256').update(file.buffer).digest('hex');
    const storageName = `${randomBytes(24).toString('hex')}.${ext}`;
    const target = path.join(consentDir, storageName);
    await fs.promises.writeFile(target, file.buffer, { flag: 'wx', mode: 0o600 });
    try {
      const doc = await inTransaction(ctx.ds, async (tx) => {
        const p = await lockParticipant(tx, access, studyId, participantId);
        if (p.status === 'withdrawn') throw new AppError('conflict', 'This participant has withdrawn: no further data can be entered');
        const rows: { id: string; uploaded_at: Date }[] = await tx.query(
          `INSERT INTO consent_document (participant_id, storage_name, original_name, media_type, size_bytes, sha256, uploaded_by)
           VALUES ($1, $2, $3, $4, $5, $6, $7) RETURNING id, uploaded_at`,
          [p.id, storageName, file.originalname.slice(0, 200), detected.mime, file.size, sha256, req.actor!.userId],
        );
        const d = rows[0]!;
        await appendAudit(tx, auditActor(req, studyId), [
          {
            action: 'consent.uploaded',
            entityType: 'participant',
            entityId: p.id,
            studyId,
            siteId: p.site_id,
            after: { documentId: d.id, code: p.code, originalName: file.originalname.slice(0, 200), mediaType: detected.mime, sizeBytes: file.size, sha256 },
          },
        ]);
        return { id: d.id, originalName: file.originalname.slice(0, 200), mediaType: detected.mime, sizeBytes: file.size, sha256, uploadedAt: new Date(d.uploaded_at).toISOString() };
      });
      res.status(201).json({ document: doc });
    } catch (err) {
      await fs.promises.rm(target, { force: true });
      throw err;
    }
  });

  r.get('/studies/:studyId/participants/:participantId/consent/:documentId', async (req, res) => {
    const { studyId, participantId, documentId } = params(req, participantParams.extend({ documentId: z.uuid() }));
    const access = authorize(req, studyId, 'participant.read');
    const rows: { storage_name: string; media_type: string; original_name: string; site_id: string }[] = await ctx.ds.query(
      `SELECT d.storage_name, d.media_type, d.original_name, p.site_id FROM consent_document d JOIN participant p ON p.id = d.participant_id
        WHERE d.id = $1 AND p.id = $2 AND p.study_id = $3`,
      [documentId, participantId, studyId],
    );
    const d = rows[0];
    if (!d || (access.siteIds && !access.siteIds.includes(d.site_id))) throw notFound('Consent document');
    res.setHeader('Content-Type', d.media_type);
    res.setHeader('Content-Disposition', `attachment; filename="consent-${documentId}.${CONSENT_TYPES[d.media_type] ?? 'bin'}"`);
    res.sendFile(path.join(consentDir, path.basename(d.storage_name)));
  });

  return r;
}
