import type { BaselineTable } from '@counterpoise/contracts/balance';
import { formatNumber } from './format.js';

/** One labelled baseline p-value as the table shows it, with its footnote marker if it has a note. */
export type PValueRow = {
  id: string;
  label: string;
  comparison: string;
  test: string;
  p: string;
  marker: number | null;
  note: string | null;
};
export type PValueNote = { marker: number; text: string };

export function formatP(p: number | null): string {
  if (p === null) return 'not computed';
  if (p < 0.001) return '< 0.001';
  return formatNumber(p, 3);
}

/**
 * Rows of the p-value table and the footnotes under it. Each distinct note gets one number, in
 * order of first use, so a reason repeated for several covariates is printed once.
 */
export function pValueRows(table: BaselineTable): {
  rows: PValueRow[];
  notes: PValueNote[];
  /** With two arms every row is the same comparison: said once instead of in a column. */
  singleComparison: string | null;
} {
  const pValues = table.pValues;
  if (!pValues) return { rows: [], notes: [], singleComparison: null };
  const columnLabel = (id: string) => table.columns.find((c) => c.column === id)?.label ?? 'arm';
  const covariateLabel = (key: string) => table.rows.find((r) => r.covariateKey === key)?.label ?? key;
  const notes: PValueNote[] = [];
  const markerOf = (text: string | null): number | null => {
    if (!text) return null;
    const found = notes.find((n) => n.text === text);
    if (found) return found.marker;
    notes.push({ marker: notes.length + 1, text });
    return notes.length;
  };
  const rows = pValues.values.map((v) => ({
    id: `${v.covariateKey}:${v.armId}`,
    label: covariateLabel(v.covariateKey),
    comparison: `${columnLabel(v.armId)} vs ${columnLabel(v.referenceArmId)}`,
    test: v.test === 'none' ? '—' : v.test,
    p: formatP(v.pValue),
    marker: markerOf(v.note),
    note: v.note,
  }));
  const comparisons = new Set(rows.map((r) => r.comparison));
  return { rows, notes, singleComparison: comparisons.size === 1 ? rows[0]!.comparison : null };
}
