import {
  lockBodySchema,
  outcomesPutBodySchema,
  outcomesPutResponseSchema,
  runBodySchema,
  runListSchema,
  runResponseSchema,
  specDtoSchema,
  specPutBodySchema,
  specResponseSchema,
} from '@counterpoise/contracts/analysis';
import { z } from 'zod';
import { registerOperations } from '../../openapi/registry.js';

const specSaved = z.object({ spec: specDtoSchema, note: z.string() });

registerOperations(
  {
    method: 'get',
    path: '/api/studies/:studyId/analysis/spec',
    summary: 'The analysis specification (current version, all versions with signatures), design context, cautions and outcome completeness',
    tag: 'analysis',
    response: specResponseSchema,
    roles: 'statistician',
  },
  {
    method: 'put',
    path: '/api/studies/:studyId/analysis/spec',
    summary: 'Save the specification: a draft is edited in place; after lock a new version is drafted (reason required after the first save; audited)',
    tag: 'analysis',
    body: specPutBodySchema,
    response: specSaved,
    roles: 'statistician',
  },
  {
    method: 'post',
    path: '/api/studies/:studyId/analysis/spec/lock',
    summary: 'Lock the current version with an electronic signature: password re-entered, printed name, UTC time and meaning stored (21 CFR 11.50, 11.200; audited)',
    tag: 'analysis',
    body: lockBodySchema,
    response: specSaved,
    roles: 'statistician',
  },
  {
    method: 'put',
    path: '/api/studies/:studyId/outcomes',
    summary: 'Record outcome values by participant code (bulk); corrections need a reason; audited; no arm in the answer',
    tag: 'analysis',
    body: outcomesPutBodySchema,
    response: outcomesPutResponseSchema,
    roles: 'coordinator (own sites), statistician',
  },
  {
    method: 'post',
    path: '/api/studies/:studyId/analysis/runs',
    summary: 'Run the specified ANCOVA with the one-way ANOVA, assumption checks and cautions; exploratory runs need a reason (audited)',
    tag: 'analysis',
    status: 201,
    body: runBodySchema,
    response: runResponseSchema,
    roles: 'statistician',
  },
  {
    method: 'get',
    path: '/api/studies/:studyId/analysis/runs',
    summary: 'Runs of the study, newest first',
    tag: 'analysis',
    response: runListSchema,
    roles: 'statistician',
  },
  {
    method: 'get',
    path: '/api/studies/:studyId/analysis/runs/:runId',
    summary: 'One run with its full result',
    tag: 'analysis',
    response: runResponseSchema,
    roles: 'statistician',
  },
);
