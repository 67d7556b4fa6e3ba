import { stringify } from 'csv-stringify/sync';

/**
 * Neutralises spreadsheet formula injection (OWASP "CSV Injection"): a cell that starts with
 * = + - @ tab or carriage return is prefixed with a single quote.
 */
export function safeCell(value: unknown): string {
  if (value === null || value === undefined) return '';
  const text = typeof value === 'object' ? JSON.stringify(value) : String(value);
  return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
}

export function toCsv(header: string[], rows: unknown[][]): string {
  return stringify([header, ...rows.map((r) => r.map(safeCell))]);
}
