import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { importProgressSchema, type ImportProgress } from '@counterpoise/contracts/participants';
import { api } from '../../../lib/api-client.js';

const progressResponseSchema = z.object({ progress: importProgressSchema });

export async function getImportProgress(
  studyId: string,
  progressId: string,
  signal?: AbortSignal,
): Promise<ImportProgress> {
  const { progress } = await api.get(
    `/studies/${encodeURIComponent(studyId)}/participants/import/progress/${encodeURIComponent(progressId)}`,
    progressResponseSchema,
    signal,
  );
  return progress;
}

export const importProgressQueryOptions = (studyId: string, progressId: string) =>
  queryOptions({
    queryKey: ['studies', studyId, 'participants', 'import-progress', progressId] as const,
    queryFn: ({ signal }) => getImportProgress(studyId, progressId, signal),
    staleTime: 0,
    retry: false,
  });

/** Polls while the server processes the file; stops once it reports done or failed. */
export function useImportProgress(studyId: string, progressId: string | null, active: boolean) {
  return useQuery({
    ...importProgressQueryOptions(studyId, progressId ?? ''),
    enabled: Boolean(progressId) && active,
    refetchInterval: (q) => (q.state.data && ['done', 'failed'].includes(q.state.data.phase) ? false : 700),
  });
}
