import { useMutation, useQueryClient } from '@tanstack/react-query';
import { alertSchema, type Alert, type AlertPatchBody } from '@counterpoise/contracts/balance';
import { z } from 'zod';
import { api } from '../../../lib/api-client.js';
import { alertsQueryKey } from './get-alerts.js';

// The PATCH may answer with the alert itself or wrapped as { alert }: accept either.
const patchResponseSchema = z.union([
  alertSchema,
  z.object({ alert: alertSchema }).transform((r) => r.alert),
]);

export async function acknowledgeAlert(
  studyId: string,
  alertId: string,
  body: AlertPatchBody,
): Promise<Alert> {
  return api.send(
    'PATCH',
    `/studies/${encodeURIComponent(studyId)}/alerts/${encodeURIComponent(alertId)}`,
    body,
    patchResponseSchema,
  );
}

export function useAcknowledgeAlert(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ alertId, body }: { alertId: string; body: AlertPatchBody }) =>
      acknowledgeAlert(studyId, alertId, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: alertsQueryKey(studyId) }),
  });
}
