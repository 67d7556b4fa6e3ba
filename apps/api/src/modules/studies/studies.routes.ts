import { Router } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { params } from '../../http/validate.js';
import { authorize, requireActor, studyAccess } from '../policy/policy.js';

export const studyParams = z.object({ studyId: z.uuid() });

export function studiesRoutes(ctx: AppContext): Router {
  const r = Router();

  r.get('/studies', async (req, res) => {
    const actor = requireActor(req);
    const ids = actor.isAdmin ? null : [...new Set(actor.memberships.map((m) => m.studyId))];
    const rows: {
      id: string;
      code: string;
      title: string;
      kind: string;
      blinding: string;
      status: string;
      targetSampleSize: number;
      enrolled: number;
      siteCount: number;
    }[] = await ctx.ds.query(
      `SELECT s.id, s.code, s.title, s.kind, s.blinding, s.status, s.target_sample_size AS "targetSampleSize",
              (SELECT count(*)::int FROM participant p WHERE p.study_id = s.id AND p.status IN ('enrolled', 'withdrawn')) AS enrolled,
              (SELECT count(*)::int FROM site x WHERE x.study_id = s.id) AS "siteCount"
         FROM study s ${ids ? 'WHERE s.id = ANY($1::uuid[])' : ''} ORDER BY s.code`,
      ids ? [ids] : [],
    );
    const studies = rows.flatMap((s) => {
      const access = studyAccess(actor, s.id);
      if (!access) return [];
      return [{ ...s, myRole: access.roles.join('+'), permissions: access.permissions, unblinded: access.unblinded }];
    });
    res.json({ studies });
  });

  r.get('/studies/:studyId/sites', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'study.read');
    const rows = await ctx.ds.query(
      `SELECT id, code, name, enrollment_target AS "enrollmentTarget", status FROM site
        WHERE study_id = $1 AND ($2::uuid[] IS NULL OR id = ANY($2::uuid[])) ORDER BY code`,
      [studyId, access.siteIds],
    );
    res.json({ sites: rows });
  });

  return r;
}
