import type { ErrorRequestHandler, RequestHandler } from 'express';
import multer from 'multer';
import { ZodError } from 'zod';
import { AppError, statusByCode } from './app-error.js';
import { zodIssues } from './validate.js';

type PgError = { code?: string; detail?: string; constraint?: string };

function toAppError(err: unknown): AppError {
  if (err instanceof AppError) return err;
  if (err instanceof ZodError) {
    return new AppError('validation_failed', 'Some fields are not valid', { issues: zodIssues(err) });
  }
  if (err instanceof multer.MulterError) {
    if (err.code === 'LIMIT_FILE_SIZE') return new AppError('payload_too_large', 'The file is larger than allowed');
    return new AppError('validation_failed', `Upload problem: ${err.message}`);
  }
  const e = err as { type?: string; status?: number } & PgError;
  if (e?.type === 'entity.parse.failed') return new AppError('validation_failed', 'The request body is not valid JSON');
  if (e?.type === 'entity.too.large') return new AppError('payload_too_large', 'The request body is too large');
  if (e?.code === '23505') return new AppError('conflict', 'That record already exists', { constraint: e.constraint });
  return new AppError('internal', 'Something went wrong on our side; nothing was saved');
}

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  const appError = toAppError(err);
  const status = statusByCode[appError.code];
  if (status >= 500) req.log?.error({ err }, 'request failed');
  res.status(status).json({
    error: { code: appError.code, message: appError.message, ...(appError.details ? { details: appError.details } : {}) },
  });
};

export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(new AppError('not_found', `No API route ${req.method} ${req.path}`));
};
