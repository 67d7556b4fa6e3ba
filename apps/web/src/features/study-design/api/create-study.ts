import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { StudyCreateBody } from '@counterpoise/contracts/design';
import { studyDetailViewSchema as studyDetailSchema, type StudyDetail } from '../../../lib/study-detail.js';
import { z } from 'zod';
import { api } from '../../../lib/api-client.js';
import { studyDetailQueryKey } from './get-study-detail.js';

// The API answers either `{ study }` or the study itself; accept both so the page does not break.
const createResponseSchema = z.union([z.object({ study: studyDetailSchema }), studyDetailSchema]);

export async function createStudy(body: StudyCreateBody): Promise<StudyDetail> {
  const res = await api.send('POST', '/studies', body, createResponseSchema);
  return 'study' in res ? res.study : res;
}

export function useCreateStudy() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createStudy,
    onSuccess: (study) => {
      queryClient.setQueryData(studyDetailQueryKey(study.id), study);
      void queryClient.invalidateQueries({ queryKey: ['studies'], exact: true });
      // The creator becomes a member: the session's memberships changed.
      void queryClient.invalidateQueries({ queryKey: ['me'] });
    },
  });
}
