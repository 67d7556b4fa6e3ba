/*
 * Chart colours, taken from the design tokens in styles.css so charts and text agree. Meaning
 * is never carried by colour alone: flagged points also change shape and every chart has a
 * text alternative.
 */
export const chartColors = {
  ink: '#1d2b2c',
  graphite: '#545f60',
  rule: '#ddd5c8',
  surface: '#fffdf9',
  point: '#1f5c57', // spruce
  flagged: '#9a2f27', // brick
  before: '#6e4a0a', // ochre-ink
  after: '#1f5c57', // spruce
  band: '#dbe5f0', // a shade of harbor-wash that stays visible on vellum
  bandEdge: '#2f4f74', // harbor
  threshold: '#545f60',
  groupA: '#2f4f74', // harbor
  groupB: '#c48a1a', // ochre
  target: '#1d2b2c',
} as const;

export const axisTickLabel = {
  fill: chartColors.graphite,
  fontSize: 11,
  fontFamily: 'IBM Plex Mono, ui-monospace, monospace',
} as const;

/**
 * Bins of |SMD| relative to the 95% chance band of the cell's own group sizes. At the size of
 * a site a fixed 0.1 or 0.3 is crossed by chance most of the time, so the grid's colour says how
 * far a figure is from what chance produces there, and the printed value keeps the magnitude.
 */
export const chanceBins = [
  { max: 0.5, label: 'well inside the chance band (under half of it)', bg: '#e9f1e2', fg: '#335f2a' },
  { max: 1, label: 'inside the chance band', bg: '#fbf0d8', fg: '#6e4a0a' },
  { max: Number.POSITIVE_INFINITY, label: 'beyond the chance band', bg: '#f2c9c1', fg: '#7a231d' },
] as const;

export function chanceBin(absSmd: number, halfWidth: number) {
  const ratio = halfWidth > 0 ? absSmd / halfWidth : Number.POSITIVE_INFINITY;
  return chanceBins.find((b) => ratio < b.max) ?? chanceBins[chanceBins.length - 1]!;
}
