import { consentDocumentDtoSchema, importModeSchema, importProgressSchema, importReportSchema } from '@counterpoise/contracts/participants';
import { z } from 'zod';
import { registerOperations } from '../../openapi/registry.js';

registerOperations(
  { method: 'post', path: '/api/studies/:studyId/participants/import', summary: "Import participants from a CSV (multipart 'file'; ?mode=preview|commit; one transaction, nothing imported if any row is invalid; same file twice adds nothing)", tag: 'participants', multipart: true, query: importModeSchema, response: z.object({ report: importReportSchema }), roles: 'coordinator (own sites)' },
  { method: 'get', path: '/api/studies/:studyId/participants/import/progress/:progressId', summary: 'Progress of an import started with ?progressId=', tag: 'participants', response: z.object({ progress: importProgressSchema }), roles: 'the importing user' },
  { method: 'get', path: '/api/studies/:studyId/participants/export.csv', summary: 'Participants and baseline values as CSV (formula-injection safe; no arm columns for blinded readers)', tag: 'participants', roles: 'coordinator (own sites), statistician, auditor' },
  { method: 'post', path: '/api/studies/:studyId/participants/:participantId/consent', summary: "Upload a signed consent document (multipart 'file'; PDF, PNG or JPEG by content; at most 10 MB)", tag: 'participants', multipart: true, response: z.object({ document: consentDocumentDtoSchema }), status: 201, roles: 'coordinator (own sites)' },
  { method: 'get', path: '/api/studies/:studyId/participants/:participantId/consent/:documentId', summary: 'Download a consent document', tag: 'participants', roles: 'coordinator (own sites), statistician, auditor' },
);
