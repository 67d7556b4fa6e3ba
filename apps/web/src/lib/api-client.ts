import type { z } from 'zod';
import { errorBodySchema } from '@counterpoise/contracts/common';

export type FieldIssue = { path: string[]; message: string };

/** Every failed API call surfaces as this, carrying the server's `{ error: { code, message, details } }`. */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly details: unknown;

  constructor(status: number, code: string, message: string, details?: unknown) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.details = details;
  }

  /** Field messages of a `validation_failed` error, keyed by dotted path. */
  fieldIssues(): FieldIssue[] {
    if (this.code !== 'validation_failed' || typeof this.details !== 'object' || this.details === null)
      return [];
    const issues = (this.details as { issues?: unknown }).issues;
    if (!Array.isArray(issues)) return [];
    return issues.flatMap((raw): FieldIssue[] => {
      if (typeof raw !== 'object' || raw === null) return [];
      const { path, message } = raw as { path?: unknown; message?: unknown };
      if (!Array.isArray(path) || typeof message !== 'string') return [];
      return [{ path: path.map(String), message }];
    });
  }
}

export function isApiError(error: unknown, code?: string): error is ApiError {
  return error instanceof ApiError && (code === undefined || error.code === code);
}

// The CSRF token comes with sign-in and /me responses; the session cookie itself is httpOnly.
let csrfToken: string | null = null;

export function setCsrfToken(token: string | null): void {
  csrfToken = token;
}

/** For requests sent outside `api` (multipart uploads with progress, see lib/upload.ts). */
export function getCsrfToken(): string | null {
  return csrfToken;
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

async function toApiError(response: Response): Promise<ApiError> {
  let body: unknown = null;
  try {
    body = await response.json();
  } catch {
    // Non-JSON failure (proxy down, HTML error page): fall through to a generic message.
  }
  const parsed = errorBodySchema.safeParse(body);
  if (parsed.success) {
    const { code, message, details } = parsed.data.error;
    return new ApiError(response.status, code, message, details);
  }
  const message =
    response.status >= 500 || response.status === 0
      ? 'The server could not be reached or failed. Try again in a moment.'
      : `Request failed (${response.status}).`;
  return new ApiError(response.status, response.status >= 500 ? 'internal' : 'unknown', message);
}

async function request(
  method: Method,
  path: string,
  body?: unknown,
  signal?: AbortSignal,
): Promise<Response> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (method !== 'GET') {
    headers['Content-Type'] = 'application/json';
    if (csrfToken) headers['X-CSRF-Token'] = csrfToken;
  }
  let response: Response;
  try {
    response = await fetch(`/api${path}`, {
      method,
      headers,
      credentials: 'same-origin',
      body: method === 'GET' ? undefined : JSON.stringify(body ?? {}),
      signal,
    });
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === 'AbortError') throw cause;
    throw new ApiError(0, 'network', 'The server could not be reached. Check your connection and try again.');
  }
  if (!response.ok) throw await toApiError(response);
  return response;
}

async function parseJson<S extends z.ZodType>(response: Response, schema: S): Promise<z.output<S>> {
  const json: unknown = await response.json();
  const parsed = schema.safeParse(json);
  if (!parsed.success) {
    throw new ApiError(
      response.status,
      'bad_response',
      'The server sent a response this page does not understand.',
      {
        issues: parsed.error.issues,
      },
    );
  }
  return parsed.data;
}

/** Thin typed wrapper over fetch: JSON in, schema-checked JSON out, CSRF header on writes. */
export const api = {
  async get<S extends z.ZodType>(path: string, schema: S, signal?: AbortSignal): Promise<z.output<S>> {
    return parseJson(await request('GET', path, undefined, signal), schema);
  },
  async send<S extends z.ZodType>(
    method: Exclude<Method, 'GET'>,
    path: string,
    body: unknown,
    schema: S,
  ): Promise<z.output<S>> {
    return parseJson(await request(method, path, body), schema);
  },
  /** For writes answered with 202/204 or a body the caller does not need. */
  async sendNoContent(method: Exclude<Method, 'GET'>, path: string, body?: unknown): Promise<void> {
    await request(method, path, body);
  },
};

/** Query string from an object, skipping empty values. */
export function toQueryString(params: Record<string, string | number | undefined | null>): string {
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(params)) {
    if (value === undefined || value === null || value === '') continue;
    search.set(key, String(value));
  }
  const text = search.toString();
  return text ? `?${text}` : '';
}
