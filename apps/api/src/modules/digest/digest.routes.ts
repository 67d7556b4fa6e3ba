import { Router } from 'express';
import type { AppContext } from '../../app-context.js';
import { params } from '../../http/validate.js';
import { registerOperations } from '../../openapi/registry.js';
import { authorize } from '../policy/policy.js';
import { studyParams } from '../studies/studies.routes.js';
import { composeDigest, digestPeriod } from './digest.service.js';

registerOperations({
  method: 'get',
  path: '/api/studies/:studyId/digest/preview',
  summary: "This week's blinded sponsor digest as it would be e-mailed",
  tag: 'balance',
  roles: 'sponsor, statistician',
});

export function digestRoutes(ctx: AppContext): Router {
  const r = Router();
  r.get('/studies/:studyId/digest/preview', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'balance.pooled');
    const period = digestPeriod(new Date());
    const digest = await composeDigest(ctx.ds, studyId, period);
    res.json({ period, ...digest });
  });
  return r;
}
