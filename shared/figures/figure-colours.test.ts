import { describe, expect, it } from 'vitest';
import {
  MODEL_COLOURS,
  MODEL_DASHES,
  PALETTE,
  SERIES_COLOURS,
  SERIES_DASHES,
  SERIES_SHAPES,
} from './figure-config.ts';

// Issue 17 §4: every colour a figure draws marks with has a contrast of at least 3:1 against the
// figure's white background (WCAG 2.1 SC 1.4.11 Non-text Contrast, AA).

/**
 * Relative luminance, WCAG 2.1 § "relative luminance" (https://www.w3.org/TR/WCAG21/#dfn-relative-luminance):
 * L = 0.2126 R + 0.7152 G + 0.0722 B, where each channel c = C/255 is linearised as
 * c ≤ 0.04045 ? c/12.92 : ((c + 0.055)/1.055)^2.4.
 */
function relativeLuminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((start) => {
    const channel = Number.parseInt(hex.slice(start, start + 2), 16) / 255;
    return channel <= 0.04045 ? channel / 12.92 : ((channel + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
}

/** Contrast ratio, WCAG 2.1 § "contrast ratio" (https://www.w3.org/TR/WCAG21/#dfn-contrast-ratio): (L1 + 0.05)/(L2 + 0.05), L1 the lighter. */
function contrastRatio(first: string, second: string): number {
  const [lighter, darker] = [relativeLuminance(first), relativeLuminance(second)].sort((a, b) => b - a);
  return (lighter! + 0.05) / (darker! + 0.05);
}

const WHITE = '#ffffff';
/** The palette colours figures draw marks with (points, lines, rules, labels); rule, grid and paper are backgrounds and grid lines. */
const MARK_PALETTE = {
  ledger: PALETTE.ledger,
  ink: PALETTE.ink,
  inkMuted: PALETTE.inkMuted,
  alert: PALETTE.alert,
};

describe('figure colours', () => {
  it('computes the WCAG examples: black on white 21:1, white on white 1:1, #777777 about 4.48:1', () => {
    expect(contrastRatio('#000000', WHITE)).toBeCloseTo(21, 10);
    expect(contrastRatio(WHITE, WHITE)).toBe(1);
    expect(contrastRatio('#777777', WHITE)).toBeCloseTo(4.48, 2);
    // The Okabe–Ito orange and sky blue that were replaced fall short of 3:1.
    expect(contrastRatio('#e69f00', WHITE)).toBeLessThan(3);
    expect(contrastRatio('#56b4e9', WHITE)).toBeLessThan(3);
  });

  it.each([
    ...SERIES_COLOURS.map((colour, index) => [`SERIES_COLOURS[${index}]`, colour] as const),
    ...Object.entries(MODEL_COLOURS).map(([law, colour]) => [`MODEL_COLOURS.${law}`, colour] as const),
    ...Object.entries(MARK_PALETTE).map(([name, colour]) => [`PALETTE.${name}`, colour] as const),
  ])('%s (%s) has a contrast of at least 3:1 against white', (_name, colour) => {
    expect(colour).toMatch(/^#[0-9a-f]{6}$/);
    expect(contrastRatio(colour, WHITE)).toBeGreaterThanOrEqual(3);
  });

  it('gives every batch its own colour, shape and dash, and every law its own colour and dash', () => {
    expect(new Set(SERIES_COLOURS).size).toBe(SERIES_COLOURS.length);
    expect(SERIES_SHAPES).toHaveLength(SERIES_COLOURS.length);
    expect(new Set(SERIES_SHAPES).size).toBe(SERIES_SHAPES.length);
    expect(SERIES_DASHES).toHaveLength(SERIES_COLOURS.length);
    expect(new Set(SERIES_DASHES.map(String)).size).toBe(SERIES_DASHES.length);
    expect(Object.keys(MODEL_DASHES).sort()).toEqual(Object.keys(MODEL_COLOURS).sort());
    expect(new Set(Object.values(MODEL_COLOURS)).size).toBe(Object.keys(MODEL_COLOURS).length);
    expect(new Set(Object.values(MODEL_DASHES).map(String)).size).toBe(Object.keys(MODEL_DASHES).length);
  });
});
