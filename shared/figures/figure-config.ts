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

/**
 * One colour per rate law, each at least 3:1 against white (WCAG 2.1 SC 1.4.11, checked in
 * `figure-colours.test.ts`). Colour is never the only cue: each law has its own dash too.
 */
export const MODEL_COLOURS: Record<string, string> = {
  '0': '#b0672a',
  '1': '#1d4b45',
  '2': '#4f6fa8',
  n: '#8c5a9e',
};

/** One dash pattern per rate law (issue 17 §4), so the laws differ without colour. */
export const MODEL_DASHES: Record<string, number[]> = {
  '0': [8, 4],
  '1': [1, 0],
  '2': [2, 3],
  n: [8, 3, 2, 3],
};

/**
 * Colours for batches and temperatures in multi-series plots: Okabe–Ito order (colour-blind
 * safe), with its orange and sky blue darkened (#e69f00 → #b07800, #56b4e9 → #3a8ac8) so that
 * every colour is at least 3:1 against white (WCAG 2.1 SC 1.4.11; `figure-colours.test.ts`).
 */
export const SERIES_COLOURS = [
  '#0072b2',
  '#d55e00',
  '#009e73',
  '#cc79a7',
  '#b07800',
  '#3a8ac8',
  '#5a6169',
  '#000000',
];

/** One point shape per batch, in the order of `SERIES_COLOURS` (issue 17 §4: never colour alone). */
export const SERIES_SHAPES = [
  'circle',
  'triangle-up',
  'square',
  'triangle-down',
  'cross',
  'diamond',
  'triangle-right',
  'triangle-left',
];

/** One line dash per batch or line, in the order of `SERIES_COLOURS`. */
export const SERIES_DASHES = [
  [1, 0],
  [8, 4],
  [2, 3],
  [8, 3, 2, 3],
  [12, 3],
  [4, 4],
  [12, 3, 2, 3, 2, 3],
  [1, 4],
];

/** The entry of a list for the `index`-th batch, repeating the list when there are more batches. */
export function cycled<T>(list: readonly T[], index: number): T {
  return list[index % list.length]!;
}

/** The point shape of a possible outlier (a filled triangle in the alert colour). */
export const OUTLIER_SHAPE = 'triangle-up';

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
