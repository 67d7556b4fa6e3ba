import { readFileSync } from 'node:fs';
import { expect } from 'vitest';

/** Tests only: loads a committed fixture from src/__fixtures__/balance. */
export type Tolerance = { relative: number; absoluteFloor: number };

export type FixtureHeader = {
  generator: string;
  reference: string;
  seed: number;
  description: string;
  tolerance: Tolerance;
};

export function loadBalanceFixture<T>(file: string): FixtureHeader & T {
  const url = new URL(`../__fixtures__/balance/${file}`, import.meta.url);
  return JSON.parse(readFileSync(url, 'utf8')) as FixtureHeader & T;
}

/**
 * |actual - expected| <= relative * |expected| + absoluteFloor. The failure message prints the
 * case, the input (abbreviated), expected, actual and the delta.
 */
export function expectClose(
  actual: number | null,
  expected: number,
  tol: Tolerance,
  context: { case: string; quantity: string; input?: unknown },
): void {
  const delta = actual === null ? Number.POSITIVE_INFINITY : Math.abs(actual - expected);
  const allowed = tol.relative * Math.abs(expected) + tol.absoluteFloor;
  if (!(delta <= allowed)) {
    const input = context.input === undefined ? '' : `\n  input: ${abbreviate(context.input)}`;
    expect.fail(
      `${context.case} / ${context.quantity}${input}\n  expected: ${expected}\n  actual:   ${actual}\n  delta:    ${delta} (allowed ${allowed})`,
    );
  }
  expect(delta).toBeLessThanOrEqual(allowed);
}

function abbreviate(input: unknown): string {
  const s = JSON.stringify(input);
  return s.length > 300 ? `${s.slice(0, 300)}... (${s.length} chars)` : s;
}
