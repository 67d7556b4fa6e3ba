import type { Router } from 'express';
import type { AppContext } from './app-context.js';
import { analysisRoutes } from './modules/analysis/analysis.routes.js';
import { balanceRoutes } from './modules/balance/balance.routes.js';
import { designRoutes } from './modules/design/design.routes.js';
import { digestRoutes } from './modules/digest/digest.routes.js';
import { participantsRoutes } from './modules/participants/participants.routes.js';
import { uploadsRoutes } from './modules/participants/uploads.routes.js';

/**
 * Route modules of the later capabilities (design and enrollment, balance, analysis), each
 * added here by its own line. The foundation's routes are mounted in app.ts.
 */
export const routeModules: ((ctx: AppContext) => Router)[] = [
  designRoutes,
  participantsRoutes,
  uploadsRoutes,
  balanceRoutes,
  analysisRoutes,
  digestRoutes,
];
