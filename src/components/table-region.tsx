import type { ReactNode } from 'react';

/**
 * A wide table's own sideways scroller (WCAG 1.4.10 reflow at 320 CSS px, 1.4.4 at 200 % text):
 * the table scrolls inside this region, never the page. It is a named, focusable region (a
 * `<section>` with a name is one) so that a keyboard user can scroll it as well (axe's
 * `scrollable-region-focusable`). The server's pages
 * write the same markup (`<div class="table-region" role="region" … tabindex="0">`).
 */
export function TableRegion({
  label,
  className = '',
  children,
}: {
  label: string;
  className?: string;
  children: ReactNode;
}) {
  return (
    // biome-ignore lint/a11y/noNoninteractiveTabindex: a scrolling region must be reachable by keyboard (WCAG 2.1.1).
    <section className={`table-region ${className}`.trim()} aria-label={label} tabIndex={0}>
      {children}
    </section>
  );
}
