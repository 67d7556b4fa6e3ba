import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { DesignBody } from '@counterpoise/contracts/design';
import {
  studyDetailResponseSchema as designSaveResponseSchema,
  type StudyDetail,
} from '../../../lib/study-detail.js';
import { api } from '../../../lib/api-client.js';
import { studyDetailQueryKey } from './get-study-detail.js';

export async function saveDesign({
  studyId,
  body,
}: {
  studyId: string;
  body: DesignBody;
}): Promise<StudyDetail> {
  const { study } = await api.send(
    'PUT',
    `/studies/${encodeURIComponent(studyId)}/design`,
    body,
    designSaveResponseSchema,
  );
  return study;
}

/** Every save is a new design version; the list (enrollment, site counts) may change with it. */
export function useSaveDesign() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: saveDesign,
    onSuccess: (study) => {
      queryClient.setQueryData(studyDetailQueryKey(study.id), study);
      void queryClient.invalidateQueries({ queryKey: ['studies'], exact: true });
      void queryClient.invalidateQueries({ queryKey: ['studies', study.id, 'sites'] });
    },
  });
}
