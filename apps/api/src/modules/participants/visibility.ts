import type { StudyAccess } from '../policy/policy.js';

/**
 * Who may see a participant's arm: unblinded roles always; in open-label studies also the
 * site staff entering the data (their own participants only; the site scope is applied by
 * the queries). Everyone else is blinded, in every response, export and audit entry.
 */
export function canSeeArms(access: StudyAccess, study: { blinding: 'blinded' | 'open_label' }): boolean {
  if (access.unblinded) return true;
  return study.blinding === 'open_label' && access.roles.includes('coordinator');
}
