import type { KeyboardEvent } from 'react';

/**
 * Arrow keys, Home and End between the tabs of a tablist (WAI-ARIA Authoring Practices, "Tabs"
 * pattern, automatic activation): returns the index of the tab to select and focuses it, or null
 * for any other key. The tablist is one Tab stop (only the selected tab has tabIndex 0).
 */
export function tabFromKey(event: KeyboardEvent<HTMLElement>, index: number, count: number): number | null {
  const next =
    event.key === 'ArrowRight'
      ? (index + 1) % count
      : event.key === 'ArrowLeft'
        ? (index - 1 + count) % count
        : event.key === 'Home'
          ? 0
          : event.key === 'End'
            ? count - 1
            : null;
  if (next === null) return null;
  event.preventDefault();
  const tabs = event.currentTarget.closest('[role="tablist"]')?.querySelectorAll<HTMLElement>('[role="tab"]');
  tabs?.[next]?.focus();
  return next;
}
