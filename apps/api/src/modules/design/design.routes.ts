import { designBodySchema, studyCreateBodySchema } from '@counterpoise/contracts/design';
import { Router } from 'express';
import type { AppContext } from '../../app-context.js';
import { body, params } from '../../http/validate.js';
import { forgetSessions } from '../auth/session.js';
import { authorize, requireGlobal, roleLabel, studyAccess } from '../policy/policy.js';
import { studyParams } from '../studies/studies.routes.js';
import { createStudy, saveDesign, studyDetail } from './design.service.js';
import './design.operations.js';

export function designRoutes(ctx: AppContext): Router {
  const r = Router();

  r.post('/studies', async (req, res) => {
    const actor = requireGlobal(req, 'study.create');
    const input = body(req, studyCreateBodySchema);
    const id = await createStudy(
      ctx,
      { userId: actor.userId, email: actor.email, role: roleLabel(actor), requestId: req.requestId, isAdmin: actor.isAdmin },
      input,
    );
    // The creator now holds a new membership: sessions this process keeps for a moment must be
    // read again, or their next request (the new study's Design tab) would answer 404.
    if (!actor.isAdmin) forgetSessions();
    // The creator's new membership is not in this request's session yet.
    const withMembership = actor.isAdmin
      ? actor
      : { ...actor, memberships: [...actor.memberships, { studyId: id, studyCode: input.code, role: 'statistician' as const, siteIds: [] }] };
    res.status(201).json({ study: await studyDetail(ctx, id, studyAccess(withMembership, id)!) });
  });

  r.get('/studies/:studyId', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'study.read');
    res.json({ study: await studyDetail(ctx, studyId, access) });
  });

  r.put('/studies/:studyId/design', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'study.design');
    const input = body(req, designBodySchema);
    const actor = req.actor!;
    await saveDesign(ctx, { userId: actor.userId, email: actor.email, role: roleLabel(actor, studyId), requestId: req.requestId }, studyId, input);
    res.json({ study: await studyDetail(ctx, studyId, access) });
  });

  return r;
}
