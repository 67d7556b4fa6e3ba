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

/** Bins of |SMD| for the site grid: the conventional 0.1 first, then 0.2 and 0.3 (common practice). */
export const smdBins = [
  { max: 0.1, label: 'under 0.10', bg: '#e9f1e2', fg: '#335f2a' },
  { max: 0.2, label: '0.10 to 0.20', bg: '#fbf0d8', fg: '#6e4a0a' },
  { max: 0.3, label: '0.20 to 0.30', bg: '#f3d7ad', fg: '#5a3c06' },
  { max: Number.POSITIVE_INFINITY, label: '0.30 or more', bg: '#f2c9c1', fg: '#7a231d' },
] as const;

export function smdBin(absSmd: number) {
  return smdBins.find((b) => absSmd < b.max) ?? smdBins[smdBins.length - 1]!;
}
