import type { ErrorCode } from '@counterpoise/contracts/common';

/** The one typed error the API throws; the error middleware maps `code` to an HTTP status. */
export class AppError extends Error {
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const statusByCode: Record<ErrorCode, number> = {
  validation_failed: 400,
  token_invalid: 400,
  unauthenticated: 401,
  invalid_credentials: 401,
  csrf_failed: 403,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  precondition_failed: 412,
  payload_too_large: 413,
  unsupported_media_type: 415,
  rate_limited: 429,
  internal: 500,
};

export const notFound = (what: string) => new AppError('not_found', `${what} was not found`);
export const forbidden = (message = 'Your role does not allow this') => new AppError('forbidden', message);
