import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import cookieParser from 'cookie-parser';
import express, { type Express, type RequestHandler } from 'express';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import type { Logger } from 'pino';
import type { AppContext } from './app-context.js';
import { AppError } from './http/app-error.js';
import { errorHandler, notFoundHandler } from './http/error-handler.js';
import { adminRoutes } from './modules/admin/admin.routes.js';
import { auditRoutes } from './modules/audit/audit.routes.js';
import { authRoutes } from './modules/auth/auth.routes.js';
import { csrfMiddleware, sessionMiddleware } from './modules/auth/session.js';
import { healthRoutes } from './modules/health/health.routes.js';
import { studiesRoutes } from './modules/studies/studies.routes.js';
import { buildOpenApiDocument } from './openapi/registry.js';
import './openapi/foundation.operations.js';
import { routeModules } from './routes.js';

/** Unsafe requests with a body must be JSON (multipart only where a route accepts uploads). */
const requireJson: RequestHandler = (req, _res, next) => {
  const hasBody = Number(req.get('content-length') ?? 0) > 0 || req.get('transfer-encoding') !== undefined;
  if (!hasBody || ['GET', 'HEAD', 'OPTIONS'].includes(req.method)) return next();
  if (req.is('application/json') || req.is('multipart/form-data')) return next();
  next(new AppError('unsupported_media_type', 'Send the request body as application/json'));
};

export function buildApp(ctx: AppContext, logger: Logger): Express {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          fontSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
        },
      },
      strictTransportSecurity: ctx.env.NODE_ENV === 'production',
    }),
  );
  app.use(
    pinoHttp({
      logger,
      genReqId: (req, res) => {
        const incoming = req.headers['x-request-id'];
        const id = typeof incoming === 'string' && /^[\w.-]{1,64}$/.test(incoming) ? incoming : randomUUID();
        res.setHeader('x-request-id', id);
        return id;
      },
      autoLogging: { ignore: (req) => req.url === '/api/health' },
      serializers: {
        req: (req: { id: string; method: string; url: string }) => ({ id: req.id, method: req.method, url: req.url }),
        res: (res: { statusCode: number }) => ({ statusCode: res.statusCode }),
      },
    }),
  );

  const api = express.Router();
  api.use((req, _res, next) => {
    req.requestId = String(req.id);
    next();
  });
  api.use(requireJson);
  api.use(express.json({ limit: '1mb' }));
  api.use(cookieParser());
  api.use(sessionMiddleware(ctx));
  api.use(csrfMiddleware(ctx));
  api.use((_req, res, next) => {
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  api.get('/openapi.json', (_req, res) => {
    res.json(buildOpenApiDocument('0.1.0'));
  });
  api.use(healthRoutes(ctx));
  api.use(authRoutes(ctx));
  api.use(studiesRoutes(ctx));
  api.use(adminRoutes(ctx));
  api.use(auditRoutes(ctx));
  for (const mount of routeModules) api.use(mount(ctx));
  api.use(notFoundHandler);
  api.use(errorHandler);
  app.use('/api', api);

  // The built web app, with client-side routes falling back to index.html.
  const dist = ctx.env.webDistDir;
  if (fs.existsSync(path.join(dist, 'index.html'))) {
    app.use(express.static(dist, { index: false, maxAge: '1h' }));
    app.get(/^\/(?!api\/).*/, (_req, res) => {
      res.setHeader('Cache-Control', 'no-cache');
      res.sendFile(path.join(dist, 'index.html'));
    });
  }
  return app;
}
