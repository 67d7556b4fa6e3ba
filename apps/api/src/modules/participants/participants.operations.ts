import {
  enrollBodySchema,
  enrollResponseSchema,
  participantDetailSchema,
  participantListQuerySchema,
  participantListSchema,
  participantPatchBodySchema,
  screeningBodySchema,
  screeningDtoSchema,
  screeningListQuerySchema,
  screeningListSchema,
  unblindBodySchema,
  unblindResponseSchema,
} from '@counterpoise/contracts/participants';
import { z } from 'zod';
import { registerOperations } from '../../openapi/registry.js';

registerOperations(
  { method: 'post', path: '/api/studies/:studyId/screenings', summary: 'Screen a candidate against the eligibility criteria (kept in the screening log)', tag: 'participants', body: screeningBodySchema, response: z.object({ screening: screeningDtoSchema }), status: 201, roles: 'coordinator (own sites)' },
  { method: 'get', path: '/api/studies/:studyId/screenings', summary: 'Screening log', tag: 'participants', query: screeningListQuerySchema, response: screeningListSchema, roles: 'coordinator (own sites), statistician, auditor' },
  { method: 'post', path: '/api/studies/:studyId/participants', summary: 'Enroll a participant; the allocation is committed in the same transaction and returned where the role may see it', tag: 'participants', body: enrollBodySchema, response: enrollResponseSchema, status: 201, roles: 'coordinator (own sites)' },
  { method: 'get', path: '/api/studies/:studyId/participants', summary: 'Participants with server-side sort, filter, search and paging', tag: 'participants', query: participantListQuerySchema, response: participantListSchema, roles: 'coordinator (own sites), statistician, auditor' },
  { method: 'get', path: '/api/studies/:studyId/participants/:participantId', summary: 'Participant detail with history from the audit trail', tag: 'participants', response: z.object({ participant: participantDetailSchema }), roles: 'coordinator (own sites), statistician, auditor' },
  { method: 'patch', path: '/api/studies/:studyId/participants/:participantId', summary: 'Correct baseline values or withdraw (reason required; old and new values audited)', tag: 'participants', body: participantPatchBodySchema, response: z.object({ participant: participantDetailSchema }), roles: 'coordinator (own sites)' },
  { method: 'post', path: '/api/studies/:studyId/participants/:participantId/unblind', summary: 'Emergency unblinding of one participant (audited, statisticians e-mailed)', tag: 'participants', body: unblindBodySchema, response: unblindResponseSchema, roles: 'coordinator (own sites), statistician' },
  { method: 'get', path: '/api/studies/:studyId/allocation-list', summary: 'Reproduce the allocation list from the stored seed and check every allocation against it', tag: 'participants', roles: 'statistician' },
);
