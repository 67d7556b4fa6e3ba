import { analysisNote, lockBodySchema, outcomesPutBodySchema, runBodySchema, specPutBodySchema } from '@counterpoise/contracts/analysis';
import { Router, type Request } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { body, params } from '../../http/validate.js';
import { authorize, requireActor, roleLabel } from '../policy/policy.js';
import { createRun, getRun, listRuns } from './analysis-run.service.js';
import { getSpec, lockSpec, putSpec } from './analysis-spec.service.js';
import { outcomesOverview, putOutcomes } from './outcomes.service.js';
import './analysis.operations.js';

const studyParams = z.object({ studyId: z.uuid() });
const runParams = z.object({ studyId: z.uuid(), runId: z.uuid() });

function auditActor(req: Request, studyId: string) {
  const actor = requireActor(req);
  return { userId: actor.userId, email: actor.email, role: roleLabel(actor, studyId), requestId: req.requestId };
}

/**
 * The Analysis tab: the pre-specified ANCOVA (statistician only, policy action 'analysis.run'),
 * outcome entry (site staff of their own sites, and the statistician), runs and their results.
 */
export function analysisRoutes(ctx: AppContext): Router {
  const r = Router();

  r.get('/studies/:studyId/analysis/spec', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'analysis.run');
    res.json(await getSpec(ctx, studyId));
  });

  r.put('/studies/:studyId/analysis/spec', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'analysis.run');
    const input = body(req, specPutBodySchema);
    const spec = await putSpec(ctx, auditActor(req, studyId), studyId, input);
    res.json({ spec, note: analysisNote });
  });

  r.post('/studies/:studyId/analysis/spec/lock', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'analysis.run');
    const input = body(req, lockBodySchema);
    const spec = await lockSpec(ctx, requireActor(req), auditActor(req, studyId), studyId, input);
    res.json({ spec, note: analysisNote });
  });

  r.get('/studies/:studyId/outcomes', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'outcome.write');
    res.json(await outcomesOverview(ctx, access, studyId));
  });

  r.post('/studies/:studyId/outcomes/check', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'outcome.write');
    const input = body(req, outcomesPutBodySchema);
    res.json(await putOutcomes(ctx, auditActor(req, studyId), access, studyId, input, 'check'));
  });

  r.put('/studies/:studyId/outcomes', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'outcome.write');
    const input = body(req, outcomesPutBodySchema);
    res.json(await putOutcomes(ctx, auditActor(req, studyId), access, studyId, input));
  });

  r.post('/studies/:studyId/analysis/runs', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'analysis.run');
    const input = body(req, runBodySchema);
    const run = await createRun(ctx, auditActor(req, studyId), studyId, input);
    res.status(201).json({ run, note: analysisNote });
  });

  r.get('/studies/:studyId/analysis/runs', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'analysis.run');
    res.json(await listRuns(ctx, studyId));
  });

  r.get('/studies/:studyId/analysis/runs/:runId', async (req, res) => {
    const { studyId, runId } = params(req, runParams);
    authorize(req, studyId, 'analysis.run');
    res.json({ run: await getRun(ctx, studyId, runId), note: analysisNote });
  });

  return r;
}
