import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { type ComponentType, lazy, StrictMode, Suspense } from 'react';
import { createRoot } from 'react-dom/client';

/** Island name (the `data-island` attribute the server renders) → lazily loaded component. */
const ISLANDS: Record<string, () => Promise<{ default: ComponentType }>> = {
  'recent-activity': () => import('./recent-activity-island.tsx'),
  'analysis-figure': () => import('./analysis-figure-island.tsx'),
  'client-app': () => import('../app/client-app.tsx'),
  'column-mapping': () => import('./column-mapping-island.tsx'),
  'study-upload': () => import('./study-upload-island.tsx'),
  'study-run-analysis': () => import('./study-run-analysis-island.tsx'),
  'verify-upload': () => import('../features/review/components/verify-upload.tsx'),
  'template-editor': () => import('./template-editor-island.tsx'),
};

/** Mounts every island found in the page; unknown names are left as server-rendered HTML. */
export function mountIslands(root: ParentNode) {
  const queryClient = new QueryClient({ defaultOptions: { queries: { retry: 1, staleTime: 30_000 } } });
  for (const element of root.querySelectorAll<HTMLElement>('[data-island]')) {
    const load = ISLANDS[element.dataset.island ?? ''];
    if (!load) continue;
    const Island = lazy(load);
    createRoot(element).render(
      <StrictMode>
        <QueryClientProvider client={queryClient}>
          <Suspense fallback={<p className="text-sm text-ink-muted">Loading…</p>}>
            <Island />
          </Suspense>
        </QueryClientProvider>
      </StrictMode>,
    );
  }
}
