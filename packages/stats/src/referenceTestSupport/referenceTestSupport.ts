import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { expect } from 'vitest';

/**
 * Test-only helpers for the reference checks of the ANOVA / ANCOVA / regression / Levene /
 * Shapiro-Wilk modules: load a fixture, count agreeing significant digits, and fail with a
 * message that prints the label, expected, actual and delta.
 */

const fixturesRoot = fileURLToPath(new URL('../__fixtures__/', import.meta.url));

export function loadFixture<T>(relativePath: string): T {
  return JSON.parse(readFileSync(fixturesRoot + relativePath, 'utf8')) as T;
}

/** -log10(|actual - expected| / |expected|), capped at 16 (exact agreement). */
export function significantDigits(actual: number, expected: number): number {
  if (actual === expected) return 16;
  const rel = Math.abs(actual - expected) / Math.abs(expected);
  return Math.min(16, -Math.log10(rel));
}

/** Asserts actual agrees with the published string/number to at least `digits` significant digits. */
export function expectDigits(label: string, actual: number, expected: string | number, digits: number): number {
  const e = typeof expected === 'string' ? Number(expected) : expected;
  if (!Number.isFinite(e) || e === 0) throw new Error(`expectDigits(${label}): expected must be finite and non-zero`);
  const got = significantDigits(actual, e);
  expect(
    got,
    `${label}: expected ${String(expected)}, actual ${actual}, delta ${actual - e}, ${got.toFixed(2)} digits < ${digits}`,
  ).toBeGreaterThanOrEqual(digits);
  return got;
}

/** Asserts |actual - expected| <= tol (for certified zeros and p-values near 0). */
export function expectAbs(label: string, actual: number, expected: string | number, tol: number): void {
  const e = typeof expected === 'string' ? Number(expected) : expected;
  const delta = Math.abs(actual - e);
  expect(delta, `${label}: expected ${String(expected)}, actual ${actual}, delta ${actual - e} > ${tol}`).toBeLessThanOrEqual(tol);
}

/** Asserts relative agreement |a - e| <= rel * |e|. */
export function expectRel(label: string, actual: number, expected: string | number, rel: number): void {
  const e = typeof expected === 'string' ? Number(expected) : expected;
  const delta = Math.abs(actual - e);
  expect(delta, `${label}: expected ${String(expected)}, actual ${actual}, delta ${actual - e}, rel tol ${rel}`).toBeLessThanOrEqual(
    rel * Math.abs(e),
  );
}
