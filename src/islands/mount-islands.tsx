import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { type ComponentType, lazy, StrictMode, Suspense } from 'react';
import { createRoot, type Root } from 'react-dom/client';
import { ErrorBoundary } from '../components/error-boundary.tsx';

interface IslandEntry {
  /** Named in the fallback when the island fails: "<what> could not be shown." */
  what: string;
  load: () => Promise<{ default: ComponentType }>;
}

/** Island name (the `data-island` attribute the server renders) → lazily loaded component. */
const ISLANDS: Record<string, IslandEntry> = {
  'recent-activity': { what: 'Your recent activity', load: () => import('./recent-activity-island.tsx') },
  'analysis-figure': { what: 'The figure', load: () => import('./analysis-figure-island.tsx') },
  'client-app': { what: 'This section', load: () => import('../app/client-app.tsx') },
  'column-mapping': { what: 'The column mapping', load: () => import('./column-mapping-island.tsx') },
  'study-upload': { what: 'The upload form', load: () => import('./study-upload-island.tsx') },
  'study-run-analysis': {
    what: 'The button that runs the analysis',
    load: () => import('./study-run-analysis-island.tsx'),
  },
  'verify-upload': {
    what: 'The PDF check',
    load: () => import('../features/review/components/verify-upload.tsx'),
  },
  'template-editor': { what: 'The template editor', load: () => import('./template-editor-island.tsx') },
};

/** Mounts every island found in the page (unknown names stay server-rendered HTML); returns their roots. */
export function mountIslands(root: ParentNode): Root[] {
  const mounted: Root[] = [];
  const queryClient = new QueryClient({ defaultOptions: { queries: { retry: 1, staleTime: 30_000 } } });
  for (const element of root.querySelectorAll<HTMLElement>('[data-island]')) {
    const entry = ISLANDS[element.dataset.island ?? ''];
    if (!entry) continue;
    const Island = lazy(entry.load);
    const islandRoot = createRoot(element);
    mounted.push(islandRoot);
    islandRoot.render(
      <StrictMode>
        <QueryClientProvider client={queryClient}>
          <ErrorBoundary what={entry.what}>
            <Suspense fallback={<p className="text-sm text-ink-muted">Loading…</p>}>
              <Island />
            </Suspense>
          </ErrorBoundary>
        </QueryClientProvider>
      </StrictMode>,
    );
  }
  return mounted;
}
