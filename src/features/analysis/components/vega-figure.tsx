import { useEffect, useRef, useState } from 'react';
import { figureTooltip } from './figure-tooltip.ts';
import './vega-figure.css';

/** How long a figure out of view waits for the browser to be idle before it is drawn anyway. */
const IDLE_DRAW_TIMEOUT_MS = 1500;

/**
 * Calls `draw` once: as soon as the element comes near the viewport, when the browser is next
 * idle (at the latest after IDLE_DRAW_TIMEOUT_MS), or before the page is printed — whichever is
 * first. Figures in view draw at once; the rest follow without the reader having to scroll to
 * them (issue 13 §8: "Drawing …" stayed until a figure was scrolled into view, and a printed page
 * showed it instead of the figure). Returns the cancel function.
 */
export function drawSoon(element: Element, draw: () => void): () => void {
  let done = false;
  const once = () => {
    if (done) return;
    done = true;
    cancel();
    draw();
  };
  const observer =
    typeof IntersectionObserver === 'function'
      ? new IntersectionObserver((entries) => entries.some((entry) => entry.isIntersecting) && once(), {
          rootMargin: '200px',
        })
      : null;
  observer?.observe(element);
  const idle =
    typeof window.requestIdleCallback === 'function'
      ? window.requestIdleCallback(once, { timeout: IDLE_DRAW_TIMEOUT_MS })
      : null;
  const timer = idle === null ? window.setTimeout(once, 0) : null;
  window.addEventListener('beforeprint', once);
  function cancel() {
    observer?.disconnect();
    if (idle !== null) window.cancelIdleCallback(idle);
    if (timer !== null) window.clearTimeout(timer);
    window.removeEventListener('beforeprint', once);
  }
  return () => {
    done = true;
    cancel();
  };
}

/**
 * Draws one Vega-Lite spec with vega-embed as SVG: at once when in view, otherwise when the
 * browser is idle or before printing (`drawSoon`; vega-embed is loaded on first use, ~1 MB). Under the app's strict CSP
 * (script-src 'self', no 'unsafe-eval'; style-src 'self') it uses the AST expression interpreter
 * instead of generated functions, and no injected <style> elements: vega-embed's default style is
 * switched off and replaced by `vega-figure.css`, which the bundler ships as a file. The tooltip is
 * our own handler (`figure-tooltip.ts`: Escape hides it, the pointer can move onto it; WCAG 1.4.13).
 */
export function VegaFigure({ spec, title }: { spec: Record<string, unknown>; title: string }) {
  const container = useRef<HTMLDivElement>(null);
  const [state, setState] = useState<'waiting' | 'drawn' | 'failed'>('waiting');
  const [message, setMessage] = useState('');

  useEffect(() => {
    const element = container.current;
    if (!element) return;
    let finalize: (() => void) | undefined;
    let cancelled = false;
    const draw = async () => {
      try {
        const [{ default: embed }, { expressionInterpreter }] = await Promise.all([
          import('vega-embed'),
          import('vega-interpreter'),
        ]);
        if (cancelled) return;
        const result = await embed(element, spec as never, {
          renderer: 'svg',
          actions: false,
          ast: true,
          expr: expressionInterpreter,
          defaultStyle: false,
          tooltip: figureTooltip().handler,
        });
        finalize = () => {
          figureTooltip().hide();
          result.finalize();
        };
        element.querySelector('svg')?.setAttribute('aria-label', title);
        setState('drawn');
      } catch (error) {
        setMessage(error instanceof Error ? error.message : String(error));
        setState('failed');
      }
    };
    const stop = drawSoon(element, () => void draw());
    return () => {
      cancelled = true;
      stop();
      finalize?.();
    };
  }, [spec, title]);

  return (
    <div>
      <div ref={container} className="vega-figure" data-state={state} role="img" aria-label={title} />
      {state === 'waiting' && <p className="text-sm text-ink-muted">Drawing “{title}”…</p>}
      {state === 'failed' && (
        <p className="text-sm text-alert" role="alert">
          The figure could not be drawn ({message}); the numbers are in the tables.
        </p>
      )}
    </div>
  );
}
