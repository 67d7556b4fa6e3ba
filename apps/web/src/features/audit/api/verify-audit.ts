import { queryOptions, useQuery } from '@tanstack/react-query';
import { auditVerifySchema, type AuditVerify } from '@counterpoise/contracts/audit';
import { api } from '../../../lib/api-client.js';

export async function verifyAudit(signal?: AbortSignal): Promise<AuditVerify> {
  return api.get('/audit/verify', auditVerifySchema, signal);
}

export const verifyAuditQueryOptions = () =>
  queryOptions({
    queryKey: ['audit', 'verify'] as const,
    queryFn: ({ signal }) => verifyAudit(signal),
    staleTime: 0,
  });

/** Walks the whole hash chain on the server; runs only when asked (`refetch`). */
export function useVerifyAudit() {
  return useQuery({ ...verifyAuditQueryOptions(), enabled: false });
}
