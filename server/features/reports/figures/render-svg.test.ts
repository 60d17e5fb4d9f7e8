import type { TopLevelSpec } from 'vega-lite';
import { describe, expect, it } from 'vitest';
import { FigureRenderError, REPORT_FONT, renderSvg } from './render-svg.ts';

const spec = (title = 'Assay over time'): TopLevelSpec => ({
  width: 300,
  height: 150,
  title,
  data: { values: [0, 3, 6, 9, 12].map((time) => ({ time, value: 100 - 0.15 * time })) },
  layer: [
    {
      mark: 'point',
      encoding: {
        x: { field: 'time', type: 'quantitative' },
        y: { field: 'value', type: 'quantitative', scale: { zero: false } },
      },
    },
    // clip: true makes vega emit a clipPath with an id, which must be namespaced per figure.
    {
      mark: { type: 'line', clip: true },
      encoding: { x: { field: 'time', type: 'quantitative' }, y: { field: 'value', type: 'quantitative' } },
    },
  ],
});

describe('renderSvg', () => {
  it('renders an SVG with every text in the embedded report font', async () => {
    const svg = await renderSvg(spec(), { idPrefix: 'f1', title: 'Figure one', description: 'Assay falls' });
    expect(svg.startsWith('<svg role="img" xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg).toContain('<title>Figure one</title><desc>Assay falls</desc>');
    const families = new Set([...svg.matchAll(/font-family="([^"]+)"/g)].map((match) => match[1]));
    expect([...families]).toEqual([REPORT_FONT]);
  });

  it('is deterministic and namespaces ids, so two figures in one page do not share a clip path', async () => {
    const first = await renderSvg(spec(), { idPrefix: 'figure-1' });
    const again = await renderSvg(spec(), { idPrefix: 'figure-1' });
    const second = await renderSvg(spec(), { idPrefix: 'figure-2' });
    expect(again).toBe(first);
    const ids = [...first.matchAll(/\bid="([^"]+)"/g)].map((match) => match[1]);
    expect(ids.length).toBeGreaterThan(0);
    expect(ids.every((id) => id?.startsWith('figure-1-'))).toBe(true);
    expect(second).toBe(first.replaceAll('figure-1-', 'figure-2-'));
  });

  it('escapes text from the data (vega writes text nodes escaped)', async () => {
    const svg = await renderSvg(spec('<script>alert(1)</script>'), { idPrefix: 'f' });
    expect(svg).not.toContain('<script');
    expect(svg).toContain('&lt;script&gt;');
  });

  it('refuses data from a URL: nothing is fetched while rendering', async () => {
    const remote = { ...spec(), data: { url: 'https://example.invalid/data.json' } } as TopLevelSpec;
    await expect(renderSvg(remote, { idPrefix: 'f' })).rejects.toBeInstanceOf(FigureRenderError);
  });

  it('refuses an id prefix that could break out of an attribute', async () => {
    await expect(renderSvg(spec(), { idPrefix: '"><x' })).rejects.toThrow(/letters, digits/);
  });
});
