import { useMutation, useQueryClient } from '@tanstack/react-query';
import { recomputeResponseSchema } from '@counterpoise/contracts/balance';
import type { z } from 'zod';
import { api } from '../../../lib/api-client.js';
import { balanceQueryKey } from './get-balance.js';
import { baselineTableQueryKey } from './get-baseline-table.js';

export type RecomputeResponse = z.output<typeof recomputeResponseSchema>;

export async function recomputeBalance(studyId: string): Promise<RecomputeResponse> {
  return api.send(
    'POST',
    `/studies/${encodeURIComponent(studyId)}/balance/recompute`,
    {},
    recomputeResponseSchema,
  );
}

/** Queues a full recompute; the refetch then shows "recompute pending" and polls until it lands. */
export function useRecomputeBalance(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => recomputeBalance(studyId),
    onSuccess: async () => {
      await Promise.all([
        queryClient.invalidateQueries({ queryKey: balanceQueryKey(studyId) }),
        queryClient.invalidateQueries({ queryKey: baselineTableQueryKey(studyId) }),
      ]);
    },
  });
}
