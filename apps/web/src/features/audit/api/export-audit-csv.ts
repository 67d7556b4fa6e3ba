import { toQueryString } from '../../../lib/api-client.js';
import type { AuditFilters } from './get-audit-events.js';

/** The CSV export is a plain download link: the session cookie goes with it. */
export function auditExportHref(filters: Omit<AuditFilters, 'limit'>): string {
  return `/api/audit/export.csv${toQueryString({ ...filters })}`;
}
