import { useCallback, useState } from 'react';

/**
 * The `data-*` attributes of the island placeholder this component was mounted in. Islands are
 * mounted without props, and a page may hold several of the same island (one per table row), so
 * each instance finds its own placeholder from a node it renders.
 */
export function useIslandDataset(): {
  ref: (node: HTMLElement | null) => void;
  data: Record<string, string> | null;
} {
  const [data, setData] = useState<Record<string, string> | null>(null);
  const ref = useCallback((node: HTMLElement | null) => {
    if (!node) return;
    const host = node.closest<HTMLElement>('[data-island]');
    setData({ ...(host?.dataset ?? {}) } as Record<string, string>);
  }, []);
  return { ref, data };
}
