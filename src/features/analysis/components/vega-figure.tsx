import { useEffect, useRef, useState } from 'react';
import './vega-figure.css';

/**
 * Draws one Vega-Lite spec with vega-embed as SVG, once the figure scrolls into view (a page may
 * hold dozens; vega-embed is loaded on first use, ~1 MB). Under the app's strict CSP
 * (script-src 'self', no 'unsafe-eval'; style-src 'self') it uses the AST expression interpreter
 * instead of generated functions, and no injected <style> elements: vega-embed's default style and
 * the tooltip's are switched off and replaced by `vega-figure.css`, which the bundler ships as a file.
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
          tooltip: { disableDefaultStyle: true, theme: 'custom' },
        });
        finalize = () => result.finalize();
        element.querySelector('svg')?.setAttribute('aria-label', title);
        setState('drawn');
      } catch (error) {
        setMessage(error instanceof Error ? error.message : String(error));
        setState('failed');
      }
    };
    const observer = new IntersectionObserver(
      (entries) => {
        if (entries.some((entry) => entry.isIntersecting)) {
          observer.disconnect();
          void draw();
        }
      },
      { rootMargin: '200px' },
    );
    observer.observe(element);
    return () => {
      cancelled = true;
      observer.disconnect();
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
