/*
 * Chart colours from the design tokens in styles.css. Meaning is never carried by colour alone:
 * arms also differ in marker shape and line dash, and every chart has a text alternative.
 */
export const chartColors = {
  ink: '#1d2b2c',
  graphite: '#545f60',
  rule: '#ddd5c8',
  surface: '#fffdf9',
  spruce: '#1f5c57',
  harbor: '#2f4f74',
  ochre: '#c48a1a',
  ochreInk: '#6e4a0a',
  brick: '#9a2f27',
  moss: '#335f2a',
} as const;

/** One colour, marker and dash per arm, in design order. */
export const armStyles = [
  { color: chartColors.harbor, marker: 'circle', dash: undefined },
  { color: chartColors.ochreInk, marker: 'square', dash: '6 3' },
  { color: chartColors.spruce, marker: 'triangle', dash: '2 3' },
  { color: chartColors.brick, marker: 'diamond', dash: '8 2 2 2' },
] as const;

export const armStyle = (i: number) => armStyles[i % armStyles.length]!;

export const axisTickLabel = {
  fill: chartColors.graphite,
  fontSize: 11,
  fontFamily: 'IBM Plex Mono, ui-monospace, monospace',
} as const;
