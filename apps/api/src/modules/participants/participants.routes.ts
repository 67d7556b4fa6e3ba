import {
  enrollBodySchema,
  participantListQuerySchema,
  participantPatchBodySchema,
  screeningBodySchema,
  screeningListQuerySchema,
  unblindBodySchema,
  type EnrollResponse,
} from '@counterpoise/contracts/participants';
import { Router, type Request } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError } from '../../http/app-error.js';
import { body, params, query } from '../../http/validate.js';
import type { AuditActor } from '../audit/audit.service.js';
import { loadDesign } from '../design/study-design.js';
import { authorize, roleLabel } from '../policy/policy.js';
import { allocationList } from './allocation-list.service.js';
import { enrollValidated, validateEnrollment } from './enrollment.service.js';
import { changeParticipant, unblind } from './participant-change.service.js';
import { armRef, listParticipants, participantDetail } from './participant-read.service.js';
import { listScreenings, screen } from './screening.service.js';
import { canSeeArms } from './visibility.js';
import './participants.operations.js';

export const studyParams = z.object({ studyId: z.uuid() });
export const participantParams = z.object({ studyId: z.uuid(), participantId: z.uuid() });

export function auditActor(req: Request, studyId: string): AuditActor {
  const actor = req.actor!;
  return { userId: actor.userId, email: actor.email, role: roleLabel(actor, studyId), requestId: req.requestId };
}

export function participantsRoutes(ctx: AppContext): Router {
  const r = Router();

  r.post('/studies/:studyId/screenings', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'participant.write');
    const input = body(req, screeningBodySchema);
    authorize(req, studyId, 'participant.write', input.siteId);
    res.status(201).json({ screening: await screen(ctx, auditActor(req, studyId), studyId, input) });
  });

  r.get('/studies/:studyId/screenings', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'participant.read');
    res.json(await listScreenings(ctx, studyId, access.siteIds, query(req, screeningListQuerySchema)));
  });

  r.post('/studies/:studyId/participants', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'participant.write');
    const input = body(req, enrollBodySchema);
    const access = authorize(req, studyId, 'participant.write', input.siteId);
    const actor = auditActor(req, studyId);
    const { enrolled, design } = await inTransaction(ctx.ds, async (tx) => {
      const design = await loadDesign(tx, studyId, { lock: true });
      let answers: Record<string, unknown> | undefined = input.screeningAnswers;
      let existingParticipantId: string | undefined;
      if (input.screeningId) {
        const rows: { answers: Record<string, unknown>; eligible: boolean; participant_id: string | null; site_id: string; status: string | null }[] = await tx.query(
          `SELECT s.answers, s.eligible, s.participant_id, s.site_id, p.status FROM screening s LEFT JOIN participant p ON p.id = s.participant_id
            WHERE s.id = $1 AND s.study_id = $2 FOR UPDATE OF s`,
          [input.screeningId, studyId],
        );
        const s = rows[0];
        if (!s || s.site_id !== input.siteId) throw new AppError('validation_failed', 'Unknown screening for this site', { issues: [{ path: ['screeningId'], message: 'No such screening at this site' }] });
        if (!s.eligible) throw new AppError('conflict', 'This candidate failed screening and cannot be enrolled');
        if (s.status !== 'screened') throw new AppError('conflict', 'This screened candidate is already enrolled');
        answers = { ...s.answers, ...(input.screeningAnswers ?? {}) };
        existingParticipantId = s.participant_id ?? undefined;
      }
      const v = validateEnrollment(design, { ...input, screeningAnswers: answers, existingParticipantId });
      if (!v.ok) throw new AppError('validation_failed', 'Some fields are not valid; nothing was saved', { issues: v.issues });
      const [enrolled] = await enrollValidated(tx, ctx, design, actor, [v.value]);
      return { enrolled: enrolled!, design };
    });
    const show = canSeeArms(access, design);
    const armId = enrolled.allocation?.armId ?? enrolled.exposureArmId;
    const arm = armRef(design, armId, show);
    const response: EnrollResponse = {
      participant: {
        id: enrolled.id,
        code: enrolled.code,
        siteId: enrolled.siteId,
        siteCode: enrolled.siteCode,
        status: 'enrolled',
        screenedAt: null,
        enrolledAt: enrolled.enrolledAt,
        withdrawnAt: null,
        kitCode: enrolled.allocation?.kitCode ?? null,
        ...(arm ? { arm } : {}),
      },
      allocation: enrolled.allocation
        ? { kitCode: enrolled.allocation.kitCode, allocatedAt: enrolled.enrolledAt, ...(arm ? { arm } : {}) }
        : null,
    };
    res.status(201).json(response);
  });

  r.get('/studies/:studyId/participants', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'participant.read');
    const q = query(req, participantListQuerySchema);
    if (q.siteId) authorize(req, studyId, 'participant.read', q.siteId);
    const design = await loadDesign(ctx.ds, studyId);
    res.json(await listParticipants(ctx, design, access, q, canSeeArms(access, design)));
  });

  r.get('/studies/:studyId/participants/:participantId', async (req, res, next) => {
    // Let fixed sub-paths (export.csv, import/...) reach their own handlers.
    if (!z.uuid().safeParse(req.params.participantId).success) return next();
    const { studyId, participantId } = params(req, participantParams);
    const access = authorize(req, studyId, 'participant.read');
    const design = await loadDesign(ctx.ds, studyId);
    res.json({ participant: await participantDetail(ctx, design, access, participantId, canSeeArms(access, design)) });
  });

  r.patch('/studies/:studyId/participants/:participantId', async (req, res) => {
    const { studyId, participantId } = params(req, participantParams);
    const access = authorize(req, studyId, 'participant.write');
    const input = body(req, participantPatchBodySchema);
    await changeParticipant(ctx, auditActor(req, studyId), access, studyId, participantId, input);
    const design = await loadDesign(ctx.ds, studyId);
    res.json({ participant: await participantDetail(ctx, design, access, participantId, canSeeArms(access, design)) });
  });

  r.post('/studies/:studyId/participants/:participantId/unblind', async (req, res) => {
    const { studyId, participantId } = params(req, participantParams);
    const access = authorize(req, studyId, 'allocation.unblind');
    const { reason } = body(req, unblindBodySchema);
    res.json(await unblind(ctx, auditActor(req, studyId), access, studyId, participantId, reason));
  });

  r.get('/studies/:studyId/allocation-list', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'allocation.read');
    const design = await loadDesign(ctx.ds, studyId);
    res.json(await allocationList(ctx, design));
  });

  return r;
}
