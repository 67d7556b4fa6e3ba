import type { ParticipantDetail, ParticipantListQuery, ParticipantSummary } from '@counterpoise/contracts/participants';
import type { AppContext } from '../../app-context.js';
import { notFound } from '../../http/app-error.js';
import type { StudyAccess } from '../policy/policy.js';
import type { StudyDesign } from '../design/study-design.js';

const SORTS: Record<string, string> = {
  code: 'p.code',
  enrolledAt: 'p.enrolled_at',
  status: 'p.status',
  site: 'st.code',
};

type SummaryRow = {
  id: string;
  code: string;
  siteId: string;
  siteCode: string;
  status: ParticipantSummary['status'];
  screenedAt: Date | null;
  enrolledAt: Date | null;
  withdrawnAt: Date | null;
  kitCode: string | null;
  armId: string | null;
};

const iso = (d: Date | string | null) => (d ? new Date(d).toISOString() : null);

export function armRef(design: StudyDesign, armId: string | null, visible: boolean) {
  if (!visible || !armId) return undefined;
  const a = design.arms.find((x) => x.id === armId);
  return a ? { id: a.id, code: a.code, name: a.name } : undefined;
}

function toSummary(design: StudyDesign, r: SummaryRow, showArms: boolean): ParticipantSummary {
  const arm = armRef(design, r.armId, showArms);
  return {
    id: r.id,
    code: r.code,
    siteId: r.siteId,
    siteCode: r.siteCode,
    status: r.status,
    screenedAt: iso(r.screenedAt),
    enrolledAt: iso(r.enrolledAt),
    withdrawnAt: iso(r.withdrawnAt),
    kitCode: r.kitCode,
    ...(arm ? { arm } : {}),
  };
}

const SUMMARY_COLUMNS = `p.id, p.code, p.site_id AS "siteId", st.code AS "siteCode", p.status, p.screened_at AS "screenedAt",
  p.enrolled_at AS "enrolledAt", p.withdrawn_at AS "withdrawnAt", a.kit_code AS "kitCode",
  COALESCE(a.arm_id, p.exposure_arm_id) AS "armId"`;

/** Server-side sort, filter, search and paging, limited to the reader's sites. */
export async function listParticipants(
  ctx: AppContext,
  design: StudyDesign,
  access: StudyAccess,
  q: ParticipantListQuery,
  showArms: boolean,
) {
  const params: unknown[] = [design.id, access.siteIds, q.siteId ?? null, q.status ?? null, q.q ? `%${q.q.replace(/[%_\\]/g, '\\$&')}%` : null];
  const where = `p.study_id = $1 AND ($2::uuid[] IS NULL OR p.site_id = ANY($2::uuid[])) AND ($3::uuid IS NULL OR p.site_id = $3)
                 AND ($4::text IS NULL OR p.status = $4) AND ($5::text IS NULL OR p.code ILIKE $5)`;
  const desc = q.sort.startsWith('-');
  const column = SORTS[q.sort.replace(/^-/, '')]!;
  const order = `${column} ${desc ? 'DESC' : 'ASC'} NULLS LAST, p.code ASC`;
  const [count, rows] = await Promise.all([
    ctx.ds.query(`SELECT count(*)::int AS n FROM participant p WHERE ${where}`, params) as Promise<{ n: number }[]>,
    ctx.ds.query(
      `SELECT ${SUMMARY_COLUMNS} FROM participant p JOIN site st ON st.id = p.site_id
         LEFT JOIN allocation a ON a.participant_id = p.id
        WHERE ${where} ORDER BY ${order} LIMIT $6 OFFSET $7`,
      [...params, q.pageSize, (q.page - 1) * q.pageSize],
    ) as Promise<SummaryRow[]>,
  ]);
  return { items: rows.map((r) => toSummary(design, r, showArms)), total: count[0]!.n, page: q.page, pageSize: q.pageSize };
}

/** One participant (404 outside the reader's sites), with values, allocation, consent documents and visible history. */
export async function participantDetail(
  ctx: AppContext,
  design: StudyDesign,
  access: StudyAccess,
  participantId: string,
  showArms: boolean,
): Promise<ParticipantDetail> {
  const rows: (SummaryRow & { consentDate: string | null; consentVersion: string | null; withdrawalReason: string | null; allocatedAt: Date | null })[] =
    await ctx.ds.query(
      `SELECT ${SUMMARY_COLUMNS}, to_char(p.consent_date, 'YYYY-MM-DD') AS "consentDate", p.consent_version AS "consentVersion",
              p.withdrawal_reason AS "withdrawalReason", a.allocated_at AS "allocatedAt"
         FROM participant p JOIN site st ON st.id = p.site_id LEFT JOIN allocation a ON a.participant_id = p.id
        WHERE p.id = $1 AND p.study_id = $2 AND ($3::uuid[] IS NULL OR p.site_id = ANY($3::uuid[]))`,
      [participantId, design.id, access.siteIds],
    );
  const r = rows[0];
  if (!r) throw notFound('Participant');
  const [values, docs, history] = await Promise.all([
    ctx.ds.query(
      `SELECT c.key, c.kind, bv.value_number, bv.value_text, to_char(bv.measured_on, 'YYYY-MM-DD') AS measured_on
         FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id WHERE bv.participant_id = $1`,
      [participantId],
    ) as Promise<{ key: string; kind: string; value_number: number | null; value_text: string | null; measured_on: string }[]>,
    ctx.ds.query(
      `SELECT id, original_name AS "originalName", media_type AS "mediaType", size_bytes AS "sizeBytes", sha256, uploaded_at AS "uploadedAt"
         FROM consent_document WHERE participant_id = $1 ORDER BY uploaded_at`,
      [participantId],
    ) as Promise<{ id: string; originalName: string; mediaType: string; sizeBytes: number; sha256: string; uploadedAt: Date }[]>,
    // Entries that reveal an allocation only for readers who may see arms (EMA 2023 guideline on computerised systems).
    ctx.ds.query(
      `SELECT seq::int AS seq, occurred_at AS "occurredAt", actor_email AS "actorEmail", actor_role AS "actorRole", action, before, after, reason
         FROM audit_event WHERE entity_type = 'participant' AND entity_id = $1 AND ($2::boolean OR NOT reveals_allocation) ORDER BY seq`,
      [participantId, showArms],
    ) as Promise<{ seq: number; occurredAt: Date; actorEmail: string | null; actorRole: string | null; action: string; before: unknown; after: unknown; reason: string | null }[]>,
  ]);
  const baseline: ParticipantDetail['baseline'] = {};
  for (const v of values) {
    const value = v.kind === 'categorical' ? v.value_text! : v.kind === 'binary' ? v.value_number === 1 : v.value_number!;
    baseline[v.key] = { value, measuredOn: v.measured_on };
  }
  const summary = toSummary(design, r, showArms);
  return {
    ...summary,
    consentDate: r.consentDate,
    consentVersion: r.consentVersion,
    withdrawalReason: r.withdrawalReason,
    baseline,
    allocation: r.kitCode ? { kitCode: r.kitCode, allocatedAt: iso(r.allocatedAt)!, ...(summary.arm ? { arm: summary.arm } : {}) } : null,
    consentDocuments: docs.map((d) => ({ ...d, uploadedAt: iso(d.uploadedAt)! })),
    history: history.map((h) => ({ ...h, occurredAt: iso(h.occurredAt)! })),
  };
}
