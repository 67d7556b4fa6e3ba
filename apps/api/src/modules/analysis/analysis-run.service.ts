import { analysisNote, type RunBody, type RunDto, type RunList, type RunResult } from '@counterpoise/contracts/analysis';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError, notFound } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { loadDesign } from '../design/study-design.js';
import { computeRun } from './analysis-compute.js';
import { specCovariateKeys } from './analysis-cautions.js';
import { covariateTiming, firstLocked, isExploratory, loadAnalysisRows, specVersions, stratificationFactors } from './analysis-data.js';

type RunRow = {
  id: string;
  spec_version: number;
  exploratory: boolean;
  reason: string | null;
  run_at: Date;
  run_by_name: string;
  run_by_email: string;
  result: RunResult;
};

const runSelect = `SELECT r.id, r.spec_version, r.exploratory, r.reason, r.run_at, u.display_name AS run_by_name, u.email AS run_by_email, r.result
                     FROM analysis_run r JOIN app_user u ON u.id = r.run_by`;

const runDto = (r: RunRow): RunDto => ({
  id: r.id,
  specVersion: r.spec_version,
  exploratory: r.exploratory,
  reason: r.reason,
  runAt: r.run_at.toISOString(),
  runBy: { name: r.run_by_name, email: r.run_by_email },
  result: r.result,
});

/**
 * Runs the specified ANCOVA on the recorded data and stores the result. A run on anything but the
 * first locked version is exploratory and needs a reason (caution 3).
 */
export async function createRun(ctx: AppContext, actor: AuditActor & { userId: string }, studyId: string, input: RunBody): Promise<RunDto> {
  const design = await loadDesign(ctx.ds, studyId);
  return inTransaction(ctx.ds, async (tx) => {
    const versions = await specVersions(tx, studyId);
    const used = input.specVersion ? versions.find((v) => v.version === input.specVersion) : versions.at(-1);
    if (!used) {
      throw new AppError(input.specVersion ? 'not_found' : 'precondition_failed', input.specVersion ? `Specification version ${input.specVersion} was not found` : 'Write the analysis specification before running it');
    }
    const exploratory = isExploratory(versions, used);
    if (exploratory && !input.reason) {
      throw new AppError('validation_failed', 'This run is exploratory (the specification is not the locked, pre-specified one): give a reason', {
        issues: [{ path: ['reason'], message: 'A reason is required for an exploratory run' }],
      });
    }
    const factors = stratificationFactors(design);
    const keys = [...new Set([...specCovariateKeys(used.spec), ...factors.filter((f) => !f.isSite).map((f) => f.key)])];
    const timing = await covariateTiming(tx, studyId);
    const rows = await loadAnalysisRows(tx, studyId, used.spec.outcome.key, keys);
    const result = computeRun({
      design,
      spec: used.spec,
      specVersion: used.version,
      firstLockedVersion: firstLocked(versions)?.version ?? null,
      exploratory,
      reason: input.reason ?? null,
      factors,
      afterRandomization: new Map([...timing].map(([k, v]) => [k, v.after])),
      rows,
    });
    const [row]: { id: string }[] = await tx.query(
      `INSERT INTO analysis_run (study_id, spec_id, spec_version, exploratory, reason, result, run_by) VALUES ($1, $2, $3, $4, $5, $6, $7) RETURNING id`,
      [studyId, used.id, used.version, exploratory, input.reason ?? null, JSON.stringify(result), actor.userId],
    );
    await appendAudit(tx, actor, [
      {
        action: 'analysis.run',
        entityType: 'analysis_run',
        entityId: row!.id,
        studyId,
        after: {
          specVersion: used.version,
          exploratory,
          analysed: result.data.analysed,
          groupF: result.groupEffect.adjusted.f,
          groupP: result.groupEffect.adjusted.p,
          cautions: result.cautions.map((c) => c.code),
        },
        reason: input.reason ?? null,
        // The result is by arm.
        revealsAllocation: true,
      },
    ]);
    const [saved]: RunRow[] = await tx.query(`${runSelect} WHERE r.id = $1`, [row!.id]);
    return runDto(saved!);
  });
}

export async function listRuns(ctx: AppContext, studyId: string): Promise<RunList> {
  const rows: (Omit<RunRow, 'result'> & { analysed: number; group_f: number; group_p: number })[] = await ctx.ds.query(
    `SELECT r.id, r.spec_version, r.exploratory, r.reason, r.run_at, u.display_name AS run_by_name, u.email AS run_by_email,
            (r.result -> 'data' ->> 'analysed')::int AS analysed,
            (r.result -> 'groupEffect' -> 'adjusted' ->> 'f')::float8 AS group_f,
            (r.result -> 'groupEffect' -> 'adjusted' ->> 'p')::float8 AS group_p
       FROM analysis_run r JOIN app_user u ON u.id = r.run_by
      WHERE r.study_id = $1 ORDER BY r.run_at DESC LIMIT 200`,
    [studyId],
  );
  return {
    runs: rows.map((r) => ({
      id: r.id,
      specVersion: r.spec_version,
      exploratory: r.exploratory,
      reason: r.reason,
      runAt: r.run_at.toISOString(),
      runByName: r.run_by_name,
      analysed: r.analysed,
      groupF: r.group_f,
      groupP: r.group_p,
    })),
    note: analysisNote,
  };
}

export async function getRun(ctx: AppContext, studyId: string, runId: string): Promise<RunDto> {
  const [row]: RunRow[] = await ctx.ds.query(`${runSelect} WHERE r.id = $1 AND r.study_id = $2`, [runId, studyId]);
  if (!row) throw notFound('Analysis run');
  return runDto(row);
}
