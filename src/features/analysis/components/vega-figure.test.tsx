import { screen, waitFor } from '@testing-library/react';
import { describe, expect, it, vi } from 'vitest';
import { renderWithQueries } from '../../../testing/render.tsx';
import { figureTooltip, TOOLTIP_ID } from './figure-tooltip.ts';
import { drawSoon, VegaFigure } from './vega-figure.tsx';

/**
 * Issue 13 §8: a figure out of view stayed "Drawing …" until it was scrolled to (and printed so).
 * Here no IntersectionObserver ever reports the figure in view, as for a figure below the fold.
 */

const embedded = vi.hoisted(() => ({ options: [] as Record<string, unknown>[] }));
vi.mock('vega-embed', () => ({
  default: async (element: HTMLElement, _spec: unknown, options: Record<string, unknown>) => {
    embedded.options.push(options);
    element.innerHTML = '<svg></svg>';
    return { finalize: () => undefined };
  },
}));
vi.mock('vega-interpreter', () => ({ expressionInterpreter: {} }));

class NeverInView {
  observe() {}
  disconnect() {}
}

describe('VegaFigure', () => {
  it('draws a figure that never scrolls into view, and the "Drawing" note goes', async () => {
    vi.stubGlobal('IntersectionObserver', NeverInView);
    renderWithQueries(<VegaFigure spec={{ mark: 'point' }} title="Assay against time" />);
    expect(screen.getByText('Drawing “Assay against time”…')).toBeDefined();
    await waitFor(() => expect(document.querySelector('.vega-figure svg')).not.toBeNull());
    expect(document.querySelector('.vega-figure svg')?.getAttribute('aria-label')).toBe('Assay against time');
    expect(screen.queryByText(/Drawing/)).toBeNull();
  });

  it('hands vega the page’s tooltip, which Escape hides (WCAG 1.4.13)', async () => {
    vi.stubGlobal('IntersectionObserver', NeverInView);
    embedded.options.length = 0;
    renderWithQueries(<VegaFigure spec={{ mark: 'point' }} title="Assay against time" />);
    await waitFor(() => expect(embedded.options).toHaveLength(1));
    const options = embedded.options[0]!;
    expect(options.tooltip).toBe(figureTooltip().handler);
    figureTooltip().handler(null, new MouseEvent('pointermove'), { datum: 1 }, { value: '99.2 %' });
    const tooltip = document.getElementById(TOOLTIP_ID);
    expect(tooltip?.classList.contains('visible')).toBe(true);
    document.dispatchEvent(new KeyboardEvent('keydown', { key: 'Escape' }));
    expect(tooltip?.classList.contains('visible')).toBe(false);
  });

  it('draws at once before printing, and only once', () => {
    vi.stubGlobal('IntersectionObserver', NeverInView);
    vi.stubGlobal('requestIdleCallback', () => 1);
    vi.stubGlobal('cancelIdleCallback', () => undefined);
    const draw = vi.fn();
    const stop = drawSoon(document.body, draw);
    expect(draw).not.toHaveBeenCalled();
    window.dispatchEvent(new Event('beforeprint'));
    window.dispatchEvent(new Event('beforeprint'));
    expect(draw).toHaveBeenCalledTimes(1);
    stop();
  });

  it('a cancelled figure is never drawn', async () => {
    vi.stubGlobal('IntersectionObserver', NeverInView);
    const draw = vi.fn();
    drawSoon(document.body, draw)();
    window.dispatchEvent(new Event('beforeprint'));
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(draw).not.toHaveBeenCalled();
  });
});
