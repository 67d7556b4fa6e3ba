import type { BalanceArmsView, CovariateSummary } from '@counterpoise/contracts/balance';

const MINUS = '\u2212';

/** A signed SMD with a true minus sign, so columns of figures line up and read aloud right. */
export function formatSmd(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const text = Math.abs(value).toFixed(digits);
  if (Number(text) === 0) return (0).toFixed(digits);
  return `${value < 0 ? MINUS : '+'}${text}`;
}

export function formatNumber(value: number | null | undefined, digits = 2): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const text = value.toFixed(digits);
  return text.startsWith('-') ? `${MINUS}${text.slice(1)}` : text;
}

export function formatBand(halfWidth: number | null | undefined, digits = 3): string {
  if (halfWidth === null || halfWidth === undefined || !Number.isFinite(halfWidth)) return '—';
  return `±${halfWidth.toFixed(digits)}`;
}

export function formatPercent(value: number | null | undefined, digits = 0): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${value.toFixed(digits)}%`;
}

const dateTime = new Intl.DateTimeFormat('en-GB', {
  day: 'numeric',
  month: 'short',
  year: 'numeric',
  hour: '2-digit',
  minute: '2-digit',
  second: '2-digit',
  timeZone: 'UTC',
  timeZoneName: 'short',
});

/** Times are shown in UTC, like the audit trail, so every reader sees the same clock. */
export function formatDateTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : dateTime.format(date);
}

/** One-line summary of a covariate's distribution, for chart text alternatives and pooled views. */
export function summaryText(kind: 'continuous' | 'binary' | 'categorical', s: CovariateSummary): string {
  if (kind === 'continuous') {
    return `mean ${formatNumber(s.mean)} (SD ${formatNumber(s.sd)}); median ${formatNumber(s.median)} [IQR ${formatNumber(s.q1)}–${formatNumber(s.q3)}]; n ${s.n}, missing ${s.missing}`;
  }
  const levels = (s.levels ?? []).map((l) => `${l.level} ${l.n} (${formatPercent(l.percent, 1)})`).join(', ');
  return `${levels}; missing ${s.missing}`;
}

export type ArmInfo = BalanceArmsView['arms'][number];

export function armLabel(arms: readonly ArmInfo[], armId: string): string {
  const arm = arms.find((a) => a.id === armId);
  return arm ? arm.code : 'arm';
}

/** "HBW vs UC": the direction of every SMD (arm minus reference). */
export function comparisonLabel(arms: readonly ArmInfo[], armId: string, referenceArmId: string): string {
  return `${armLabel(arms, armId)} vs ${armLabel(arms, referenceArmId)}`;
}
