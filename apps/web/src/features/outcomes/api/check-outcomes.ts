import {
  outcomesCheckResponseSchema,
  type OutcomesCheckResponse,
  type OutcomesPutBody,
} from '@counterpoise/contracts/analysis';
import { api } from '../../../lib/api-client.js';

/** Checks rows exactly as a PUT would and counts what it would do; the server writes nothing. */
export async function checkOutcomes(studyId: string, body: OutcomesPutBody): Promise<OutcomesCheckResponse> {
  return api.send(
    'POST',
    `/studies/${encodeURIComponent(studyId)}/outcomes/check`,
    body,
    outcomesCheckResponseSchema,
  );
}
