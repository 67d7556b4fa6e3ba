import { afterEach, describe, expect, it, vi } from 'vitest';
import { z } from 'zod';
import { api, ApiError, setCsrfToken, toQueryString } from './api-client.js';

type Call = { url: string; init: RequestInit };

/** Replaces fetch with one canned response and records what was sent. */
function stubFetch(status: number, body: unknown): Call[] {
  const calls: Call[] = [];
  vi.stubGlobal('fetch', async (url: string, init: RequestInit) => {
    calls.push({ url, init });
    const text = typeof body === 'string' ? body : JSON.stringify(body);
    return new Response(status === 204 ? null : text, {
      status,
      headers: { 'Content-Type': 'application/json' },
    });
  });
  return calls;
}

afterEach(() => {
  vi.unstubAllGlobals();
  setCsrfToken(null);
});

describe('api client', () => {
  it('when a write is sent after sign-in, then it carries the CSRF token and a JSON body', async () => {
    setCsrfToken('token-from-me');
    const calls = stubFetch(200, { ok: true });
    await api.send('PATCH', '/admin/users/u1', { reason: 'moved site' }, z.object({ ok: z.boolean() }));
    const headers = calls[0]?.init.headers as Record<string, string>;
    expect(calls[0]?.url).toBe('/api/admin/users/u1');
    expect(headers['X-CSRF-Token']).toBe('token-from-me');
    expect(headers['Content-Type']).toBe('application/json');
    expect(calls[0]?.init.body).toBe('{"reason":"moved site"}');
  });

  it('when a read is sent, then it carries no CSRF header and no body', async () => {
    setCsrfToken('token-from-me');
    const calls = stubFetch(200, { ok: true });
    await api.get('/studies', z.object({ ok: z.boolean() }));
    const headers = calls[0]?.init.headers as Record<string, string>;
    expect(headers['X-CSRF-Token']).toBeUndefined();
    expect(calls[0]?.init.body).toBeUndefined();
  });

  it('when the server answers with the error body, then an ApiError carries its code, message and field issues', async () => {
    stubFetch(400, {
      error: {
        code: 'validation_failed',
        message: 'A coordinator needs at least one site',
        details: { issues: [{ path: ['memberships', '0', 'siteIds'], message: 'Choose at least one site' }] },
      },
    });
    const error = await api.sendNoContent('POST', '/admin/users/invite', {}).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ApiError);
    const apiError = error as ApiError;
    expect([apiError.status, apiError.code, apiError.message]).toEqual([
      400,
      'validation_failed',
      'A coordinator needs at least one site',
    ]);
    expect(apiError.fieldIssues()).toEqual([
      { path: ['memberships', '0', 'siteIds'], message: 'Choose at least one site' },
    ]);
  });

  it('when a failure has no error body (proxy page), then a generic ApiError with code internal is raised', async () => {
    stubFetch(502, '<html>bad gateway</html>');
    const error = (await api.get('/me', z.object({})).catch((e: unknown) => e)) as ApiError;
    expect([error.status, error.code]).toEqual([502, 'internal']);
  });

  it('when a 200 response does not match the contract schema, then bad_response is raised instead of bad data', async () => {
    stubFetch(200, { studies: 'not a list' });
    const error = (await api
      .get('/studies', z.object({ studies: z.array(z.string()) }))
      .catch((e: unknown) => e)) as ApiError;
    expect(error.code).toBe('bad_response');
  });

  it('when fetch itself fails, then a network ApiError with status 0 is raised', async () => {
    vi.stubGlobal('fetch', async () => {
      throw new TypeError('Failed to fetch');
    });
    const error = (await api.get('/me', z.object({})).catch((e: unknown) => e)) as ApiError;
    expect([error.status, error.code]).toEqual([0, 'network']);
  });
});

describe('toQueryString', () => {
  it('skips empty values and encodes the rest', () => {
    expect(
      toQueryString({ action: 'auth.sign_in', actor: '', studyId: undefined, limit: 50, to: 'a b' }),
    ).toBe('?action=auth.sign_in&limit=50&to=a+b');
  });

  it('gives an empty string when nothing is set', () => {
    expect(toQueryString({ a: undefined, b: null, c: '' })).toBe('');
  });
});
