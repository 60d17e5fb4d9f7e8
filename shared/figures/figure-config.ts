/**
 * The look shared by every Rateledger figure: the app's palette and fonts, so a chart on the screen
 * and the same chart rendered to SVG for a PDF report look alike. Pure data, no functions of the
 * browser: the specs are rendered by vega-embed in an island and by Vega on the server.
 */

export const VEGA_LITE_SCHEMA = 'https://vega.github.io/schema/vega-lite/v6.json';

export const PALETTE = {
  ledger: '#1d4b45',
  ink: '#1f2428',
  inkMuted: '#5a6169',
  rule: '#d8d4c8',
  grid: '#ebe8df',
  alert: '#9b2c1f',
  paper: '#f6f4ee',
} as const;

/** One colour per rate law, distinguishable in grey print as well (different lightness). */
export const MODEL_COLOURS: Record<string, string> = {
  '0': '#b0672a',
  '1': '#1d4b45',
  '2': '#4f6fa8',
  n: '#8c5a9e',
};

/** Colours for batches and temperatures in multi-series plots (colour-blind safe, Okabe–Ito order). */
export const SERIES_COLOURS = [
  '#0072b2',
  '#d55e00',
  '#009e73',
  '#cc79a7',
  '#e69f00',
  '#56b4e9',
  '#5a6169',
  '#000000',
];

export const FIGURE_FONT = 'Source Sans 3';

export const FIGURE_CONFIG = {
  font: FIGURE_FONT,
  background: '#ffffff',
  padding: 8,
  view: { stroke: PALETTE.rule },
  axis: {
    labelColor: PALETTE.ink,
    titleColor: PALETTE.ink,
    gridColor: PALETTE.grid,
    domainColor: PALETTE.inkMuted,
    tickColor: PALETTE.inkMuted,
    labelFontSize: 11,
    titleFontSize: 12,
    titleFontWeight: 600,
    labelFlush: false,
  },
  legend: {
    labelLimit: 260,
    columns: 4,
    labelFontSize: 11,
    titleFontSize: 12,
    titleFontWeight: 600,
    orient: 'bottom',
    direction: 'horizontal',
  },
  title: {
    fontSize: 14,
    fontWeight: 600,
    anchor: 'start',
    color: PALETTE.ink,
    subtitleColor: PALETTE.inkMuted,
    subtitleFontSize: 12,
  },
  point: { size: 36 },
  line: { strokeWidth: 1.5 },
} as const;

/** Number format for tooltips: 4 significant figures, trailing zeros trimmed. */
export const TOOLTIP_FORMAT = '.4~g';

/** Evenly spaced times from `start` to `end` inclusive. */
export function timeGrid(start: number, end: number, points: number): number[] {
  if (!(end > start) || points < 2) return [start];
  return Array.from({ length: points }, (_, i) => start + ((end - start) * i) / (points - 1));
}

/** The axis title of a time axis, e.g. "Time (month)". */
export function timeTitle(timeUnit: string): string {
  return `Time (${timeUnit})`;
}
