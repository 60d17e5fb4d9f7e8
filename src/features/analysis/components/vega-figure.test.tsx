import { screen, waitFor } from '@testing-library/react';
import { describe, expect, it, vi } from 'vitest';
import { renderWithQueries } from '../../../testing/render.tsx';
import { drawSoon, VegaFigure } from './vega-figure.tsx';

/**
 * Issue 13 §8: a figure out of view stayed "Drawing …" until it was scrolled to (and printed so).
 * Here no IntersectionObserver ever reports the figure in view, as for a figure below the fold.
 */

vi.mock('vega-embed', () => ({
  default: async (element: HTMLElement) => {
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
