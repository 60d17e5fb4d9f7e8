import { type RefObject, useEffect, useRef } from 'react';
import { useLocation } from 'react-router';

/** How long the new page may take to show its heading (a report is fetched first). */
const WAIT_FOR_HEADING_MS = 5_000;

/**
 * After a move to another page inside /app (not the first load), focus goes to the new page's
 * `<h1>` as soon as it is shown, so a screen reader says where the person now is (WCAG 2.4.3,
 * 4.1.3; issue 17 §1). Without it the link that was followed unmounts, focus falls to <body>,
 * and the new title is not announced. A person already typing in a field keeps their focus.
 *
 * "Another page" is a pathname other than the one last shown, not a second run of the effect:
 * React's StrictMode runs a mount's effect twice in development builds (the test build is one),
 * and a first-run flag would then take the first page's focus — away from the skip link's target.
 */
export function useFocusHeadingOnRouteChange(container: RefObject<HTMLElement | null>): void {
  const { pathname } = useLocation();
  const shown = useRef<string | null>(null);
  // biome-ignore lint/correctness/useExhaustiveDependencies: runs once per new address (the container is a stable ref)
  useEffect(() => {
    const previous = shown.current;
    shown.current = pathname;
    if (previous === null || previous === pathname) return;
    const root = container.current;
    if (!root) return;
    const focusHeading = (): boolean => {
      const heading = root.querySelector<HTMLElement>('h1');
      if (!heading) return false;
      if (document.activeElement?.matches('input, select, textarea')) return true;
      if (!heading.hasAttribute('tabindex')) heading.setAttribute('tabindex', '-1');
      heading.focus();
      return true;
    };
    if (focusHeading()) return;
    const observer = new MutationObserver(() => {
      if (focusHeading()) stop();
    });
    const timer = window.setTimeout(() => stop(), WAIT_FOR_HEADING_MS);
    const stop = () => {
      observer.disconnect();
      window.clearTimeout(timer);
    };
    observer.observe(root, { childList: true, subtree: true });
    return stop;
  }, [pathname]);
}
