import { designBodySchema, designSaveResponseSchema, studyCreateBodySchema } from '@counterpoise/contracts/design';
import { registerOperations } from '../../openapi/registry.js';

registerOperations(
  { method: 'post', path: '/api/studies', summary: 'Create a study (then save its design)', tag: 'design', body: studyCreateBodySchema, response: designSaveResponseSchema, status: 201, roles: 'admin, statistician' },
  { method: 'get', path: '/api/studies/:studyId', summary: 'Study with its design, as the reader may see it (arm names, seed and block sizes only where allowed), and the strata planner', tag: 'design', response: designSaveResponseSchema, roles: 'members' },
  { method: 'put', path: '/api/studies/:studyId/design', summary: 'Save a new design version (reason required once anyone is enrolled; audited before/after)', tag: 'design', body: designBodySchema, response: designSaveResponseSchema, roles: 'admin, statistician' },
);
