import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { StudyCreateBody } from '@counterpoise/contracts/design';
import { api } from '../../../lib/api-client.js';
import { studyDetailResponseSchema, type StudyDetail } from '../../../lib/study-detail.js';
import { studiesQueryKey } from './get-studies.js';

/** Creates a study in set-up; the API answers with the new study as its creator may see it. */
export async function createStudy(body: StudyCreateBody): Promise<StudyDetail> {
  const { study } = await api.send('POST', '/studies', body, studyDetailResponseSchema);
  return study;
}

/*
 * The new study must be in the list and the creator's new membership in `me` before the
 * Design tab opens: the study pages read both, and would otherwise say "not found" or
 * "not available for your role" until a refetch. So success waits for both refetches.
 * Keys are written out (['me'], ['studies', id, 'detail']) as other features do, to avoid
 * importing from the auth and study-design features.
 */
export function useCreateStudy() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createStudy,
    onSuccess: async (study) => {
      queryClient.setQueryData(['studies', study.id, 'detail'], study);
      await Promise.all([
        queryClient.invalidateQueries({ queryKey: studiesQueryKey, exact: true, refetchType: 'all' }),
        queryClient.invalidateQueries({ queryKey: ['me'], exact: true, refetchType: 'all' }),
      ]);
    },
  });
}
