import { describe, expect, it } from 'vitest';
import { safeNextPath } from './paths.js';

// Open-redirect guard for ?next= after sign-in (OWASP "Unvalidated Redirects and Forwards").
describe('safeNextPath', () => {
  it.each([
    ['/admin/users', '/admin/users'],
    ['/studies/abc?tab=1', '/studies/abc?tab=1'],
    [null, '/studies'],
    ['', '/studies'],
    ['https://elsewhere.example/', '/studies'],
    ['//elsewhere.example/', '/studies'],
    ['/\\elsewhere.example/', '/studies'],
    ['javascript:alert(1)', '/studies'],
  ])('when next is %j, then the destination is %j', (next, expected) => {
    expect(safeNextPath(next)).toBe(expected);
  });
});
