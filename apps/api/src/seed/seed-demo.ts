import type { DataSource, EntityManager } from 'typeorm';
import { inTransaction } from '../db/transaction.js';
import { appendAudit, type AuditActor } from '../modules/audit/audit.service.js';
import type { JobQueue } from '../jobs/queue.js';
import { cohortSites, coordinatorSites, demoUsers, trialSites } from './demo-scenario.js';
import { seedEnrollment } from './seed-enrollment.js';

const SEED_ACTOR: AuditActor = { userId: null, email: 'seed@counterpoise.local', role: 'system', requestId: 'seed' };

type StudySeed = {
  code: string;
  title: string;
  kind: 'randomized_trial' | 'observational_cohort';
  blinding: 'blinded' | 'open_label';
  target: number;
  sites: { code: string; name: string; enrollmentTarget: number }[];
  arms: { code: string; name: string; ratio: number }[];
};

const studies: StudySeed[] = [
  {
    code: 'KESTREL',
    title: 'KESTREL: home breathing-and-walking programme vs usual care in chronic lung disease',
    kind: 'randomized_trial',
    blinding: 'blinded',
    target: 400,
    sites: trialSites,
    arms: [
      { code: 'HBW', name: 'Home breathing-and-walking programme', ratio: 1 },
      { code: 'UC', name: 'Usual care', ratio: 1 },
    ],
  },
  {
    code: 'HEARTHSTONE',
    title: 'HEARTHSTONE: lipid-lowering treatment start and cardiovascular risk factors, observational cohort',
    kind: 'observational_cohort',
    blinding: 'open_label',
    target: 540,
    sites: cohortSites,
    arms: [
      { code: 'STARTED', name: 'Started lipid-lowering treatment', ratio: 1 },
      { code: 'NOT_STARTED', name: 'Did not start', ratio: 1 },
    ],
  },
];

async function ensureStudy(tx: EntityManager, s: StudySeed): Promise<{ id: string; siteIds: Map<string, string> }> {
  const found: { id: string }[] = await tx.query(`SELECT id FROM study WHERE code = $1`, [s.code]);
  let id = found[0]?.id;
  if (!id) {
    const rows: { id: string }[] = await tx.query(
      `INSERT INTO study (code, title, kind, blinding, status, target_sample_size) VALUES ($1, $2, $3, $4, 'enrolling', $5)
       RETURNING id`,
      [s.code, s.title, s.kind, s.blinding, s.target],
    );
    id = rows[0]!.id;
    for (const [i, site] of s.sites.entries()) {
      await tx.query(`INSERT INTO site (study_id, code, name, enrollment_target) VALUES ($1, $2, $3, $4)`, [
        id, site.code, site.name, site.enrollmentTarget,
      ]);
      void i;
    }
    for (const [i, arm] of s.arms.entries()) {
      await tx.query(`INSERT INTO arm (study_id, code, name, ratio, position) VALUES ($1, $2, $3, $4, $5)`, [
        id, arm.code, arm.name, arm.ratio, i,
      ]);
    }
    await appendAudit(tx, SEED_ACTOR, [
      { action: 'study.created', entityType: 'study', entityId: id, studyId: id, after: { ...s, sites: undefined, arms: undefined } },
    ]);
  }
  const sites: { id: string; code: string }[] = await tx.query(`SELECT id, code FROM site WHERE study_id = $1`, [id]);
  return { id, siteIds: new Map(sites.map((x) => [x.code, x.id])) };
}

/**
 * Creates the demo accounts, studies, sites and memberships when they are missing, then (given
 * the job queue) the study designs and enrolled participants (seed-enrollment.ts).
 * Idempotent: a second run finds everything and adds nothing.
 */
export async function seedDemo(
  ds: DataSource,
  passwordHash: string,
  jobs?: JobQueue,
  afterStep?: (studyId: string) => Promise<void>,
): Promise<{ created: boolean; detail: string }> {
  const base = await seedAccountsAndStudies(ds, passwordHash);
  if (!jobs) return base;
  const enrolled = await seedEnrollment({ ds, jobs }, afterStep);
  if (!enrolled) return base;
  return { created: true, detail: [base.detail, enrolled].filter(Boolean).join('; ') };
}

async function seedAccountsAndStudies(ds: DataSource, passwordHash: string): Promise<{ created: boolean; detail: string }> {
  return inTransaction(ds, async (tx) => {
    const existing: { n: number }[] = await tx.query(
      `SELECT count(*)::int AS n FROM app_user WHERE email = ANY($1::text[])`,
      [demoUsers.map((u) => u.email)],
    );
    const studyCount: { n: number }[] = await tx.query(`SELECT count(*)::int AS n FROM study WHERE code = ANY($1::text[])`, [
      studies.map((s) => s.code),
    ]);
    if (existing[0]!.n === demoUsers.length && studyCount[0]!.n === studies.length) {
      return { created: false, detail: '' };
    }
    const [trial, cohort] = [await ensureStudy(tx, studies[0]!), await ensureStudy(tx, studies[1]!)];
    for (const u of demoUsers) {
      const found: { id: string }[] = await tx.query(`SELECT id FROM app_user WHERE lower(email) = $1`, [u.email]);
      if (found.length) continue;
      const rows: { id: string }[] = await tx.query(
        `INSERT INTO app_user (email, display_name, password_hash, is_admin, status) VALUES ($1, $2, $3, $4, 'active')
         RETURNING id`,
        [u.email, u.displayName, passwordHash, u.isAdmin],
      );
      const userId = rows[0]!.id;
      const grants: { studyId: string; siteIds: string[] }[] = [];
      if (u.role) {
        const scoped = u.role === 'coordinator';
        grants.push({
          studyId: trial.id,
          siteIds: scoped ? coordinatorSites.trial.map((c) => trial.siteIds.get(c)!) : [],
        });
        grants.push({
          studyId: cohort.id,
          siteIds: scoped ? coordinatorSites.cohort.map((c) => cohort.siteIds.get(c)!) : [],
        });
        for (const g of grants) {
          await tx.query(`INSERT INTO membership (user_id, study_id, role, site_ids) VALUES ($1, $2, $3, $4::uuid[])`, [
            userId, g.studyId, u.role, g.siteIds,
          ]);
        }
      }
      await appendAudit(tx, SEED_ACTOR, [
        { action: 'user.created', entityType: 'user', entityId: userId, after: { email: u.email, displayName: u.displayName, isAdmin: u.isAdmin } },
        ...grants.map((g) => ({ action: 'membership.granted', entityType: 'membership', entityId: userId, studyId: g.studyId, after: { role: u.role, ...g } })),
      ]);
    }
    return { created: true, detail: `${demoUsers.length} accounts, ${studies.length} studies` };
  });
}
